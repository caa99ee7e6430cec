"""The one basis type: which functions sit on which sites, independent of any structure.

A :class:`Basis` names a kind of function and its options, nothing that depends on a
structure. :meth:`Basis.resolve` turns it into a
:class:`~gammatrace.bases.resolve.ResolvedBasis` for one structure (shells per atom, the bond
list, the plane normal ...); the counting code (:mod:`gammatrace.bases.counting`) and the
matrix code (:mod:`gammatrace.basis_change`) both consume that resolved form.

========================  ==========================================================
``"atoms"``               one scalar per atom (the permutation representation)
``"cartesian"``           x, y, z displacements of every atom (Γ_3N)
``"orbitals"``            atomic orbitals by angular momentum, per element (``"Fe=spd,H=s"``)
``"pi"``                  one p orbital per π centre, perpendicular to the π system there
                          (``"pi:C,N"`` names the elements; rule in :mod:`.resolve`)
``"bonds"``               bond stretches (scalars on unordered atom pairs)
``"bond_vectors"``        vectors along bonds (+1 kept, −1 reversed)
``"vectors"``             the user's own 3-vectors at every atom, ``(n_atoms, m, 3)``
========================  ==========================================================

Bonds are found from covalent radii (Cordero et al. 2008) when the basis is resolved: atoms
i, j are bonded when d_ij ≤ scale · (r_i + r_j), ``scale = 1.2`` by default, unless the
pairs are given explicitly.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any, Union

import numpy as np

from ..errors import BasisError
from ..io.elements import SYMBOLS, atomic_number
from .resolve import DEFAULT_BOND_SCALE, ResolvedBasis, resolve

__all__ = [
    "ANY_ELEMENT",
    "DEFAULT_BOND_SCALE",
    "KINDS",
    "ORBITAL_LETTERS",
    "Basis",
    "parse_basis",
]

#: Spectroscopic letters of angular momentum l = 0, 1, 2 ...
ORBITAL_LETTERS = "spdfghi"
#: Every kind of basis, in the order of the module docstring.
KINDS = ("atoms", "cartesian", "orbitals", "pi", "bonds", "bond_vectors", "vectors")
#: The orbital key standing for every element not named.
ANY_ELEMENT = "*"

ShellSpec = Mapping[Union[str, int], Union[str, Iterable[Union[str, int]]]]
_BOND_KINDS = ("bonds", "bond_vectors")


@dataclass(frozen=True, eq=False)
class Basis:
    """A basis on the atoms or bonds of a structure, independent of the structure.

    Frozen and hashable: equal specs are equal and hash alike (explicit pairs and vectors
    compare by value). Build one with the constructors :meth:`atoms`, :meth:`cartesian`,
    :meth:`pi`, :meth:`orbitals`, :meth:`bonds` (alias :meth:`bond_stretches`),
    :meth:`bond_vectors`, :meth:`vector_set`, with ``Basis(kind)``, or with
    :func:`parse_basis` on a string such as ``"orbitals:Fe=spd,H=s"``. ``str(basis)`` gives
    that string form back (for bases without explicit arrays).

    Attributes
    ----------
    kind : str
        One of :data:`KINDS`.
    shell_spec : tuple
        For orbitals: ``((Z or "*", (l, ...)), ...)``, sorted by atomic number, ``"*"`` last.
    pairs : numpy.ndarray or None
        For bond bases: explicit ``int64 (n_bonds, 2)`` atom pairs (read-only), or None to
        find the bonds from covalent radii with ``bond_scale``.
    bond_scale : float
        Bond criterion factor (bond bases without explicit pairs).
    vectors : numpy.ndarray or None
        For ``"vectors"``: ``float64 (n_atoms, m, 3)`` (read-only).
    elements : tuple
        For π: the atomic numbers allowed to carry a p orbital, sorted; ``()`` for the
        default (every element but hydrogen), ``("*",)`` for every element.

    Examples
    --------
    >>> Basis.orbitals({"Fe": "spd", "H": "s"}).shells
    {1: (0,), 26: (0, 1, 2)}
    >>> str(parse_basis("orbitals:H=s,Fe=spd"))
    'orbitals:H=s,Fe=spd'
    >>> parse_basis("bonds:scale=1.3") == Basis.bonds(scale=1.3)
    True
    >>> str(Basis.pi(["N", "C"]))
    'pi:C,N'
    """

    kind: str
    shell_spec: tuple = ()
    pairs: np.ndarray | None = None
    bond_scale: float = DEFAULT_BOND_SCALE
    vectors: np.ndarray | None = None
    elements: tuple = ()

    def __post_init__(self) -> None:
        if self.kind not in KINDS:
            raise BasisError(f"unknown basis '{self.kind}'; known: {', '.join(KINDS)}")
        if self.kind == "orbitals":
            spec = self.shell_spec
            shells = _normalise_shells(dict(spec) if not isinstance(spec, Mapping) else spec)
            object.__setattr__(self, "shell_spec", shells)
        elif self.shell_spec:
            raise BasisError(f"{self.kind}: takes no shells")
        if self.kind in _BOND_KINDS:
            scale = float(self.bond_scale)
            if not np.isfinite(scale) or scale <= 0:
                raise BasisError(f"{self.kind}: scale must be a positive number, got {scale}")
            object.__setattr__(self, "bond_scale", scale)
            if self.pairs is not None:
                object.__setattr__(self, "pairs", _check_pairs(self.pairs))
        elif self.pairs is not None:
            raise BasisError(f"{self.kind}: takes no bond pairs")
        if self.kind == "vectors":
            if self.vectors is None:
                raise BasisError("vectors: pass the array with Basis.vector_set(array)")
            object.__setattr__(self, "vectors", _check_vectors(self.vectors))
        elif self.vectors is not None:
            raise BasisError(f"{self.kind}: takes no vectors")
        if self.kind == "pi":
            object.__setattr__(self, "elements", _normalise_elements(self.elements))
        elif self.elements:
            raise BasisError(f"{self.kind}: takes no element list")
        # every field is final (arrays read-only): the identity is computed once
        object.__setattr__(self, "_identity", self._make_key())

    # ------------------------------------------------------------------ constructors
    @classmethod
    def atoms(cls) -> Basis:
        """One scalar per atom (the permutation representation)."""
        return cls("atoms")

    @classmethod
    def cartesian(cls) -> Basis:
        """Cartesian displacements x, y, z of every atom (3N functions)."""
        return cls("cartesian")

    @classmethod
    def pi(cls, elements: Any = ()) -> Basis:
        """One p orbital per π centre, perpendicular to the π system there.

        Parameters
        ----------
        elements : str or iterable, optional
            The elements that may carry it: symbols or atomic numbers (``["C", "N"]``,
            ``"C,N"``), or ``"*"`` for every element. By default every element but
            hydrogen. Which of those atoms are π centres: every one in a planar structure,
            the atoms of local π systems otherwise (:mod:`gammatrace.bases.resolve`).

        Raises
        ------
        BasisError
            For an unknown element.
        """
        return cls("pi", elements=elements)

    @classmethod
    def orbitals(cls, shells: ShellSpec) -> Basis:
        """Atomic orbitals in real spherical harmonics, per element.

        Parameters
        ----------
        shells : mapping
            Element symbol or atomic number (``"*"`` = every element not named) -> shells,
            as letters (``"spd"``, s … i for l = 0 … 6) or angular momenta (``[0, 1, 2]``).
            A shell twice (``"ssp"``) means two shells. Elements not named, without ``"*"``,
            carry no orbitals.

        Raises
        ------
        BasisError
            For an unknown element or angular momentum, or no shells at all.
        """
        return cls("orbitals", shell_spec=_normalise_shells(shells))

    @classmethod
    def bonds(cls, pairs: Any = None, scale: float = DEFAULT_BOND_SCALE) -> Basis:
        """One stretch per bond: explicit ``(n_bonds, 2)`` atom pairs, or found with ``scale``."""
        return cls("bonds", pairs=pairs, bond_scale=scale)

    @classmethod
    def bond_stretches(cls, bonds: Any = None, scale: float = DEFAULT_BOND_SCALE) -> Basis:
        """The same as :meth:`bonds`."""
        return cls.bonds(bonds, scale)

    @classmethod
    def bond_vectors(cls, pairs: Any = None, scale: float = DEFAULT_BOND_SCALE) -> Basis:
        """One vector along each bond, pointing from the first atom of a pair to the second;
        reversed by an operation, it changes sign."""
        return cls("bond_vectors", pairs=pairs, bond_scale=scale)

    @classmethod
    def vector_set(cls, vectors: Any) -> Basis:
        """The user's own 3-vectors: ``(n_atoms, 3)`` or ``(n_atoms, m, 3)``."""
        return cls("vectors", vectors=vectors)

    # ------------------------------------------------------------------ views
    @property
    def name(self) -> str:
        """The key of this basis in ``representations`` of the JSON output."""
        return self.kind

    @property
    def shells(self) -> dict | None:
        """For orbitals: atomic number (or ``"*"``) -> tuple of angular momenta; else None."""
        return dict(self.shell_spec) if self.kind == "orbitals" else None

    def resolve(
        self, structure: Any, *, center: Any = None, tol: float | None = None
    ) -> ResolvedBasis:
        """This basis on one structure; see :func:`gammatrace.bases.resolve.resolve`."""
        return resolve(self, structure, center=center, tol=tol)

    def _key(self) -> tuple:
        return self._identity

    def _make_key(self) -> tuple:
        pairs = None if self.pairs is None else (self.pairs.shape, self.pairs.tobytes())
        vectors = None if self.vectors is None else (self.vectors.shape, self.vectors.tobytes())
        scale = self.bond_scale if self.kind in _BOND_KINDS and self.pairs is None else None
        return (self.kind, self.shell_spec, scale, pairs, vectors, self.elements)

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Basis):
            return NotImplemented
        return self._key() == other._key()

    def __hash__(self) -> int:
        return hash(self._key())

    def __str__(self) -> str:
        if self.kind == "orbitals":
            items = ",".join(
                f"{SYMBOLS[k] if k != ANY_ELEMENT else k}="
                + "".join(ORBITAL_LETTERS[l] for l in ls)
                for k, ls in self.shell_spec
            )
            return f"orbitals:{items}"
        if self.kind in _BOND_KINDS:
            if self.pairs is not None:
                return f"{self.kind}:<{len(self.pairs)} pairs given>"
            if self.bond_scale != DEFAULT_BOND_SCALE:
                return f"{self.kind}:scale={self.bond_scale!r}"
        if self.kind == "vectors":
            return f"vectors:<{self.vectors.shape[1]} per atom given>"
        if self.kind == "pi" and self.elements:
            return "pi:" + ",".join(SYMBOLS[z] if z != ANY_ELEMENT else z for z in self.elements)
        return self.kind


