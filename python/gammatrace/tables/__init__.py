"""Character tables of the point groups, with canonical operations in the standard frame.

``get_table(name)`` returns a cached :class:`CharacterTable` for C1, Cs, Ci, Cn, Cnv, Cnh,
S2n, Dn, Dnh, Dnd (n up to ``MAX_N`` = 1000), T, Td, Th, O, Oh, I, Ih, C∞v, D∞h and K_h. The
axial families are generated for any n (``axial``), the polyhedral groups are tabulated
(``polyhedral``), the linear groups are reported through the finite subgroups C13v
and D13d (``linear``; |m| ≤ 6), and K_h through the sampling C13 × Ci with quadrature
weights (``spherical``; l ≤ 5). Tables are in real form (see ``table``); ``complex_form()``
writes complex-conjugate pairs apart (``complex``). Basis functions
are found by transforming candidate functions under the canonical operations
(``functions``). ``subgroups`` and ``correlate`` give the subgroups of a group and the
correlation of its irreps into them (``subgroups``).
"""

from __future__ import annotations

from ._types import ClassInfo, Irrep
from .complex import ComplexClass, ComplexForm
from .linear import LINEAR_SUBGROUP_N
from .names import MAX_N, GroupName, parse_group_name
from .registry import get_table
from .subgroups import Correlation, SubgroupEmbedding, correlate, embedding_namings, subgroups
from .table import CharacterTable

__all__ = [
    "LINEAR_SUBGROUP_N",
    "MAX_N",
    "CharacterTable",
    "ClassInfo",
    "ComplexClass",
    "ComplexForm",
    "Correlation",
    "GroupName",
    "Irrep",
    "SubgroupEmbedding",
    "correlate",
    "embedding_namings",
    "get_table",
    "parse_group_name",
    "subgroups",
]
