"""A small TOML writer for scenario documents, such that reading back gives the same values.

It writes what a scenario holds: tables (nested, as ``[a.b]`` headers), strings, booleans,
integers, floats (``repr``, so every float reads back to the same bits; ``inf``, ``-inf`` and
``nan`` as TOML spells them), local dates, and arrays of those. Arrays of tables and date-times
are not needed by scenarios and are refused. Keys that are not bare keys are quoted.

Examples
--------
>>> print(dumps({"schema_version": 1, "study": {"title": "Hoist", "rated_kw": 11.0}}), end="")
schema_version = 1
<BLANKLINE>
[study]
title = "Hoist"
rated_kw = 11.0
"""

from __future__ import annotations

import datetime as _dt
import math
import re

__all__ = ["dumps", "format_key", "format_value"]

_BARE = re.compile(r"[A-Za-z0-9_-]+")


def _escape(text: str, multiline: bool) -> str:
    out = []
    for ch in text:
        if ch == "\\":
            out.append("\\\\")
        elif ch == '"':
            out.append('\\"')
        elif ch == "\n" and multiline:
            out.append("\n")
        elif ch == "\n":
            out.append("\\n")
        elif ch == "\t":
            out.append("\\t")
        elif ch == "\r":
            out.append("\\r")
        elif ord(ch) < 0x20 or ord(ch) == 0x7F:
            out.append(f"\\u{ord(ch):04X}")
        else:
            out.append(ch)
    return "".join(out)


def format_key(key) -> str:
    """A key as TOML writes it: bare when it can be, else a quoted string."""
    key = str(key)
    return key if _BARE.fullmatch(key) else '"' + _escape(key, False) + '"'


def format_value(value) -> str:
    """A scalar or an array of scalars as TOML text."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    if isinstance(value, str):
        if "\n" in value:
            return '"""\n' + _escape(value, True) + '"""'
        return '"' + _escape(value, False) + '"'
    if isinstance(value, _dt.datetime):
        raise TypeError(f"date-times are not written by this writer: {value!r}")
    if isinstance(value, _dt.date):
        return value.isoformat()
    if isinstance(value, (list, tuple)):
        if any(isinstance(v, dict) for v in value):
            raise TypeError("arrays of tables are not written by this writer")
        return "[" + ", ".join(format_value(v) for v in value) + "]"
    raise TypeError(f"cannot write {type(value).__name__} {value!r} as TOML")


def _table(lines: list, table: dict, prefix: tuple):
    scalars = [(k, v) for k, v in table.items() if not isinstance(v, dict)]
    tables = [(k, v) for k, v in table.items() if isinstance(v, dict)]
    if prefix and (scalars or not tables):
        if lines:
            lines.append("")
        lines.append("[" + ".".join(format_key(p) for p in prefix) + "]")
    for k, v in scalars:
        lines.append(f"{format_key(k)} = {format_value(v)}")
    for k, v in tables:
        _table(lines, v, prefix + (k,))


def dumps(document: dict) -> str:
    """TOML text of ``document`` (a dict of dicts and scalars), ending with a newline.

    Tables with only sub-tables get no header of their own (TOML defines them implicitly);
    an empty table gets its header, so it reads back as an empty table.
    """
    if not isinstance(document, dict):
        raise TypeError("a TOML document is a dict")
    lines: list = []
    _table(lines, document, ())
    return "\n".join(lines) + "\n"
