"""Tables for people: the comparison rows converted to display units, with headings that carry them.

The widget kit's results table and the report's CSV, Markdown and HTML tables all come from
:func:`display_table`, so they show the same numbers; :func:`table_markdown` and
:func:`table_html` format the cells with :func:`format_value`.
"""

from __future__ import annotations

import csv
import io
import math

from ..models.units import display_units
from ..studies.comparison import TABLE_COLUMNS

__all__ = ["display_table", "format_value", "table_csv", "write_table_csv", "table_markdown", "table_html"]

def display_table(comparison, units: str = "si", columns=None):
    """Headings and rows of ``comparison`` in the display ``units`` (``"si"`` or ``"us"``).

    Parameters
    ----------
    comparison : dcchar.studies.comparison.Comparison
    units : {"si", "us"}
        Speeds are always in r/min; torque in N*m or lbf*ft; power in kW or hp.
    columns : sequence of str, optional
        Keys of :data:`dcchar.studies.comparison.TABLE_COLUMNS`; default all.

    Returns
    -------
    headings : list of str
        Column headings with their display unit, e.g. ``"shaft torque [lbf·ft]"``.
    rows : list of list
        Numbers converted to the display units (floats; nan where missing), strings and bools.
    """
    table = display_units(units)
    keys = list(TABLE_COLUMNS) if columns is None else list(columns)
    headings, factors = [], []
    for k in keys:
        heading, si_unit, quantity = TABLE_COLUMNS[k]
        if quantity is not None:
            label, factor = table[quantity]
        else:
            label, factor = si_unit, 1.0
        headings.append(f"{heading} [{label}]" if label and label != "-" else heading)
        factors.append(factor)
    rows = []
    for r in comparison.rows():
        row = []
        for k, f in zip(keys, factors):
            v = r[k]
            row.append(v / f if isinstance(v, float) else v)
        rows.append(row)
    return headings, rows


def format_value(v, digits: int = 4) -> str:
    """A table cell as text: numbers to ``digits`` significant figures, nan as an en dash."""
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, float):
        if math.isnan(v):
            return "–"
        if math.isinf(v):
            return "unbounded"
        return f"{v:.{digits}g}" if abs(v) < 10 ** digits else f"{v:.0f}"
    return str(v)


def table_csv(headings, rows) -> str:
    """CSV text of a table: full-precision numbers (repr), empty cell for nan, units in the headings."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(headings)
    for row in rows:
        w.writerow(["" if isinstance(v, float) and math.isnan(v) else repr(v) if isinstance(v, float) else v
                    for v in row])
    return buf.getvalue()


def write_table_csv(comparison, path, units: str = "si", columns=None):
    """Write the comparison table of ``comparison`` to ``path`` as CSV, atomically. Returns the path."""
    from .atomic import atomic_write_text

    headings, rows = display_table(comparison, units, columns)
    return atomic_write_text(path, table_csv(headings, rows))


def table_markdown(headings, rows, digits: int = 4) -> str:
    """A Markdown (pipe) table: cells from :func:`format_value`, ``|`` escaped, numbers right-aligned.

    Examples
    --------
    >>> print(table_markdown(["a", "b [A]"], [["x|y", 1.23456]]), end="")
    | a | b [A] |
    |:--|--:|
    | x\\|y | 1.235 |
    """
    def cell(v):
        return format_value(v, digits).replace("|", "\\|").replace("\n", " ")

    numeric = [bool(rows) and all(isinstance(r[i], (int, float)) and not isinstance(r[i], bool) for r in rows)
               for i in range(len(headings))]
    lines = ["| " + " | ".join(cell(h) for h in headings) + " |",
             "|" + "|".join("--:" if n else ":--" for n in numeric) + "|"]
    lines += ["| " + " | ".join(cell(v) for v in row) + " |" for row in rows]
    return "\n".join(lines) + "\n"


def table_html(headings, rows, digits: int = 4, caption: str | None = None) -> str:
    """An HTML ``<table>``: cells from :func:`format_value`, text escaped, numbers in ``class="num"`` cells."""
    import html

    out = ["<table>"]
    if caption:
        out.append(f"<caption>{html.escape(caption)}</caption>")
    out.append("<thead><tr>" + "".join(f"<th>{html.escape(str(h))}</th>" for h in headings) + "</tr></thead>")
    out.append("<tbody>")
    for row in rows:
        cells = []
        for v in row:
            num = isinstance(v, (int, float)) and not isinstance(v, bool)
            attr = ' class="num"' if num else ""
            cells.append(f"<td{attr}>{html.escape(format_value(v, digits))}</td>")
        out.append("<tr>" + "".join(cells) + "</tr>")
    out.append("</tbody></table>")
    return "\n".join(out) + "\n"
