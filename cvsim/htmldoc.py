"""Self-contained HTML documents with the look of cvsim's calculation reports.

Building blocks shared by the report of one run and the report of a sweep
(:mod:`cvsim.report`): a page with a title block, a contents list, the caution
at the top and at the end, numbered sections with stable ``id`` attributes,
tables, verbatim text with line numbers, PNG figures and a sign-off block.

The page needs nothing but itself to be viewed: the style sheet is inline,
pictures are ``data:`` URIs, no fonts or scripts are fetched. It prints to A4
from a browser: each major section starts a new page, table rows and figures
are not split, table headings repeat on each page, and every printed page
carries the document's subject, its scenario hash, the caution in short and a
page number.

Text passed to these functions is escaped; a string already in HTML is marked
by wrapping it in :class:`Html`.
"""
from __future__ import annotations

import base64
import html
import math
from dataclasses import dataclass
from pathlib import Path

from .result import CAUTION


class Html(str):
    """A string that is already HTML (not escaped again)."""


def esc(value) -> Html:
    """``value`` as HTML text: :class:`Html` passes through, anything else is
    turned into text and escaped."""
    if isinstance(value, Html):
        return value
    return Html(html.escape(str(value), quote=True))


def join(parts, sep: str = "") -> Html:
    return Html(sep.join(esc(p) for p in parts))


def tag(name: str, content="", cls: str | None = None, id: str | None = None,
        **attrs) -> Html:
    """``<name class=.. id=.. attrs>content</name>``; ``content`` is escaped
    unless it is :class:`Html` (a list is joined)."""
    if isinstance(content, (list, tuple)):
        content = join(content)
    a = "".join(f' {k.rstrip("_").replace("_", "-")}="{html.escape(str(v))}"'
                for k, v in (("class", cls), ("id", id), *attrs.items()) if v is not None)
    return Html(f"<{name}{a}>{esc(content)}</{name}>")


# ---------------------------------------------------------------- numbers

def number(value, digits: int = 6) -> str:
    """A plain number for a table cell: ``digits`` significant digits; ``-``
    for a missing value (``None`` or NaN); words and integers as they are."""
    if value is None:
        return "-"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "-"
        return f"{value:.{digits}g}"
    if hasattr(value, "item"):  # numpy scalar
        return number(value.item(), digits)
    return str(value)


# ---------------------------------------------------------------- blocks

def table(head: list, rows: list[list], *, row_classes: list | None = None,
          numeric: set[int] = frozenset(), cls: str | None = None, caption=None,
          widths: list[str] | None = None) -> Html:
    """A table with a heading row that repeats on each printed page.

    rows         cells as text or :class:`Html`; a row given as
                 ``("group", text)`` is a heading row across all columns
    row_classes  one class per row (``None`` for none), e.g. ``crossed``
    numeric      indices of columns set right-aligned with tabular digits
    widths       CSS widths of the columns (e.g. ``"30%"``)
    """
    out = [f'<table{_attr("class", cls)}>']
    if caption is not None:
        out.append(tag("caption", caption))
    if widths:
        out.append("<colgroup>" + "".join(f'<col style="width:{w}">' for w in widths)
                   + "</colgroup>")
    out.append("<thead><tr>" + "".join(tag("th", h, scope="col") for h in head)
               + "</tr></thead>")
    out.append("<tbody>")
    for i, row in enumerate(rows):
        rc = row_classes[i] if row_classes else None
        if isinstance(row, tuple) and len(row) == 2 and row[0] == "group":
            out.append(f'<tr class="group"><th colspan="{len(head)}" scope="rowgroup">'
                       f"{esc(row[1])}</th></tr>")
            continue
        cells = "".join(tag("td", c, cls="num" if j in numeric else None)
                        for j, c in enumerate(row))
        out.append(f"<tr{_attr('class', rc)}>{cells}</tr>")
    out.append("</tbody></table>")
    return Html("\n".join(out))


def facts(pairs: list[tuple]) -> Html:
    """A two-column table of labels and values (values may be :class:`Html`)."""
    rows = "".join(f'<tr><th scope="row">{esc(k)}</th><td>{esc(v)}</td></tr>' for k, v in pairs)
    return Html(f'<table class="facts"><tbody>{rows}</tbody></table>')


def bullets(items, ordered: bool = False, cls: str | None = None, prefix: str = "") -> Html:
    """A list; with ``prefix`` (e.g. ``"A"``) each item gets a label ``A1``, ``A2``, ...
    and an ``id`` of that name, so other documents can refer to it."""
    name = "ol" if ordered else "ul"
    if prefix:
        lis = "".join(f'<li id="{prefix}{i}"><span class="ref">{prefix}{i}</span> {esc(x)}</li>'
                      for i, x in enumerate(items, 1))
        return Html(f'<{name} class="register{" " + cls if cls else ""}">{lis}</{name}>')
    return tag(name, [tag("li", x) for x in items], cls=cls)


