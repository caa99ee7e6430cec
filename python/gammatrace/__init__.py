"""gammatrace: molecular point groups, characters and vibrational symmetry at scale."""

from __future__ import annotations

from .errors import (
    BasisError,
    GammatraceError,
    InputError,
    ReadError,
    ReductionError,
    StructureError,
    SymmetryError,
    TableError,
    ToleranceError,
)

__version__ = "0.1.0"

__all__ = [
    "BasisError",
    "GammatraceError",
    "InputError",
    "ReadError",
    "ReductionError",
    "StructureError",
    "SymmetryError",
    "TableError",
    "ToleranceError",
    "__version__",
]
