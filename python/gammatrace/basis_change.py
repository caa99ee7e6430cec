"""Public path of the change-of-basis API; the code lives in :mod:`gammatrace.bases.matrices`.

``basis_change.Basis`` is the one :class:`gammatrace.Basis`; ``basis_change.SymmetryData`` the
one value object of :mod:`gammatrace.group.symmetry`.
"""

from __future__ import annotations

from .bases.matrices import *  # noqa: F403 (re-export of the public API)
from .bases.matrices import __all__  # noqa: F401
