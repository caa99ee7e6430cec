"""gammatrace: molecular point groups, characters and vibrational symmetry at scale.

The public API is this module's ``__all__``:

- :func:`analyze` one structure -> :class:`Analysis` (point group, operations, classes,
  representations, vibrations, symmetry number, chirality, orbits);
- :func:`analyze_many` many structures (files, frames, objects), failures kept in place;
- :func:`analyze_batch` many structures in parallel in the core, as a table;
- :func:`get_table` the character table of any point group; :func:`subgroups` and
  :func:`correlate` for descent in symmetry;
- :class:`Basis` the bases representations are built on;
- :func:`read_xyz`, :class:`Structure` input.

Everything else, ``gammatrace._core`` included, is private.
"""

from __future__ import annotations

from .analysis import DEFAULT_TOL, Analysis, Operation, Orbit, analyze, analyze_many
from .bases import Basis
from .bases.counting import Representation
from .batch.run import analyze_batch
from .errors import (
    BasisError,
    CellError,
    GammatraceError,
    InputError,
    ReadError,
    ReductionError,
    StructureError,
    SymmetryError,
    TableError,
    ToleranceError,
)
from .io import FrameError, Structure, read_structures, read_xyz
from .spectroscopy import Vibrations
from .tables import CharacterTable, correlate, get_table, subgroups

__version__ = "0.1.0"

__all__ = [
    "DEFAULT_TOL",
    "Analysis",
    "Basis",
    "BasisError",
    "CellError",
    "CharacterTable",
    "FrameError",
    "GammatraceError",
    "InputError",
    "Operation",
    "Orbit",
    "ReadError",
    "ReductionError",
    "Representation",
    "Structure",
    "StructureError",
    "SymmetryError",
    "TableError",
    "ToleranceError",
    "Vibrations",
    "__version__",
    "analyze",
    "analyze_batch",
    "analyze_many",
    "correlate",
    "get_table",
    "read_structures",
    "read_xyz",
    "subgroups",
]
