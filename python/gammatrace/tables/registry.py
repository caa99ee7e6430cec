"""The one place where a group name becomes its character table (cached)."""

from __future__ import annotations

from functools import cache

from .axial import axial_spec
from .linear import linear_spec
from .names import parse_group_name
from .polyhedral import polyhedral_spec
from .spherical import spherical_spec
from .table import CharacterTable

__all__ = ["get_table"]


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
    elif fam == "Kh":
        spec = spherical_spec()
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
        ``"Cinfv"``), ``"K_h"`` (also ``"Kh"``); see :func:`parse_group_name` for every
        accepted form.

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
    table = _BY_NAME.get(name)
    if table is None:
        table = _build(parse_group_name(name).name)
        if len(_BY_NAME) < _MAX_NAMES:
            _BY_NAME[name] = table
    return table


#: Names as given -> their table: a lookup skips parsing the name again (bounded, so that
#: arbitrary spellings cannot grow it without end).
_BY_NAME: dict[str, CharacterTable] = {}
_MAX_NAMES = 4096