def _normalise_shells(shells: Any) -> tuple:
    """``{"Fe": "spd", "*": [0]}`` -> ``((26, (0, 1, 2)), ("*", (0,)))``."""
    if not isinstance(shells, Mapping):
        raise BasisError(
            f"orbitals: expected a mapping element -> shells, got {type(shells).__name__}"
        )
    if not shells:
        raise BasisError("orbitals: name the shells, e.g. 'orbitals:Fe=spd,H=s'")
    out: dict = {}
    for key, spec in shells.items():
        z = _element_key(key)
        if z in out:
            raise BasisError(f"orbitals: element '{key}' is named twice")
        out[z] = _angular_momenta(key, spec)
    return tuple(sorted(out.items(), key=lambda kv: (kv[0] == ANY_ELEMENT, str(kv[0]).zfill(3))))


def _normalise_elements(elements: Any) -> tuple:
    """``"N, C"`` or ``["N", 6]`` -> ``(6, 7)``; ``"*"`` -> ``("*",)``; ``()`` stays."""
    if isinstance(elements, str):
        elements = [e for e in elements.split(",") if e.strip()] if elements.strip() else []
    items = list(elements)
    keys = [_element_key(e, "pi") for e in items]
    if ANY_ELEMENT in keys:
        if len(keys) > 1:
            raise BasisError("pi: '*' already means every element; name no other")
        return (ANY_ELEMENT,)
    if len(set(keys)) != len(keys):
        raise BasisError("pi: an element is named twice")
    return tuple(sorted(keys))