def verbatim(text: str, numbered: bool = True) -> Html:
    """Text exactly as given, in a ``<pre>``; line numbers (when ``numbered``)
    are drawn by the style sheet, so the text itself stays verbatim (it is what
    the browser copies and what ``textContent`` gives)."""
    if not numbered:
        return tag("pre", text, cls="verbatim")
    lines = text.split("\n")
    if lines and lines[-1] == "":
        lines.pop()
    body = "\n".join(f'<span class="ln">{esc(line)}</span>' for line in lines)
    return Html(f'<pre class="verbatim numbered">{body}\n</pre>')


def png_data_uri(path) -> str:
    """A PNG file as a ``data:image/png;base64,...`` URI."""
    data = Path(path).read_bytes()
    return "data:image/png;base64," + base64.b64encode(data).decode("ascii")


def figure(path, caption: str, number: int | None = None, id: str | None = None) -> Html:
    """A PNG embedded in the page, with its caption below."""
    label = f"Figure {number}. " if number is not None else ""
    return Html(f'<figure{_attr("id", id)}><img src="{png_data_uri(path)}" '
                f'alt="{html.escape(caption)}">'
                f'<figcaption><b>{esc(label)}</b>{esc(caption)}</figcaption></figure>')


def caution(id: str) -> Html:
    """The caution every result carries, as a box nobody skips."""
    return Html(f'<aside class="caution" id="{id}" role="note"><p class="label">Caution</p>'
                f"<p>{esc(CAUTION)}</p></aside>")


def notice(text, id: str | None = None, kind: str = "failed") -> Html:
    """A boxed notice (``kind``: ``failed`` or ``info``)."""
    return Html(f'<div class="notice {kind}"{_attr("id", id)}>{esc(text)}</div>')


def sign_off(roles=("Prepared by", "Checked by", "Reviewed and approved by")) -> Html:
    """Blank lines for names, signatures and dates, and room for comments,
    filled by hand on the printed report."""
    rows = "".join(f'<tr><th scope="row">{esc(r)}</th><td></td><td></td><td></td></tr>'
                   for r in roles)
    grid = ('<table class="signoff"><thead><tr><th scope="col">Role</th><th scope="col">Name'
            '</th><th scope="col">Signature</th><th scope="col">Date</th></tr></thead>'
            f"<tbody>{rows}</tbody></table>")
    notes = ('<p class="lines-label">Comments of the checker and reviewer '
             '(findings, open points, how they were closed):</p>'
             + '<div class="fill-line"></div>' * 8)
    return Html(grid + notes)


# ---------------------------------------------------------------- the page

@dataclass(frozen=True)
class Section:
    """One numbered section of a document.

    id         stable ``id`` attribute (tests and links find the section by it)
    heading    heading text, without number
    body       content (HTML)
    new_page   start a new page when printed
    appendix   an appendix: lettered A, B, ... after the numbered sections (material
               a checker looks up rather than reads: the file verbatim, every value)
    landscape  printed on landscape A4 pages (wide tables)
    """

    id: str
    heading: str
    body: Html
    new_page: bool = True
    appendix: bool = False
    landscape: bool = False

    def label(self, number: int) -> str:
        return f"Appendix {chr(ord('A') + number - 1)}" if self.appendix else str(number)


def subsection(id: str, heading: str, body, level: int = 3) -> Html:
    """A titled part of a section, with its own ``id``."""
    return Html(f'<section class="part" id="{id}">{tag(f"h{level}", heading)}{esc(body)}'
                f"</section>")


