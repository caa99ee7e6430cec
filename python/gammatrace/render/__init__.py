"""Readable outputs: character tables, correlations and analyses as text, Markdown, LaTeX and
HTML (notebook display).

One layout per result, built once as blocks (:class:`Grid` tables and :class:`Paragraph`
lines whose cells carry a Unicode and a LaTeX spelling) and written by four writers
(:mod:`.grid`). The objects' own methods (``to_text``, ``to_markdown``, ``to_latex``,
``_repr_html_``, ``_repr_markdown_`` of ``CharacterTable``, ``ComplexForm``, ``Correlation``,
``Representation``, ``Vibrations``, ``Analysis``) delegate here.

- :mod:`.markup`: labels and functions as printed (``C2′``, ``12C5²``, ``x²+y²``) and in
  LaTeX; prose escaped for LaTeX.
- :mod:`.exact`: irrational characters in their printed forms (``2cos72°``, ``√2``,
  ``(1+√5)/2``).
- :mod:`.tables`: character tables, complex forms, correlations.
- :mod:`.results`: representations (worked tables), vibrations, analyses.

LaTeX is a fragment that needs no package (``tabular`` and paragraphs, only ASCII); with
``document=True`` a whole ``article`` loading ``amsmath``. HTML is one ``<div>`` with inline
style attributes only.

Layer 0: imports nothing from the package but :mod:`gammatrace.text`; the objects it writes
are read duck-typed, so every layer can call it.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from .grid import Cell, Grid, Paragraph, write_html, write_latex, write_markdown, write_text
from .tables import correlation_grid

__all__ = [
    "Cell",
    "Grid",
    "Paragraph",
    "correlation_html",
    "correlation_latex",
    "correlation_markdown",
    "write_html",
    "write_latex",
    "write_markdown",
    "write_text",
]


def correlation_markdown(result: Mapping[str, Any]) -> str:
    """A ``correlate`` result (the dict) as a Markdown correlation table.

    Examples
    --------
    >>> from gammatrace import correlate
    >>> print(correlation_markdown(correlate("C3v", "Cs")).splitlines()[2])
    | C3v | Cs |
    """
    return write_markdown([correlation_grid(result)])


def correlation_latex(result: Mapping[str, Any], document: bool = False) -> str:
    """A ``correlate`` result as LaTeX: a fragment, or a whole ``article`` (``document``)."""
    return write_latex([correlation_grid(result)], document=document)


def correlation_html(result: Mapping[str, Any]) -> str:
    """A ``correlate`` result as an HTML table (inline styles only)."""
    return write_html([correlation_grid(result)])
