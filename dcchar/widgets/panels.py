"""HTML for the kit's read-only panels: the results table, the cautions and the status line.

The numbers come from :func:`dcchar.files.tables.display_table` and are written with
:func:`dcchar.files.tables.format_value`, the same functions the report and the CSV use, so a
figure on screen reads exactly as it does on paper. Each table cell carries ``data-key`` (the
candidate's key) and ``data-col`` (the column key of
:data:`dcchar.studies.comparison.TABLE_COLUMNS`) for tests and for readers of the page source.
"""

from __future__ import annotations

import html
import traceback

from ..files.tables import display_table, format_value
from ..models.cautions import DEFERENCE
from ..studies.comparison import TABLE_COLUMNS, ControlSettings

__all__ = ["results_html", "cautions_html", "status_html", "error_html", "swatch_html", "RESULT_COLUMNS",
           "panel_inputs"]

#: Rows of the on-screen table (the connection names head the columns).
RESULT_COLUMNS = tuple(k for k in TABLE_COLUMNS if k != "connection")

_CSS = """
<style>
.kit-table { border-collapse: collapse; font-size: 12px; font-family: 'DejaVu Sans', sans-serif; }
.kit-table th, .kit-table td { padding: 2px 8px; border-bottom: 1px solid #dde3ea; text-align: right;
  white-space: nowrap; }
.kit-table th.kit-rowhead { text-align: left; font-weight: normal; color: #2b3a4a; }
.kit-table thead th { border-bottom: 2px solid #5a6e82; vertical-align: bottom; white-space: normal;
  max-width: 130px; }
.kit-table td.kit-flag { color: #9b2c00; font-weight: bold; }
.kit-table td.kit-note { white-space: normal; max-width: 130px; text-align: left; font-size: 11px; }
.kit-table tr.kit-main td { font-weight: bold; }
.kit-caution { margin: 3px 0 5px 0; padding: 3px 8px; border-left: 4px solid #c98a00; background: #fff8e6;
  font-size: 12px; }
.kit-caution.kit-danger { border-left-color: #b42318; background: #fdeeec; }
.kit-caution .kit-why { color: #4a4a4a; font-size: 11px; }
.kit-defer { margin-top: 6px; padding: 4px 8px; border: 1px solid #5a6e82; font-size: 12px; background: #f2f5f8; }
</style>
"""

_MAIN_ROWS = ("speed", "torque", "armature_current")


def swatch_html(color: str, linestyle="-") -> str:
    """A short horizontal stroke in a connection's colour (dashed when its line style is)."""
    dashed = linestyle not in ("-", "solid")
    style = "dashed" if dashed else "solid"
    return (f'<span style="display:inline-block;width:24px;margin-right:4px;vertical-align:middle;'
            f'border-top:3px {style} {html.escape(color)}"></span>')


def _flag(col: str, value) -> bool:
    if col == "stable":
        return value is False
    if col == "current_ratio":
        return isinstance(value, float) and value > 1.0
    return False


def results_html(comparison, units: str = "si", styles=None) -> str:
    """The comparison as an HTML table: one column per connection, one row per quantity.

    Parameters
    ----------
    comparison : dcchar.studies.comparison.Comparison
    units : {"si", "us"}
    styles : dict, optional
        Candidate key -> :class:`dcchar.charts.style.ConnectionStyle`, for colour swatches.
    """
    keys = list(comparison.candidates)
    headings, rows = display_table(comparison, units)
    col_keys = list(TABLE_COLUMNS)
    by_col = {c: [row[i] for row in rows] for i, c in enumerate(col_keys)}
    heading_of = dict(zip(col_keys, headings))
    styles = styles or {}
    head = ['<th class="kit-rowhead"></th>']
    for k, label in zip(keys, by_col["connection"]):
        s = styles.get(k)
        sw = swatch_html(s.color, s.linestyle) if s is not None else ""
        head.append(f'<th data-key="{html.escape(k)}">{sw}{html.escape(str(label))}</th>')
    body = []
    for col in RESULT_COLUMNS:
        cls = ' class="kit-main"' if col in _MAIN_ROWS else ""
        cells = [f'<th class="kit-rowhead">{html.escape(heading_of[col])}</th>']
        for k, v in zip(keys, by_col[col]):
            klass = "kit-note" if col == "note" else ("kit-flag" if _flag(col, v) else "")
            cells.append(f'<td data-key="{html.escape(k)}" data-col="{col}"'
                         f'{" class=" + chr(34) + klass + chr(34) if klass else ""}>{html.escape(format_value(v))}</td>')
        body.append(f"<tr{cls}>{''.join(cells)}</tr>")
    return (f'{_CSS}<table class="kit-table"><thead><tr>{"".join(head)}</tr></thead>'
            f'<tbody>{"".join(body)}</tbody></table>')


def cautions_html(comparison) -> str:
    """The cautions of every candidate, grouped: each caution once, with the connections it
    applies to and the reason for each, the dangers first; the deference to local codes last."""
    groups: dict = {}
    labels = {k: c.machine.label for k, c in comparison.candidates.items()}
    for key, cautions in comparison.cautions().items():
        for c in cautions:
            if c.code == "defer":
                continue
            g = groups.setdefault((c.code, c.text), {"severity": c.severity, "where": []})
            if c.severity == "danger":
                g["severity"] = "danger"
            g["where"].append((labels[key], c.reason))
    if not groups:
        items = ['<div class="kit-caution">No caution beyond the general one below applies at this setting.</div>']
    else:
        items = []
        order = sorted(groups.items(), key=lambda kv: (kv[1]["severity"] != "danger",))
        for (code, text), g in order:
            reasons = {r for _, r in g["where"]}
            names = ", ".join(n for n, _ in g["where"])
            if len(g["where"]) == len(labels) and len(labels) > 1:
                names = "every connection shown"
            if len(reasons) == 1:
                r = next(iter(reasons))
                why = f'<div class="kit-why">{html.escape(names)}{": " + html.escape(r) if r else ""}</div>'
            else:
                why = "".join(f'<div class="kit-why">{html.escape(n)}: {html.escape(r)}</div>' for n, r in g["where"])
            klass = "kit-caution kit-danger" if g["severity"] == "danger" else "kit-caution"
            items.append(f'<div class="{klass}" data-code="{html.escape(code)}">{html.escape(text)}{why}</div>')
    return f'{_CSS}{"".join(items)}<div class="kit-defer">{html.escape(DEFERENCE)}</div>'


def status_html(text: str) -> str:
    """A plain status line."""
    return f'<span style="font-size:12px;color:#2b3a4a">{html.escape(text)}</span>'


def error_html(what: str, exc: BaseException) -> str:
    """An error in the status line: what failed, the message, and the traceback folded away."""
    tb = "".join(traceback.format_exception(type(exc), exc, exc.__traceback__))
    return (f'<div class="kit-error" style="font-size:12px;color:#9b1c0c"><b>{html.escape(what)}:</b> '
            f'{html.escape(type(exc).__name__)}: <span class="kit-error-message">{html.escape(str(exc))}</span>'
            f'<details><summary>traceback</summary><pre style="font-size:10px">{html.escape(tb)}</pre></details></div>')


def panel_inputs(machines=None, load=None, settings=None):
    """(machines dict, load, settings) for a panel, with the demo family, the editor's default
    load and default settings where none is given."""
    if machines is None:
        from ..studies.demo import demo_family

        machines = demo_family()
    if load is None:
        from .load_editor import LoadEditor

        load = LoadEditor(None).load
    return dict(machines), load, settings if settings is not None else ControlSettings()