def document(*, title: str, kind: str, summary_facts: list[tuple], sections: list[Section],
             lead: Html = Html(""), footer_left: str = "", footer_right: str = "") -> str:
    """The whole HTML page.

    title          subject of the document (the scenario's title)
    kind           what the document is, e.g. ``Calculation report: one run``
    summary_facts  label/value pairs of the title block (file, hash, date, status)
    sections       the numbered sections, in order
    lead           HTML placed between the title block and the first caution
                   (e.g. a notice that the run failed)
    footer_left    short text printed at the top of every page (e.g. the hash)
    """
    body = [s for s in sections if not s.appendix]
    extra = [s for s in sections if s.appendix]
    numbered = [(s.label(i), s) for i, s in enumerate(body, 1)]
    numbered += [(s.label(i), s) for i, s in enumerate(extra, 1)]
    contents = "".join(f'<li><a href="#{s.id}">{esc(n)}&nbsp; {esc(s.heading)}</a></li>'
                       for n, s in numbered)
    parts = []
    for n, s in numbered:
        cls = ("major" + ("" if s.new_page else " run-on") + (" appendix" if s.appendix else "")
               + (" landscape" if s.landscape else ""))
        sep = ". " if s.appendix else " "
        parts.append(f'<section class="{cls}" id="{s.id}"><h2><span class="no">{esc(n)}</span>'
                     f"{sep}{esc(s.heading)}</h2>{s.body}</section>")
    page_css = CSS.replace("@@HEAD_LEFT@@", _css_string(_cut(title, 90))).replace(
        "@@HEAD_RIGHT@@", _css_string(footer_right)).replace(
        "@@FOOT_LEFT@@", _css_string(footer_left or
                                     "Screening estimate: verify against the governing codes "
                                     "and have it reviewed (see Caution)."))
    return "\n".join([
        "<!DOCTYPE html>",
        '<html lang="en">',
        "<head>",
        '<meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        '<meta name="generator" content="cvsim">',
        tag("title", f"{title} - {kind}"),
        f"<style>{page_css}</style>",
        "</head>",
        "<body>",
        '<header id="title-block">',
        tag("p", kind, cls="kind"),
        tag("h1", title),
        facts(summary_facts),
        "</header>",
        lead,
        caution("caution-top"),
        f'<nav id="contents"><h2 class="toc">Contents</h2><ol>{contents}</ol></nav>',
        *parts,
        caution("caution-end"),
        "</body>",
        "</html>",
        "",
    ])


def _attr(name: str, value) -> str:
    return "" if value is None else f' {name}="{html.escape(str(value))}"'


def _cut(text: str, most: int) -> str:
    return text if len(text) <= most else text[:most - 1] + "…"


def _css_string(text: str) -> str:
    """``text`` as a CSS string literal (for ``content:``)."""
    out = text.replace("\\", "\\\\").replace('"', '\\"').replace("\n", " ")
    out = out.replace("<", "\\3C ")  # never close the <style> element
    return f'"{out}"'


