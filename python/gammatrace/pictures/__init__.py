"""Pictures (``pip install 'gammatrace[plot]'``), each a matplotlib ``Figure``, optionally
written as a PNG; no pyplot, so nothing needs a display.

* :func:`draw_symmetry` — the structure in 3D with one symmetry element per class, labelled
  with the table's class labels, and legends for the elements and the atoms;
* :func:`draw_stereogram` — the stereographic projection of the symmetry elements and of a
  general position, in the crystallographic symbols;
* :func:`draw_ladder` — a distortion ladder: group order against tolerance;
* :func:`draw_mode_spectrum` — a stick spectrum of normal modes coloured by irrep, with IR
  and Raman activity;
* :func:`plot_group_counts` — point groups of a batch as a bar chart.

:func:`representative_elements` and :func:`symmetry_elements` give the elements drawn.
"""

from .charts import draw_ladder, draw_mode_spectrum, plot_group_counts
from .elements import (
    AxisLine,
    RepresentativeElement,
    axis_lines,
    representative_elements,
    symmetry_elements,
)
from .stereogram import draw_stereogram, general_position
from .structure import draw_symmetry

__all__ = [
    "AxisLine",
    "RepresentativeElement",
    "axis_lines",
    "draw_ladder",
    "draw_mode_spectrum",
    "draw_stereogram",
    "draw_symmetry",
    "general_position",
    "plot_group_counts",
    "representative_elements",
    "symmetry_elements",
]
