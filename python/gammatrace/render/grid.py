"""Tables and paragraphs, written as aligned text, Markdown, LaTeX or HTML.

A :class:`Grid` is a table whose cells carry both spellings (:class:`Cell`: Unicode and
LaTeX); a :class:`Paragraph` is one or more lines of prose. The writers take a list of such
blocks:

- :func:`write_text`: one grid, columns aligned with spaces, a dashed rule under the heads;
- :func:`write_markdown`: pipe tables (GitHub-flavoured Markdown), notes as paragraphs;
- :func:`write_latex`: a fragment of ``tabular`` environments and paragraphs that needs no
  package (``document=True``: a whole ``article`` with ``amsmath``, ready for pdflatex);
- :func:`write_html`: one ``<div>`` holding ``<table>``s and ``<p>``s, inline style
  attributes only (no stylesheet, no script), every text escaped.
"""

from __future__ import annotations

import html
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Union

from .markup import latex_text

__all__ = [
    "Cell",
    "Grid",
    "Paragraph",
    "cell",
    "write_html",
    "write_latex",
    "write_markdown",
    "write_text",
]


@dataclass(frozen=True)
class Cell:
    """One piece of text in its two spellings: ``text`` (Unicode; text, Markdown, HTML) and
    ``latex`` (ready for LaTeX text mode: math already between dollars)."""

    text: str
    latex: str


def cell(text: str, latex: str | None = None) -> Cell:
    """A :class:`Cell`; its LaTeX is ``latex`` or, by default, ``text`` escaped as prose."""
    return Cell(text, latex_text(text) if latex is None else latex)


@dataclass
class Grid:
    """A table: heads, rows of cells, alignment and the notes under it.

    ``align`` holds one of ``l``/``r`` per column; ``rules`` the columns after which LaTeX
    draws a vertical rule (as printed character tables do after the group name and before
    the functions); ``caption`` a line above the table; ``notes`` lines below it.
    """

    head: list[Cell]
    rows: list[list[Cell]]
    align: str
    rules: tuple[int, ...] = ()
    caption: Cell | None = None
    notes: list[Cell] = field(default_factory=list)

    def __post_init__(self) -> None:
        n = len(self.head)
        if len(self.align) != n or any(len(r) != n for r in self.rows):
            raise ValueError(
                f"a grid needs {n} cells in every row and {n} alignments, got "
                f"{sorted({len(r) for r in self.rows})} and {len(self.align)}"
            )


@dataclass
class Paragraph:
    """Lines of prose, kept together (one paragraph, a line break between lines)."""

    lines: list[Cell]


Block = Union[Grid, Paragraph]


# --------------------------------------------------------------------------------- text


def write_text(grid: Grid) -> str:
    """The grid as aligned text: columns two spaces apart, a dashed line under the heads,
    the caption above and each note on a line of its own below."""
    table = [[c.text for c in grid.head]] + [[c.text for c in r] for r in grid.rows]
    widths = [max(len(r[j]) for r in table) for j in range(len(grid.head))]
    lines = []
    for r in table:
        cells = [t.rjust(w) if a == "r" else t.ljust(w) for t, w, a in zip(r, widths, grid.align)]
        lines.append("  ".join(cells).rstrip())
    lines.insert(1, "-" * max(len(line) for line in lines))
    if grid.caption is not None:
        lines.insert(0, grid.caption.text)
    lines.extend(n.text for n in grid.notes)
    return "\n".join(lines)


# ----------------------------------------------------------------------------- markdown


def _md(text: str) -> str:
    """A table cell or paragraph in Markdown: backslash, pipe, star and backtick escaped."""
    for ch in "\\|*`":
        text = text.replace(ch, "\\" + ch)
    return text


def _markdown_grid(grid: Grid) -> str:
    out = []
    if grid.caption is not None:
        out.append(f"**{_md(grid.caption.text)}**")
        out.append("")
    out.append("| " + " | ".join(_md(c.text) for c in grid.head) + " |")
    out.append("|" + "|".join(":---" if a == "l" else "---:" for a in grid.align) + "|")
    out.extend("| " + " | ".join(_md(c.text) for c in r) + " |" for r in grid.rows)
    for note in grid.notes:
        out.append("")
        out.append(_md(note.text))
    return "\n".join(out)


