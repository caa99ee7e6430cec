"""Parsing of Schoenflies point-group names.

Accepted forms (case-insensitive, surrounding spaces ignored; reported in the spelling of
INTERFACE.md):

- C1, Cs, Ci;
- Cn, Cnv, Cnh, Dn, Dnh, Dnd with 1 ≤ n ≤ ``MAX_N`` (n = 1 only for Cn; Cnv n ≥ 2, Cnh
  n ≥ 2, Dn/Dnh/Dnd n ≥ 2);
- S2n for even 4 ≤ 2n ≤ 2·``MAX_N``;
- T, Td, Th, O, Oh, I, Ih;
- C∞v and D∞h, also typed as ``Cinfv`` / ``Dinfh`` (reported as ``C∞v`` / ``D∞h``);
- K_h (the group of a single atom), also typed as ``Kh``.

Other names of the same groups are refused with a message naming the standard one (S2 is
Ci, C1h and C1v are Cs, D1 is C2, D1h is C2v, D1d is C2h, S_odd n is Cnh, C3i is S6), so
that one group has exactly one spelling everywhere.
"""

from __future__ import annotations

import re
from typing import NamedTuple

from ..errors import TableError

__all__ = ["ACCEPTED_FORMS", "MAX_N", "GroupName", "parse_group_name"]

#: Largest n accepted for the axial families (Cn, Cnv, Cnh, Dn, Dnh, Dnd; S2n up to S2000).
MAX_N = 1000

ACCEPTED_FORMS = (
    "C1, Cs, Ci, Cn, Cnv, Cnh, S2n, Dn, Dnh, Dnd (n = 2 ... "
    f"{MAX_N}), T, Td, Th, O, Oh, I, Ih, C∞v (or Cinfv), D∞h (or Dinfh), K_h (or Kh)"
)


class GroupName(NamedTuple):
    """A parsed point-group name.

    Attributes
    ----------
    name : str
        Standard spelling (``"D6h"``, ``"C∞v"``).
    family : str
        One of ``"C"``, ``"Cv"``, ``"Ch"``, ``"S"``, ``"D"``, ``"Dh"``, ``"Dd"``, ``"Cs"``,
        ``"Ci"``, ``"T"``, ``"Td"``, ``"Th"``, ``"O"``, ``"Oh"``, ``"I"``, ``"Ih"``,
        ``"Cinfv"``, ``"Dinfh"``, ``"Kh"``.
    n : int or None
        The n of the axial families (for ``"S"``, the order 2n of S2n); None otherwise.
    """

    name: str
    family: str
    n: int | None


_FIXED = {
    "cs": GroupName("Cs", "Cs", None),
    "ci": GroupName("Ci", "Ci", None),
    "t": GroupName("T", "T", None),
    "td": GroupName("Td", "Td", None),
    "th": GroupName("Th", "Th", None),
    "o": GroupName("O", "O", None),
    "oh": GroupName("Oh", "Oh", None),
    "i": GroupName("I", "I", None),
    "ih": GroupName("Ih", "Ih", None),
    "c∞v": GroupName("C∞v", "Cinfv", None),
    "cinfv": GroupName("C∞v", "Cinfv", None),
    "d∞h": GroupName("D∞h", "Dinfh", None),
    "dinfh": GroupName("D∞h", "Dinfh", None),
    "kh": GroupName("K_h", "Kh", None),
}

_SAME_AS = {
    "s2": "Ci",
    "s1": "Cs",
    "c1h": "Cs",
    "c1v": "Cs",
    "d1": "C2",
    "d1h": "C2v",
    "d1d": "C2h",
    "c1i": "Ci",
}

_AXIAL = re.compile(r"^([cds])(\d+)([vhdi]?)$")


def _fail(name, why: str) -> TableError:
    return TableError(f"unknown point group {name!r}: {why}. Accepted forms: {ACCEPTED_FORMS}.")


def parse_group_name(name: str) -> GroupName:
    """Parse a Schoenflies point-group name.

    Parameters
    ----------
    name : str
        For example ``"D6h"``, ``"c2v"``, ``"S8"``, ``"Ih"``, ``"C∞v"``, ``"Dinfh"``.

    Returns
    -------
    GroupName
        Standard spelling, family and n.

    Raises
    ------
    TableError
        Unknown or malformed name, n = 0 or n above ``MAX_N``, or a non-standard name of
        a group that has a standard one (the message names it).

    Examples
    --------
    >>> parse_group_name("d6H")
    GroupName(name='D6h', family='Dh', n=6)
    >>> parse_group_name("Dinfh").name
    'D∞h'
    """
    if not isinstance(name, str):
        raise TableError(f"a point-group name must be a string, got {type(name).__name__}")
    raw = name.strip()
    key = raw.lower().replace("_", "")
    if key in _FIXED:
        return _FIXED[key]
    if key in _SAME_AS:
        std = _SAME_AS[key]
        raise TableError(f"{raw} is the group {std}: ask for {std!r} (its standard name)")
    m = _AXIAL.match(key)
    if m is None:
        raise _fail(raw, "not a Schoenflies symbol")
    letter, digits, suffix = m.groups()
    n = int(digits)
    if n == 0:
        raise _fail(raw, "n must be at least 1")
    if letter == "s":
        if suffix:
            raise _fail(raw, "S2n takes no suffix")
        if n % 2 == 1:
            std = "Cs" if n == 1 else f"C{n}h"
            raise TableError(f"S{n} (odd n) is the group {std}: ask for {std!r}")
        if n > 2 * MAX_N:
            raise _fail(raw, f"S2n is supported up to S{2 * MAX_N}")
        return GroupName(f"S{n}", "S", n)
    if n > MAX_N:
        raise _fail(raw, f"n = {n} is above the supported limit n = {MAX_N}")
    if letter == "c":
        if suffix == "i":
            if n == 1:
                raise TableError(f"{raw} is the group Ci: ask for 'Ci'")
            std = f"S{2 * n}" if n % 2 == 1 else f"C{n}h"
            raise TableError(f"{raw} is the group {std}: ask for {std!r}")
        if suffix == "d":
            raise _fail(raw, "Cnd is not a point group")
        if n == 1:
            return GroupName("C1", "C", 1)
        fam = {"": "C", "v": "Cv", "h": "Ch"}[suffix]
        return GroupName(f"C{n}{suffix}", fam, n)
    # letter == "d"
    if suffix == "v" or suffix == "i":
        raise _fail(raw, f"D{n}{suffix} is not a point group")
    fam = {"": "D", "h": "Dh", "d": "Dd"}[suffix]
    return GroupName(f"D{n}{suffix}", fam, n)