def _element_key(key: Any, kind: str = "orbitals") -> Any:
    if isinstance(key, str) and key.strip() == ANY_ELEMENT:
        return ANY_ELEMENT
    if isinstance(key, str) and key.strip().isdigit():
        key = int(key)
    if isinstance(key, (int, np.integer)) and not isinstance(key, bool):
        z = int(key)
        if not 0 < z < len(SYMBOLS):
            raise BasisError(f"{kind}: atomic number {z} is not an element")
        return z
    if isinstance(key, str):
        try:
            return atomic_number(key.strip())
        except KeyError:
            raise BasisError(f"{kind}: unknown element '{key}'") from None
    raise BasisError(f"{kind}: expected an element symbol or number, got {key!r}")


def _angular_momenta(key: Any, spec: Any) -> tuple:
    if isinstance(spec, str):
        spec = spec.strip().lower()
        bad = [c for c in spec if c not in ORBITAL_LETTERS]
        if bad or not spec:
            raise BasisError(
                f"orbitals: '{key}={spec}' names unknown angular momentum "
                f"'{''.join(bad) or spec}'; use letters of '{ORBITAL_LETTERS}'"
            )
        return tuple(ORBITAL_LETTERS.index(c) for c in spec)
    ls = []
    for item in spec:
        if isinstance(item, str):
            ls.extend(_angular_momenta(key, item))
            continue
        l = int(item)
        if not 0 <= l < len(ORBITAL_LETTERS):
            raise BasisError(
                f"orbitals: angular momentum {item!r} of '{key}' outside "
                f"0..{len(ORBITAL_LETTERS) - 1}"
            )
        ls.append(l)
    if not ls:
        raise BasisError(f"orbitals: no shells given for '{key}'")
    return tuple(ls)


