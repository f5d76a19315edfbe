"""The building blocks of a report page: one self-contained HTML file (figures embedded as PNG data, an
inline stylesheet with print rules, no scripts, no fonts or links to fetch), printable to PDF from a browser.

A page is a list of sections; each section a heading and HTML parts made by the small functions here,
which escape every text they are given.
"""

from __future__ import annotations

import base64
import datetime as _dt
import html
import math

#: Our own plain style: dark text on white, one muted accent, tables with thin rules; print rules keep
#: figures and tables whole and start each section on a new page (A4 and Letter both fit 180 mm wide).
STYLE = """
:root { --ink:#1d232a; --muted:#5b6670; --rule:#cfd6dc; --accent:#2b5d6b; --warn:#8a4b00; --warnbg:#fff4e5; }
* { box-sizing: border-box; }
body { font: 15px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", Arial, sans-serif;
       color: var(--ink); margin: 0 auto; max-width: 1080px; padding: 24px 28px 48px; background: #fff; }
header { border-bottom: 3px solid var(--accent); margin-bottom: 18px; }
header h1 { font-size: 26px; margin: 0 0 4px; }
header p { margin: 2px 0 10px; color: var(--muted); }
h2 { font-size: 20px; color: var(--accent); border-bottom: 1px solid var(--rule); padding-bottom: 4px;
     margin: 34px 0 12px; }
h3 { font-size: 16px; margin: 20px 0 8px; }
nav ol { columns: 2; margin: 6px 0 0; padding-left: 22px; color: var(--muted); }
nav a { color: var(--accent); text-decoration: none; }
table { border-collapse: collapse; margin: 8px 0 14px; font-size: 14px; }
th, td { border-bottom: 1px solid var(--rule); padding: 4px 10px 4px 0; text-align: left; vertical-align: top; }
th { font-weight: 600; color: var(--muted); }
td:first-child { white-space: nowrap; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; padding-left: 12px; }
table.wide { width: 100%; }
table.small { font-size: 12.5px; }
.answers { display: grid; grid-template-columns: repeat(auto-fill, minmax(190px, 1fr)); gap: 10px;
           margin: 10px 0 16px; }
.answer { border: 1px solid var(--rule); border-left: 4px solid var(--accent); padding: 8px 10px; }
.answer .v { font-size: 22px; font-weight: 600; display: block; }
.answer .l { color: var(--muted); font-size: 13px; }
.answer.bad { border-left-color: var(--warn); }
.box { border: 1px solid var(--rule); padding: 8px 14px; margin: 10px 0; }
.box.caution { border: 2px solid var(--warn); background: var(--warnbg); }
.box.caution h3 { color: var(--warn); margin-top: 4px; }
.box.warning { border-left: 5px solid var(--warn); }
figure { margin: 12px 0 22px; }
figure img { max-width: 100%; height: auto; border: 1px solid var(--rule); display: block; }
figcaption { color: var(--muted); font-size: 13px; margin-top: 4px; }
code, .mono { font-family: ui-monospace, "DejaVu Sans Mono", Menlo, Consolas, monospace; font-size: 12.5px;
              word-break: break-all; }
.muted { color: var(--muted); }
ul { padding-left: 22px; }
@page { margin: 14mm 12mm; }
@media print {
  body { max-width: none; padding: 0; font-size: 11pt; }
  nav { display: none; }
  section { break-before: page; }
  section.first { break-before: auto; }
  h2, h3 { break-after: avoid; }
  figure, .answer, .box, tr { break-inside: avoid; }
  thead { display: table-header-group; }
  figure img { max-height: 235mm; width: auto; max-width: 100%; border: none; }
  a { color: inherit; text-decoration: none; }
}
"""

#: The page may load nothing but its own embedded images: a browser refuses any request out of the file.
CSP = "default-src 'none'; img-src data:; style-src 'unsafe-inline'"


def esc(text) -> str:
    """HTML-escaped text of any value (None -> empty)."""
    return "" if text is None else html.escape(str(text))


def fmt(value, digits: int = 3) -> str:
    """A number as a person reads it: about ``digits`` significant figures, thousands separated, integers
    whole; None and NaN as 'n/a'; text as it is."""
    if value is None:
        return "n/a"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int):
        return f"{value:,}"
    if isinstance(value, float):
        if value != value:
            return "n/a"
        a = abs(value)
        if a == 0.0:
            return "0"
        if a < 1e-3 or a >= 1e7:
            return f"{value:.2e}"
        decimals = max(0, digits - 1 - math.floor(math.log10(a)))
        return f"{value:,.{min(decimals, 4)}f}"
    return str(value)


