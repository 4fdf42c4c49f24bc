"""A small self-contained HTML writer: sections, tables, embedded PNG figures, a print stylesheet.

The page holds every figure as a base64 ``data:`` URI and its styles inline, so it
opens anywhere without its folder; printed from a browser it paginates cleanly
(figures and table rows are not split across pages, links print their targets).
"""

from __future__ import annotations

import base64
import html
import math
from pathlib import Path

__all__ = ["HtmlPage", "format_number", "table_html", "figure_html", "notice_html", "paragraph"]

_STYLE = """
body { font-family: "DejaVu Sans", Helvetica, Arial, sans-serif; max-width: 70rem; margin: 1.5rem auto;
       padding: 0 1rem; color: #111; line-height: 1.4; font-size: 14px; }
h1 { font-size: 1.6rem; border-bottom: 2px solid #111; }
h2 { font-size: 1.25rem; border-bottom: 1px solid #777; margin-top: 2rem; }
h3 { font-size: 1.05rem; }
table { border-collapse: collapse; margin: 0.5rem 0 1rem; font-size: 12px; }
th, td { border: 1px solid #999; padding: 2px 6px; text-align: left; vertical-align: top; }
td.num { text-align: right; font-variant-numeric: tabular-nums; }
th { background: #e8e8e8; }
.wide { overflow-x: auto; }
figure { margin: 0.8rem 0; }
figure img { max-width: 100%; border: 1px solid #ccc; }
figcaption { font-size: 12px; color: #333; }
.missing { border: 2px dashed #333; padding: 0.5rem 0.8rem; background: #f4f4f4; }
.caution { border-left: 6px solid #111; padding: 0.4rem 0.8rem; background: #f4f4f4; }
code { font-size: 12px; }
nav ol { columns: 2; }
@media print {
  body { max-width: none; margin: 0; font-size: 10pt; }
  nav { display: none; }
  h2 { page-break-after: avoid; break-after: avoid; }
  section { page-break-before: auto; }
  figure, tr, .missing, .caution { page-break-inside: avoid; break-inside: avoid; }
  .wide { overflow: visible; }
  table { font-size: 7.5pt; }
  a[href^="http"]::after { content: " (" attr(href) ")"; }
  @page { size: A4; margin: 14mm; }
}
"""


def format_number(value, digits=6):
    """A cell's text: integers as such, floats with ``digits`` significant digits, NaN/None as "-"."""
    if value is None:
        return "-"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if not math.isfinite(value):
            return "-"
        if value == int(value) and abs(value) < 1e15:
            return str(int(value))
        return format(value, f".{digits}g")
    try:  # numpy scalars
        import numpy as np

        if isinstance(value, np.integer):
            return str(int(value))
        if isinstance(value, np.floating):
            return format_number(float(value), digits)
        if isinstance(value, np.bool_):
            return "yes" if value else "no"
    except ImportError:  # pragma: no cover
        pass
    return str(value)


def _is_number(value):
    import numpy as np

    return isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(value, (bool, np.bool_))


def table_html(frame, *, table_id, caption="", digits=6):
    """A DataFrame as an HTML table with ``id`` and ``data-column`` attributes on every cell.

    Parameters
    ----------
    frame : DataFrame
    table_id : str
        The table's ``id`` (tests and readers find it by this).
    caption : str
        Shown above the table.
    digits : int, default 6
        Significant digits of floats.
    """
    head = "".join(f"<th>{html.escape(str(c))}</th>" for c in frame.columns)
    body = []
    for row in frame.itertuples(index=False):
        cells = []
        for col, value in zip(frame.columns, row):
            cls = ' class="num"' if _is_number(value) else ""
            cells.append(f'<td data-column="{html.escape(str(col))}"{cls}>{html.escape(format_number(value, digits))}</td>')
        body.append("<tr>" + "".join(cells) + "</tr>")
    cap = f"<caption>{html.escape(caption)}</caption>" if caption else ""
    return (f'<div class="wide"><table id="{html.escape(table_id)}">{cap}<thead><tr>{head}</tr></thead>'
            f"<tbody>{''.join(body)}</tbody></table></div>")


def figure_html(png_path, *, figure_id, caption):
    """A PNG embedded as a base64 data URI, with its caption and file name."""
    png_path = Path(png_path)
    data = base64.b64encode(png_path.read_bytes()).decode("ascii")
    cap = html.escape(caption)
    return (f'<figure id="{html.escape(figure_id)}" data-file="{html.escape(png_path.name)}">'
            f'<img alt="{cap}" src="data:image/png;base64,{data}">'
            f"<figcaption>{cap} (file {html.escape(png_path.name)})</figcaption></figure>")


def notice_html(what, *, notice_id):
    """A boxed notice saying what is missing and what to run."""
    return f'<div class="missing" id="{html.escape(notice_id)}"><strong>Missing:</strong> {html.escape(what)}</div>'


def paragraph(text, *, cls=None):
    """An escaped paragraph."""
    c = f' class="{cls}"' if cls else ""
    return f"<p{c}>{html.escape(text)}</p>"


class HtmlPage:
    """Collects sections and renders one self-contained HTML document.

    Parameters
    ----------
    title : str
        The page title and top heading.
    """

    def __init__(self, title):
        self.title = title
        self._sections = []

    def add_section(self, section_id, heading, parts):
        """Append a section ``<section id=section_id>`` with its heading and HTML parts (in order)."""
        self._sections.append((section_id, heading, list(parts)))

    def render(self, *, intro=""):
        """The complete document (str)."""
        nav = "".join(f'<li><a href="#{html.escape(i)}">{html.escape(h)}</a></li>' for i, h, _ in self._sections)
        body = [f"<h1>{html.escape(self.title)}</h1>", intro, f"<nav><ol>{nav}</ol></nav>"]
        for section_id, heading, parts in self._sections:
            body.append(f'<section id="{html.escape(section_id)}"><h2>{html.escape(heading)}</h2>{"".join(parts)}</section>')
        return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
                f"<title>{html.escape(self.title)}</title><style>{_STYLE}</style></head>\n<body>\n"
                + "\n".join(body) + "\n</body></html>\n")
