"""The gammatrace exception tree.

Every error the project raises derives from :class:`GammatraceError`. Classes that mean
"the input is bad" also derive from :class:`ValueError`, so ordinary ``except ValueError``
handlers keep working. The Rust core's ``Error`` variants map onto exactly one class each
(see ``rust/python/mod.rs``).
"""

from __future__ import annotations

__all__ = [
    "BasisError",
    "CellError",
    "GammatraceError",
    "GammatraceWarning",
    "InputError",
    "ReadError",
    "ReductionError",
    "StructureError",
    "SymmetryBreakingWarning",
    "SymmetryError",
    "TableError",
    "ToleranceError",
]


class GammatraceError(Exception):
    """Base class of every error gammatrace raises."""


class InputError(GammatraceError, ValueError):
    """An argument of the wrong type, shape or value."""


class StructureError(InputError):
    """A structure that cannot be analysed: empty, NaN, unknown element, overlapping atoms."""


class CellError(StructureError):
    """A periodic frame (a crystal cell) where a molecule or cluster is expected, or a cell
    that cannot be unwrapped into whole molecules; the message names the frame."""


class ReadError(InputError):
    """A malformed or unreadable structure file; the message names file, frame and line."""


class ToleranceError(GammatraceError):
    """The tolerance is inconsistent with the structure (operations do not close into a group)."""


class SymmetryError(GammatraceError):
    """A symmetry operation does not hold, or detected operations do not match the table."""


class ReductionError(GammatraceError):
    """A representation does not reduce to integer multiplicities (shows the residuals)."""


class TableError(InputError):
    """An unknown or malformed point-group name, or an unsupported n."""


class BasisError(InputError):
    """A basis specification naming an unknown element, angular momentum, atom or shape."""


class GammatraceWarning(UserWarning):
    """Base class of every warning gammatrace issues."""


class SymmetryBreakingWarning(GammatraceWarning):
    """Input data (a Hessian, mode vectors) break the structure's symmetry beyond a tolerance."""