#: The style sheet: plain, black on white, printable; light tints only,
#: every state also said in words (never by colour alone).
CSS = """
:root { --ink: #1b1b1b; --muted: #555; --rule: #9aa4ae; --accent: #1f4e79;
        --warn: #8a4b00; --bad: #a00000; --tint: #eef2f6; }
* { box-sizing: border-box; }
html { font-family: "DejaVu Sans", "Liberation Sans", Arial, Helvetica, sans-serif;
       font-size: 10pt; color: var(--ink); background: #fff; line-height: 1.4;
       -webkit-print-color-adjust: exact; print-color-adjust: exact; }
body { max-width: 200mm; margin: 0 auto; padding: 10mm 8mm 16mm; background: #fff; }
h1 { font-size: 17pt; line-height: 1.25; margin: 2pt 0 8pt; }
h2 { font-size: 13.5pt; color: var(--accent); border-bottom: 1.4pt solid var(--accent);
     padding-bottom: 2pt; margin: 20pt 0 8pt; break-after: avoid; page-break-after: avoid; }
h2 .no { display: inline-block; min-width: 1.6em; }
.appendix h2 .no { min-width: 0; }
h3 { font-size: 11pt; margin: 14pt 0 5pt; break-after: avoid; page-break-after: avoid; }
p { margin: 4pt 0 7pt; }
a { color: var(--accent); }
code, pre, .mono { font-family: "DejaVu Sans Mono", "Liberation Mono", Consolas, monospace; }
.kind { margin: 0; font-size: 9pt; letter-spacing: .06em; text-transform: uppercase;
        color: var(--muted); }
header { border: 1pt solid var(--ink); padding: 8pt 10pt 4pt; }
table { border-collapse: collapse; width: 100%; margin: 4pt 0 10pt; font-size: 8.8pt; }
th, td { border: .6pt solid var(--rule); padding: 2.5pt 4pt; text-align: left;
         vertical-align: top; overflow-wrap: break-word; }
thead th { background: var(--tint); }
thead { display: table-header-group; }
tr, figure, .caution, .notice, .signoff { break-inside: avoid; page-break-inside: avoid; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
caption { caption-side: top; text-align: left; font-weight: bold; padding: 2pt 0; }
tr.group th { background: #f7f7f7; font-weight: bold; font-family: "DejaVu Sans Mono",
              "Liberation Mono", Consolas, monospace; font-size: 8.3pt; }
table.facts { width: 100%; border: none; margin: 2pt 0 4pt; }
table.facts th, table.facts td { border: none; border-top: .6pt solid #d5d9de; padding: 2pt 4pt; }
table.facts th { width: 26%; font-weight: normal; color: var(--muted); }
table.echo td:first-child, table.echo td:nth-child(3) { font-family: "DejaVu Sans Mono",
        "Liberation Mono", Consolas, monospace; font-size: 8.2pt; }
table.wide { font-size: 7.6pt; }
table.wide th, table.wide td { padding: 2pt 3pt; }
table.wide .state-crossed { white-space: normal; }
tr.crossed td { background: #fdeeee; }
tr.crossed td:first-child { border-left: 4pt solid var(--bad); }
.state-crossed { font-weight: bold; color: var(--bad); white-space: nowrap; }
.state-met { white-space: nowrap; }
pre.verbatim { font-size: 8.2pt; line-height: 1.35; white-space: pre-wrap;
               overflow-wrap: anywhere; border: .6pt solid var(--rule); background: #fbfbfb;
               padding: 5pt 6pt; margin: 4pt 0 10pt; }
pre.numbered { counter-reset: line; }
pre.numbered .ln::before { counter-increment: line; content: counter(line);
        display: inline-block; width: 2.4em; margin-right: .9em; padding-right: .4em;
        text-align: right; color: #888; border-right: .6pt solid #ccc; }
.caution { border: 1.5pt solid var(--warn); border-left-width: 7pt; background: #fff6e8;
           padding: 5pt 10pt; margin: 10pt 0; }
.caution .label { font-weight: bold; text-transform: uppercase; letter-spacing: .08em;
                  color: var(--warn); margin: 0 0 2pt; }
.caution p { margin: 2pt 0; font-size: 10.5pt; font-weight: bold; }
.notice { border: 1.5pt solid var(--ink); padding: 5pt 10pt; margin: 10pt 0; }
.notice.failed { border-color: var(--bad); border-left-width: 7pt; background: #fdeeee;
                 font-weight: bold; }
.notice.info { border-color: var(--rule); background: #f6f8fa; }
ul.register, ol.register { list-style: none; padding-left: 0; }
.register li { margin: 0 0 4pt 2.8em; text-indent: -2.8em; }
.register .ref { display: inline-block; width: 2.4em; text-indent: 0; font-weight: bold;
                 color: var(--accent); }
.outcome li { margin-bottom: 3pt; }
.muted { color: var(--muted); }
nav#contents { margin: 12pt 0; }
nav#contents h2.toc { margin-top: 6pt; }
nav#contents ol { list-style: none; padding-left: 0; columns: 2; column-gap: 12mm; margin: 0; }
nav#contents li { margin: 1.5pt 0; }
nav#contents a { text-decoration: none; color: var(--ink); }
figure { margin: 8pt 0 14pt; text-align: center; }
figure img { max-width: 100%; height: auto; border: .6pt solid #d0d0d0; }
figcaption { font-size: 9pt; color: var(--muted); margin-top: 3pt; text-align: left; }
table.signoff td { height: 26pt; }
table.signoff th[scope=row] { width: 26%; }
.lines-label { margin-top: 12pt; }
.fill-line { border-bottom: .6pt solid var(--ink); height: 22pt; }
@page { size: A4; margin: 17mm 14mm 17mm 14mm;
  @top-left { content: @@HEAD_LEFT@@; font-size: 7.5pt; color: #555; }
  @top-right { content: @@HEAD_RIGHT@@; font-size: 7.5pt; color: #555; }
  @bottom-left { content: @@FOOT_LEFT@@; font-size: 7.5pt; color: #555; }
  @bottom-right { content: "Page " counter(page) " of " counter(pages); font-size: 7.5pt;
                  color: #555; }
}
@page wide { size: A4 landscape; margin: 14mm 14mm 14mm 14mm;
  @top-left { content: @@HEAD_LEFT@@; font-size: 7.5pt; color: #555; }
  @top-right { content: @@HEAD_RIGHT@@; font-size: 7.5pt; color: #555; }
  @bottom-left { content: @@FOOT_LEFT@@; font-size: 7.5pt; color: #555; }
  @bottom-right { content: "Page " counter(page) " of " counter(pages); font-size: 7.5pt;
                  color: #555; }
}
@media print {
  section.landscape { page: wide; break-before: page; page-break-before: always; }
  html { font-size: 9.5pt; }
  body { max-width: none; padding: 0; margin: 0; }
  section.major { break-before: page; page-break-before: always; }
  section.major.run-on { break-before: auto; page-break-before: auto; }
  section.major > h2 { margin-top: 0; }
  a { color: inherit; text-decoration: none; }
  figure img { max-height: 235mm; }
}
"""
