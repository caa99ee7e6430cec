"""Character tables of the point groups, with canonical operations in the standard frame.

``get_table(name)`` returns a cached :class:`CharacterTable` for C1, Cs, Ci, Cn, Cnv, Cnh,
S2n, Dn, Dnh, Dnd (n up to ``MAX_N`` = 1000), T, Td, Th, O, Oh, I, Ih, C∞v and D∞h. The
axial families are generated for any n (``axial``), the polyhedral groups are tabulated
(``polyhedral``), and the linear groups are reported through the finite subgroups C13v
and D13d (``linear``; |m| ≤ 6). Tables are in real form (see ``table``). Basis functions
are found by transforming candidate functions under the canonical operations
(``functions``). ``subgroups`` and ``correlate`` give the subgroups of a group and the
correlation of its irreps into them (``subgroups``).
"""

from __future__ import annotations

from functools import cache

from ._types import ClassInfo, Irrep
from .axial import axial_spec
from .linear import LINEAR_SUBGROUP_N, linear_spec
from .names import MAX_N, GroupName, parse_group_name
from .polyhedral import polyhedral_spec
from .subgroups import SubgroupEmbedding, correlate, subgroups
from .table import CharacterTable

__all__ = [
    "LINEAR_SUBGROUP_N",
    "MAX_N",
    "CharacterTable",
    "ClassInfo",
    "GroupName",
    "Irrep",
    "SubgroupEmbedding",
    "correlate",
    "get_table",
    "parse_group_name",
    "subgroups",
]


@cache
def _build(name: str) -> CharacterTable:
    parsed = parse_group_name(name)
    fam = parsed.family
    if fam == "Cs":
        spec = axial_spec("Ch", 1, "Cs")
    elif fam == "Ci":
        spec = axial_spec("S", 2, "Ci")
    elif fam in ("Cinfv", "Dinfh"):
        spec = linear_spec(parsed.name)
    elif parsed.n is None:
        spec = polyhedral_spec(parsed.name)
    else:
        spec = axial_spec(fam, parsed.n, parsed.name)
    return CharacterTable(spec)


def get_table(name: str) -> CharacterTable:
    """The character table of a point group (cached).

    Parameters
    ----------
    name : str
        Schoenflies name, e.g. ``"D6h"``, ``"C2v"``, ``"S8"``, ``"Ih"``, ``"C∞v"`` (also
        ``"Cinfv"``); see :func:`parse_group_name` for every accepted form.

    Returns
    -------
    CharacterTable

    Raises
    ------
    TableError
        Unknown or malformed name, or n outside 1 … ``MAX_N`` (the message lists the
        accepted forms).

    Examples
    --------
    >>> t = get_table("C3v")
    >>> [c.label for c in t.classes]
    ['E', '2C3', '3σv']
    >>> t.decompose_product("E", "E")
    {'A1': 1, 'A2': 1, 'E': 1}
    """
    return _build(parse_group_name(name).name)