def table(header, rows, numeric=(), cls="") -> str:
    """A table: ``header`` a list of column titles, ``rows`` lists of already formatted cells (escaped
    here); the columns whose index is in ``numeric`` are right-aligned."""
    head = "".join(f'<th class="num">{esc(h)}</th>' if i in numeric else f"<th>{esc(h)}</th>"
                   for i, h in enumerate(header))
    body = []
    for row in rows:
        cells = "".join(f'<td class="num">{esc(c)}</td>' if i in numeric else f"<td>{esc(c)}</td>"
                        for i, c in enumerate(row))
        body.append(f"<tr>{cells}</tr>")
    c = f' class="{cls}"' if cls else ""
    return f"<table{c}><thead><tr>{head}</tr></thead><tbody>{''.join(body)}</tbody></table>"


def key_values(pairs, cls="") -> str:
    """A two-column table of (name, value) pairs."""
    rows = "".join(f"<tr><th>{esc(k)}</th><td>{esc(v)}</td></tr>" for k, v in pairs)
    c = f' class="{cls}"' if cls else ""
    return f"<table{c}><tbody>{rows}</tbody></table>"


def figure(png: bytes, alt: str, caption: str = "") -> str:
    """A PNG embedded in the page (base64 data), with its caption."""
    data = base64.b64encode(png).decode("ascii")
    cap = f"<figcaption>{esc(caption)}</figcaption>" if caption else ""
    return f'<figure><img src="data:image/png;base64,{data}" alt="{esc(alt)}">{cap}</figure>'


def bullets(items, cls="") -> str:
    if not items:
        return ""
    c = f' class="{cls}"' if cls else ""
    return f"<ul{c}>" + "".join(f"<li>{esc(i)}</li>" for i in items) + "</ul>"


def paragraph(text, cls="") -> str:
    c = f' class="{cls}"' if cls else ""
    return f"<p{c}>{esc(text)}</p>"


def answers(cards) -> str:
    """Headline figures as cards: (label, value text, bad) triples."""
    parts = []
    for label, value, bad in cards:
        parts.append(f'<div class="answer{" bad" if bad else ""}"><span class="v">{esc(value)}</span>'
                     f'<span class="l">{esc(label)}</span></div>')
    return f'<div class="answers">{"".join(parts)}</div>'


def box(title, inner_html, kind="") -> str:
    return f'<div class="box {kind}"><h3>{esc(title)}</h3>{inner_html}</div>'


class Page:
    """A report page being built: a title, a line under it, and sections in order."""

    def __init__(self, title: str, subtitle: str = ""):
        self.title, self.subtitle = title, subtitle
        self.sections: list[tuple[str, str, str]] = []

    def section(self, anchor: str, heading: str, *parts: str) -> None:
        """Add a section (``parts`` are HTML made by this module's functions)."""
        self.sections.append((anchor, heading, "".join(p for p in parts if p)))

    def html(self) -> str:
        """The whole page as one HTML document."""
        from atticsim.version import __version__

        created = _dt.datetime.now().astimezone().strftime("%Y-%m-%d %H:%M %Z").strip()
        toc = "".join(f'<li><a href="#{a}">{esc(h)}</a></li>' for a, h, _ in self.sections)
        first = ' class="first"'
        body = "".join(f'<section id="{a}"{first if i == 0 else ""}><h2>{esc(h)}</h2>{content}</section>'
                       for i, (a, h, content) in enumerate(self.sections))
        return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
                f'<meta http-equiv="Content-Security-Policy" content="{CSP}">'
                '<meta name="viewport" content="width=device-width, initial-scale=1">'
                f"<title>{esc(self.title)}</title><style>{STYLE}</style></head><body>"
                f"<header><h1>{esc(self.title)}</h1><p>{esc(self.subtitle)}</p>"
                f"<p>Prepared with atticsim {esc(__version__)} on {esc(created)}.</p></header>"
                f"<nav><strong>Contents</strong><ol>{toc}</ol></nav><main>{body}</main></body></html>\n")


def write_page(path, text: str) -> None:
    """Write a page atomically (a temporary file beside it, then a rename): never half a page."""
    import os
    import tempfile
    from pathlib import Path

    path = Path(path)
    fd, tmp = tempfile.mkstemp(prefix=f".tmp-{path.name}.", dir=path.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as handle:
            handle.write(text)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
