"""What every picture shares: the one import of matplotlib, a new figure that no GUI backend
ever sees, saving to PNG, and the colours (atoms by element, symmetry elements by class)."""

from __future__ import annotations

import os
from typing import Any

from ..errors import InputError

__all__ = ["ATOM_COLOURS", "CLASS_COLOURS", "atom_colour", "new_figure", "save"]


def new_figure(width: float, height: float) -> Any:
    """A ``matplotlib.figure.Figure`` of ``width`` × ``height`` inches.

    The figure is made without pyplot, so no backend is chosen, nothing needs a display, and
    the figure is freed like any Python object once the caller drops it.

    Raises
    ------
    InputError
        When matplotlib is not installed.
    """
    try:
        from matplotlib.figure import Figure
    except ImportError:
        raise InputError("pictures need matplotlib: pip install 'gammatrace[plot]'") from None
    return Figure(figsize=(width, height))


def save(fig: Any, path: str | os.PathLike | None, dpi: int = 110) -> None:
    """Write ``fig`` as a PNG to ``path`` (nothing when ``path`` is None); the folder must exist.

    Raises
    ------
    InputError
        When the file cannot be written.
    """
    if path is None:
        return
    try:
        fig.savefig(os.fspath(path), dpi=dpi, format="png")
    except OSError as exc:
        raise InputError(f"cannot write the picture to {os.fspath(path)!r}: {exc}") from None


# Atom colours by atomic number: the customary colours of ball-and-stick models (common
# practice, from memory); any other element is drawn in ATOM_COLOUR_OTHER.
ATOM_COLOURS = {
    1: "#e8e8e8",
    2: "#d9ffff",
    3: "#cc80ff",
    5: "#ffb5b5",
    6: "#505050",
    7: "#3050f8",
    8: "#ff0d0d",
    9: "#90e050",
    11: "#ab5cf2",
    12: "#8aff00",
    13: "#bfa6a6",
    14: "#f0c8a0",
    15: "#ff8000",
    16: "#ffff30",
    17: "#1ff01f",
    19: "#8f40d4",
    20: "#3dff00",
    22: "#bfc2c7",
    26: "#e06633",
    27: "#f090a0",
    28: "#50d050",
    29: "#c88033",
    30: "#7d80b0",
    35: "#a62929",
    46: "#006985",
    47: "#c0c0c0",
    53: "#940094",
    54: "#429eb0",
    78: "#d0d0e0",
    79: "#ffd123",
}
ATOM_COLOUR_OTHER = "#c080c0"


def atom_colour(number: int) -> str:
    """The colour of an atom of atomic number ``number``."""
    return ATOM_COLOURS.get(int(number), ATOM_COLOUR_OTHER)


# One colour per drawn symmetry element, in the order the elements are listed: distinct hues,
# none of them grey, so that two classes of the same kind (C2' and C2'', σv and σd) never
# share a colour in one picture.
CLASS_COLOURS = (
    "#1f5fbf",
    "#d62728",
    "#2ca02c",
    "#9467bd",
    "#e07b00",
    "#17becf",
    "#8c564b",
    "#e377c2",
    "#7a7a00",
    "#003f5c",
    "#bc5090",
    "#58a000",
)