def _check_pairs(pairs: Any) -> np.ndarray:
    arr = np.asarray(pairs)
    if arr.size == 0:
        arr = np.zeros((0, 2), dtype=np.int64)
    if arr.ndim != 2 or arr.shape[1] != 2 or arr.dtype.kind not in "iu":
        raise BasisError(
            f"pairs: expected an integer array of shape (n_bonds, 2), received "
            f"{arr.dtype} {arr.shape}"
        )
    arr = np.array(arr, dtype=np.int64)  # a private copy: the basis is frozen
    if np.any(arr[:, 0] == arr[:, 1]):
        raise BasisError(
            f"pairs: bond {int(np.argmax(arr[:, 0] == arr[:, 1]))} joins an atom to itself"
        )
    key = np.sort(arr, axis=1)
    if np.unique(key, axis=0).shape[0] != key.shape[0]:
        raise BasisError("pairs: a bond is listed twice")
    arr.setflags(write=False)
    return arr


def _check_vectors(vectors: Any) -> np.ndarray:
    arr = np.array(vectors, dtype=np.float64)  # a private copy: the basis is frozen
    if arr.ndim == 2:
        arr = arr[:, None, :]
    if arr.ndim != 3 or arr.shape[2] != 3 or arr.shape[1] < 1:
        raise BasisError(
            f"vectors: expected shape (n_atoms, 3) or (n_atoms, m, 3), got {arr.shape}"
        )
    if not np.all(np.isfinite(arr)):
        raise BasisError("vectors: contains NaN or infinite values")
    arr = np.ascontiguousarray(arr)
    arr.setflags(write=False)
    return arr


def parse_basis(spec: Any) -> Basis:
    """A :class:`Basis` from a spec: a Basis, a resolved basis, a mapping of orbital shells,
    or a string with options (the ``--basis NAME:options`` form of the command line).

    Examples: ``"cartesian"``, ``"pi"``, ``"pi:C,N"``, ``"bonds"``, ``"bonds:scale=1.3"``,
    ``"bond_vectors"``, ``"orbitals:Fe=spd,H=s"``, ``"orbitals:*=spd"``.

    Raises
    ------
    BasisError
        For an unknown kind or option.

    Examples
    --------
    >>> parse_basis("orbitals:Fe=spd,*=s").shells
    {26: (0, 1, 2), '*': (0,)}
    """
    if isinstance(spec, Basis):
        return spec
    if isinstance(spec, ResolvedBasis):
        return spec.basis
    if isinstance(spec, Mapping):
        return Basis.orbitals(spec)
    if not isinstance(spec, str):
        raise BasisError(f"basis: expected a Basis or a string, got {type(spec).__name__}")
    known = _PARSED.get(spec)
    if known is None:
        known = _parse_text(spec)
        if len(_PARSED) < _MAX_PARSED:
            _PARSED[spec] = known
    return known


#: Spec strings already parsed -> their (immutable) Basis; bounded.
_PARSED: dict[str, Basis] = {}
_MAX_PARSED = 1024


def _parse_text(spec: str) -> Basis:
    """The Basis a spec string names (see :func:`parse_basis`)."""
    kind, _, opts = spec.strip().partition(":")
    kind = kind.strip().lower().replace("-", "_")
    if kind == "orbitals":
        if not opts:
            raise BasisError("orbitals: name the shells, e.g. 'orbitals:Fe=spd,H=s'")
        shells: dict[str, str] = {}
        for item in opts.split(","):
            el, eq, letters = item.partition("=")
            if not eq:
                el, letters = ANY_ELEMENT, el
            if el.strip() in shells:
                raise BasisError(f"orbitals: element '{el.strip()}' is named twice")
            shells[el.strip()] = letters.strip().lower()
        return Basis.orbitals(shells)
    if kind in _BOND_KINDS:
        scale = DEFAULT_BOND_SCALE
        if opts:
            key, _, val = opts.partition("=")
            if key.strip() != "scale":
                raise BasisError(f"{kind}: unknown option '{opts}'; expected scale=FACTOR")
            try:
                scale = float(val)
            except ValueError:
                raise BasisError(f"{kind}: scale '{val}' is not a number") from None
        return Basis(kind, bond_scale=scale)
    if kind == "pi":
        if ":" in opts or "=" in opts:
            raise BasisError(f"pi: unknown option '{opts}'; name elements, e.g. 'pi:C,N'")
        return Basis.pi(opts)
    if opts:
        raise BasisError(f"{kind}: takes no options, got '{opts}'")
    if kind == "vectors":
        raise BasisError("vectors: pass the array from Python with Basis.vector_set(array)")
    return Basis(kind)