def write_markdown(blocks: Sequence[Block]) -> str:
    """The blocks as Markdown: pipe tables and paragraphs, a blank line between blocks."""
    parts = []
    for b in blocks:
        if isinstance(b, Grid):
            parts.append(_markdown_grid(b))
        else:
            parts.append("  \n".join(_md(line.text) for line in b.lines))
    return "\n\n".join(parts)


# -------------------------------------------------------------------------------- LaTeX

LATEX_PREAMBLE = (
    "\\documentclass{article}\n"
    "\\usepackage{amsmath}\n"
    "\\setlength{\\tabcolsep}{4pt}\n"
    "\\begin{document}\n"
)
LATEX_END = "\\end{document}\n"


def _latex_grid(grid: Grid) -> str:
    spec = ""
    for j, a in enumerate(grid.align):
        spec += a
        if j in grid.rules and j < len(grid.align) - 1:
            spec += "|"
    out = []
    if grid.caption is not None:
        out.append("\\noindent " + grid.caption.latex + "\\par\\smallskip")
    out.append("\\noindent\\begin{tabular}{" + spec + "}")
    out.append("\\hline")
    out.append(" & ".join(c.latex for c in grid.head) + " \\\\")
    out.append("\\hline")
    out.extend(" & ".join(c.latex for c in r) + " \\\\" for r in grid.rows)
    out.append("\\hline")
    out.append("\\end{tabular}\\par")
    if grid.notes:
        out.append("\\smallskip")
        out.extend("{\\footnotesize " + n.latex + "\\par}" for n in grid.notes)
    return "\n".join(out)


def write_latex(blocks: Sequence[Block], document: bool = False) -> str:
    """The blocks as LaTeX: ``tabular`` environments (vertical rules where the grid says,
    horizontal rules around the heads) and paragraphs, ``\\medskip`` between blocks.

    The fragment uses no package; with ``document=True`` it is wrapped in a whole
    ``article`` (``amsmath`` loaded) that pdflatex compiles as it is.
    """
    parts = []
    for b in blocks:
        if isinstance(b, Grid):
            parts.append(_latex_grid(b))
        else:
            # \newline, not \\: a line opening with "[" would be read as \\'s argument
            parts.append(
                "\\noindent " + "\\newline\n".join(line.latex for line in b.lines) + "\\par"
            )
    body = "\n\\medskip\n".join(parts) + "\n"
    return LATEX_PREAMBLE + body + LATEX_END if document else body


# --------------------------------------------------------------------------------- HTML

_TABLE = "border-collapse:collapse;margin:0.3em 0"
_HEAD = "border-bottom:1px solid;padding:0.1em 0.6em"
_BODY = "padding:0.1em 0.6em"
_RULE = ";border-right:1px solid"
_NOTE = "margin:0.2em 0;font-size:smaller"


def _style(align: str, ruled: bool, head: bool) -> str:
    base = _HEAD if head else _BODY
    return (
        base
        + (";text-align:right" if align == "r" else ";text-align:left")
        + (_RULE if ruled else "")
    )


def _html_grid(grid: Grid) -> str:
    esc = html.escape
    last = len(grid.align) - 1
    ruled = [j in grid.rules and j < last for j in range(len(grid.align))]
    out = [f'<table style="{_TABLE}">']
    if grid.caption is not None:
        out.append(f'<caption style="text-align:left">{esc(grid.caption.text)}</caption>')
    out.append("<thead><tr>")
    out.extend(
        f'<th style="{_style(a, r, True)}">{esc(c.text)}</th>'
        for c, a, r in zip(grid.head, grid.align, ruled)
    )
    out.append("</tr></thead>")
    out.append("<tbody>")
    for row in grid.rows:
        out.append(
            "<tr>"
            + "".join(
                f'<td style="{_style(a, r, False)}">{esc(c.text)}</td>'
                for c, a, r in zip(row, grid.align, ruled)
            )
            + "</tr>"
        )
    out.append("</tbody>")
    out.append("</table>")
    out.extend(f'<p style="{_NOTE}">{esc(n.text)}</p>' for n in grid.notes)
    return "\n".join(out)


def write_html(blocks: Sequence[Block]) -> str:
    """The blocks as one ``<div>``: tables and paragraphs, inline styles only, escaped."""
    parts = ["<div>"]
    for b in blocks:
        if isinstance(b, Grid):
            parts.append(_html_grid(b))
        else:
            parts.extend(
                f'<p style="margin:0.1em 0">{html.escape(line.text)}</p>' for line in b.lines
            )
    parts.append("</div>")
    return "\n".join(parts)
