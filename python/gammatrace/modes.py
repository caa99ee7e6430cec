"""Normal modes in the symmetry-adapted basis: labels, degenerate sets, purity, frequencies.

How a Hessian is analysed
-------------------------
1. The Hessian is checked (:func:`gammatrace.io.hessian.validate_hessian`) and mass-weighted.
2. Translations and rotations span a subspace known exactly from the geometry (rigid motions
   about the centre; in mass-weighted coordinates when masses are given). It is split by
   irrep and taken out, never found by an eigenvalue cut: what is left is the internal space,
   whose irreps are Γ_vib.
3. In the symmetry-adapted basis X (rows grouped by irrep, copy, partner; see
   :mod:`gammatrace.bases.matrices`) the symmetric part of the Hessian is, irrep by irrep, one
   m x m matrix repeated for every partner (real irreps), or one m x m Hermitian matrix
   A + iC (a complex-conjugate pair shown as one real E). Its eigenvalues are the degenerate
   sets with their labels: a set is d partners of one irrep by construction, so no tolerance
   decides what is degenerate, and the sets per irrep are exactly Γ_vib.
4. The Hessian as given (translations and rotations projected out) is diagonalised as well;
   each of its eigenvectors is matched to one mode of step 3 (largest total overlap), giving
   each mode its frequency from the Hessian as given (so a noise-split pair shows its split)
   and its purity: the fraction of that eigenvector inside its irrep's isotypic component.
5. The symmetry breaking ‖H − P(H)‖/‖H‖, with P(H) = (1/h) Σ_R Γ(R) H Γ(R)ᵀ the group average,
   is measured on the Hessian as given; above ``symmetry_tolerance`` (default 1e-3) a
   :class:`~gammatrace.errors.SymmetryBreakingWarning` is issued.

Units
-----
A Cartesian Hessian is in mdyn/Å by default; :data:`HESSIAN_UNITS` lists the others
(hartree/bohr², eV/Å², kcal/mol/Å², kJ/mol/Å², N/m), converted with CODATA 2018 constants.
Masses are in unified atomic mass units (u); a mass-weighted Hessian is in that unit per u.
Frequencies are wavenumbers in cm⁻¹: ν̃ = sqrt(λ) / (2πc) (common practice), i.e.
1302.79 cm⁻¹ x sqrt(λ / (mdyn Å⁻¹ u⁻¹)); a negative eigenvalue gives a negative number, an
imaginary frequency (shown as ``123i`` by the command line).

Mode vectors are rows, (n_modes, 3N), atom-major x, y, z in the input frame.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np

from .errors import InputError, SymmetryBreakingWarning, SymmetryError
from .group.symmetry import SymmetryData
from .io.hessian import HessianFile, read_hessian, validate_hessian
from .text import plural

__all__ = [
    "DEFAULT_UNIT",
    "HESSIAN_UNITS",
    "SYMMETRY_TOLERANCE",
    "HessianBlocks",
    "HessianFile",
    "ModeLabels",
    "ModeSet",
    "block_diagonalize",
    "frequencies_from_eigenvalues",
    "hessian_unit",
    "label_modes",
    "read_hessian",
    "symmetry_breaking",
]

# CODATA 2018 (Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)): E_h, a0, e, N_A, u, c;
# the thermochemical calorie is 4.184 J by definition.
_HARTREE = 4.3597447222071e-18  # J
_BOHR = 0.529177210903e-10  # m
_EV = 1.602176634e-19  # J
_AVOGADRO = 6.02214076e23  # mol⁻¹
_AMU = 1.66053906660e-27  # kg
_C_CM = 2.99792458e10  # cm/s
_MDYN_PER_ANGSTROM = 100.0  # N/m

#: Force-constant units: name -> value of one unit in mdyn/Å.
HESSIAN_UNITS = {
    "mdyn/angstrom": 1.0,
    "hartree/bohr2": _HARTREE / _BOHR**2 / _MDYN_PER_ANGSTROM,
    "eV/angstrom2": _EV / 1e-20 / _MDYN_PER_ANGSTROM,
    "kcal/mol/angstrom2": 4184.0 / _AVOGADRO / 1e-20 / _MDYN_PER_ANGSTROM,
    "kJ/mol/angstrom2": 1000.0 / _AVOGADRO / 1e-20 / _MDYN_PER_ANGSTROM,
    "N/m": 1.0 / _MDYN_PER_ANGSTROM,
}
#: The unit a Hessian is taken to be in when none is given.
DEFAULT_UNIT = "mdyn/angstrom"
#: Relative symmetry breaking ‖H − P(H)‖/‖H‖ above which a warning is issued. Measured on
#: central second differences of the tests' analytic energies (SF6 Morse, Ar13 Lennard-Jones,
#: benzene and planar NH3 valence fields; 12 random orientations each, since the truncation
#: error depends on the Cartesian axes): at most 1.2e-5 for steps of 0.002 Å, 6e-5 for
#: 0.005 Å, 4e-4 for 0.01 Å, 1.3e-3 for 0.02 Å (growing as the step squared). The threshold
#: lets the usual steps (≤ 0.01 Å) pass and flags anything larger than their noise.
SYMMETRY_TOLERANCE = 1e-3

# sqrt(100 N/m / u) / (2π c), in cm⁻¹.
_CM1 = np.sqrt(_MDYN_PER_ANGSTROM / _AMU) / (2.0 * np.pi * _C_CM)

_ALIASES = {
    "mdyn/a": "mdyn/angstrom",
    "mdyn/å": "mdyn/angstrom",
    "hartree/bohr^2": "hartree/bohr2",
    "hartree/bohr²": "hartree/bohr2",
    "eh/a0^2": "hartree/bohr2",
    "eh/bohr2": "hartree/bohr2",
    "ev/a2": "eV/angstrom2",
    "ev/å2": "eV/angstrom2",
    "ev/å²": "eV/angstrom2",
    "ev/angstrom^2": "eV/angstrom2",
    "kcal/mol/a2": "kcal/mol/angstrom2",
    "kcal/mol/å2": "kcal/mol/angstrom2",
    "kcal/mol/å²": "kcal/mol/angstrom2",
    "kj/mol/a2": "kJ/mol/angstrom2",
    "kj/mol/å2": "kJ/mol/angstrom2",
    "kj/mol/å²": "kJ/mol/angstrom2",
    "n/m": "N/m",
}


def hessian_unit(unit: str) -> str:
    """The canonical name of a force-constant unit (``"eV/Å²"`` -> ``"eV/angstrom2"``).

    Raises
    ------
    InputError
        For an unknown unit (the message lists the known ones).

    Examples
    --------
    >>> hessian_unit("kJ/mol/Å²")
    'kJ/mol/angstrom2'
    """
    if unit in HESSIAN_UNITS:
        return unit
    key = str(unit).strip().lower()
    for name in HESSIAN_UNITS:
        if name.lower() == key:
            return name
    if key in _ALIASES:
        return _ALIASES[key]
    raise InputError(f"unit: expected one of {', '.join(HESSIAN_UNITS)}, received {unit!r}")


def frequencies_from_eigenvalues(eigenvalues, unit: str = DEFAULT_UNIT) -> np.ndarray:
    """Wavenumbers (cm⁻¹) from eigenvalues of a mass-weighted Hessian (unit per u).

    Parameters
    ----------
    eigenvalues : array_like
        Eigenvalues in ``unit`` / u.
    unit : str
        One of :data:`HESSIAN_UNITS` (or an alias accepted by :func:`hessian_unit`).

    Returns
    -------
    ndarray
        sign(λ) * 1302.79 * sqrt(|λ| in mdyn Å⁻¹ u⁻¹): negative for an imaginary frequency.

    Examples
    --------
    >>> round(float(frequencies_from_eigenvalues([1.0])[0]), 2)
    1302.79
    """
    factor = HESSIAN_UNITS[hessian_unit(unit)]
    lam = np.asarray(eigenvalues, dtype=np.float64) * factor
    return np.sign(lam) * np.sqrt(np.abs(lam)) * _CM1


def _check_hessian(sym: SymmetryData, hessian) -> np.ndarray:
    if isinstance(hessian, HessianFile):
        return _check_hessian(sym, hessian.matrix)
    return validate_hessian(hessian, sym.n_atoms)[0]


def _check_masses(sym: SymmetryData, masses) -> np.ndarray:
    arr = np.asarray(masses, dtype=np.float64)
    if arr.shape != (sym.n_atoms,):
        raise InputError(f"masses: expected shape ({sym.n_atoms},), received {arr.shape}")
    if not np.all(np.isfinite(arr)) or np.any(arr <= 0):
        raise InputError("masses: expected positive finite values")
    bad = np.abs(arr[sym.permutations] - arr[None, :]) > 1e-9 * arr.max()
    if np.any(bad):
        k, i = np.argwhere(bad)[0]
        raise SymmetryError(
            f"masses: operation {k} maps atom {i} onto atom "
            f"{sym.permutations[k, i]} of a different mass"
        )
    return arr


# ------------------------------------------------------------------------- irrep spaces
@dataclass(frozen=True)
class _Space:
    """Orthonormal functions of one irrep: ``stack[p, c]`` is partner p of copy c (rows).

    For a real irrep every matrix commuting with the group is B ⊗ I on such a stack; for a
    complex-conjugate pair (``pair``, d = 2, reference matrices rotations) it is A ⊗ I + C ⊗ J
    with J = [[0, −1], [1, 0]], i.e. the Hermitian m x m matrix A + iC.

    Every space is a combination of the copies of one irrep in the Cartesian symmetry-adapted
    basis X: ``idx[p, c]`` is the row of X holding partner p of copy c there, and ``coeff``
    (real, or complex for a pair) says which combinations of those copies this space holds.
    """

    irrep: int
    label: str
    pair: bool
    stack: np.ndarray  # (d, m, n)
    idx: np.ndarray  # (d, m_X): rows of X
    coeff: np.ndarray  # (m_X, m)

    @property
    def dim(self) -> int:
        return self.stack.shape[0]

    @property
    def copies(self) -> int:
        return self.stack.shape[1]

    def rows(self) -> np.ndarray:
        """All functions, (d * m, n), partner-major."""
        d, m, n = self.stack.shape
        return self.stack.reshape(d * m, n)

    def x_form(self, adapted: np.ndarray) -> np.ndarray:
        """The Hermitian form of the group-averaged matrix on all copies of X, from the matrix
        written in the basis X (``adapted = X H Xᵀ``)."""
        idx = self.idx
        if self.pair:
            g00 = adapted[np.ix_(idx[0], idx[0])]
            g11 = adapted[np.ix_(idx[1], idx[1])]
            g10 = adapted[np.ix_(idx[1], idx[0])]
            g01 = adapted[np.ix_(idx[0], idx[1])]
            f = 0.5 * (g00 + g11) + 0.5j * (g10 - g01)
        else:
            f = sum(adapted[np.ix_(i, i)] for i in idx) / self.dim
        return 0.5 * (f + f.conj().T)

    def form(self, adapted: np.ndarray) -> np.ndarray:
        """The m x m Hermitian matrix of the group-averaged H on this space's copies."""
        c = self.coeff
        f = c.conj().T @ self.x_form(adapted) @ c
        return 0.5 * (f + f.conj().T)

    def low_rank_form(self, e: np.ndarray) -> np.ndarray:
        """:meth:`form` of the projector eᵀe (rows of ``e`` orthonormal), without building it."""
        u = [p @ e.T for p in self.stack]
        if self.pair:
            f = 0.5 * (u[0] @ u[0].T + u[1] @ u[1].T) + 0.5j * (u[1] @ u[0].T - u[0] @ u[1].T)
        else:
            f = sum(x @ x.T for x in u) / self.dim
        return 0.5 * (f + f.conj().T)

    def subtract_symmetric(self, resid: np.ndarray, form: np.ndarray) -> None:
        """Remove from ``resid`` (a matrix in the basis X) the part ``form`` stands for."""
        idx = self.idx
        if self.pair:
            a, c = form.real, form.imag
            resid[np.ix_(idx[0], idx[0])] -= a
            resid[np.ix_(idx[1], idx[1])] -= a
            resid[np.ix_(idx[1], idx[0])] -= c
            resid[np.ix_(idx[0], idx[1])] += c
        else:
            for i in idx:
                resid[np.ix_(i, i)] -= form.real

    def combine(self, coeff: np.ndarray) -> _Space:
        """New copies: copy r = Σ_c coeff[c, r] · copy c (coeff real, or complex for a pair)."""
        s = self.stack
        if self.pair:
            re, im = coeff.real.T, coeff.imag.T
            new = np.stack([re @ s[0] + im @ s[1], -im @ s[0] + re @ s[1]])
            total = self.coeff @ coeff
        else:
            new = np.einsum("cr,pcn->prn", coeff.real, s)
            total = self.coeff @ coeff.real
        return _Space(self.irrep, self.label, self.pair, new, self.idx, total)


@dataclass(frozen=True)
class _Adapted:
    """The Cartesian symmetry-adapted basis: X (sparse), one :class:`_Space` per irrep that
    occurs, and the table's irrep labels in order."""

    matrix: object
    spaces: list
    labels: tuple

    def transform(self, h: np.ndarray) -> np.ndarray:
        """X H Xᵀ for a symmetric H (X sparse: nnz(X) x 3N work per product)."""
        x = self.matrix
        xh = np.asarray(x @ h)
        return np.asarray(x @ xh.T).T


def _adapted(sym: SymmetryData) -> _Adapted:
    from .bases.matrices import symmetry_adapted_basis  # scipy loads on first use only

    sab = symmetry_adapted_basis(sym, "cartesian")
    xs = sab.matrix.tocsr()
    out = []
    for i, label in enumerate(sab.irreps):
        sel = np.nonzero(sab.row_irrep == i)[0]
        if sel.size == 0:
            continue
        d = int(sab.dims[i])
        m = sel.size // d
        idx = np.zeros((d, m), dtype=np.int64)
        idx[sab.row_partner[sel], sab.row_copy[sel]] = sel
        stack = xs[idx.ravel()].toarray().reshape(d, m, xs.shape[1])
        mats = sab.irreducible_matrices[label]
        chars = np.trace(mats, axis1=1, axis2=2)
        pair = bool(round(float(chars @ chars) / len(chars)) == 2)
        if pair and (d != 2 or np.abs(np.linalg.det(mats) - 1.0).max() > 1e-8):
            raise SymmetryError(
                f"{label}: a complex-conjugate pair whose reference matrices are not "
                "2 x 2 rotations"
            )
        coeff = np.eye(m, dtype=np.complex128 if pair else np.float64)
        out.append(_Space(i, label, pair, stack, idx, coeff))
    return _Adapted(xs, out, tuple(sab.irreps))


def _external_vectors(sym: SymmetryData, masses) -> tuple[np.ndarray, np.ndarray]:
    """Orthonormal translations (3, 3N) and rotations (r, 3N) in the Hessian's metric.

    Rotations are rigid rotations about the centre, made orthogonal to the translations (so,
    with masses, rotations about the centre of mass); r = 3, 2 for a linear group (the
    rotation about the axis moves no atom), 0 for a single atom.
    """
    r = sym.positions - sym.center
    n = sym.n_atoms
    w = np.ones(3 * n) if masses is None else np.sqrt(np.repeat(masses, 3))
    trans = np.zeros((3, n, 3))
    rots = np.zeros((3, n, 3))
    for a in range(3):
        trans[a, :, a] = 1.0
        axis = np.zeros(3)
        axis[a] = 1.0
        rots[a] = np.cross(axis, r)
    t = trans.reshape(3, -1) * w
    t = t / np.linalg.norm(t, axis=1)[:, None]
    rr = rots.reshape(3, -1) * w
    rr = rr - (rr @ t.T) @ t
    table = sym.table
    if getattr(table, "is_spherical", False):
        free = 0
    elif getattr(table, "is_linear", False):
        free = 2
    else:
        free = 3
    import scipy.linalg  # scipy loads on first use only (start-up of the command line)

    u, _, _ = scipy.linalg.svd(rr.T, full_matrices=False)
    return t, u[:, :free].T


@dataclass(frozen=True)
class _Split:
    """The Cartesian space of one irrep split into translations, rotations and internal."""

    space: _Space
    trans: _Space
    rot: _Space
    internal: _Space


def _split(space: _Space, t: np.ndarray, r: np.ndarray) -> _Split:
    """Copies of one irrep inside the translations, the rotations and the rest.

    The projector onto the translations (rotations) commutes with the group, so its form on
    the copies is a projector too; its trace is the number of copies it holds (an integer, the
    multiplicity of the irrep in Γ_trans or Γ_rot), its leading eigenvectors are those copies.
    """
    ft = space.low_rank_form(t)
    fr = space.low_rank_form(r)
    kt = round(float(np.trace(ft).real))
    kr = round(float(np.trace(fr).real))
    m = space.copies
    _, vt = np.linalg.eigh(ft)
    _, vr = np.linalg.eigh(fr)
    w, ve = np.linalg.eigh(ft + fr)
    k = kt + kr
    if k and (w[m - k] < 0.5 or (m > k and w[m - k - 1] > 0.5)):
        raise SymmetryError(
            f"{space.label}: translations and rotations do not split off the Cartesian "
            f"copies cleanly (projector eigenvalues {np.round(w, 6).tolist()})"
        )
    return _Split(
        space,
        space.combine(vt[:, m - kt :]),
        space.combine(vr[:, m - kr :]),
        space.combine(ve[:, : m - k]),
    )


def _decompose(sym: SymmetryData, masses):
    basis = _adapted(sym)
    t, r = _external_vectors(sym, masses)
    return basis, [_split(s, t, r) for s in basis.spaces]


def _breaking(basis: _Adapted, h: np.ndarray) -> float:
    """‖H − P(H)‖ / ‖H‖ with P the group average, in the symmetry-adapted basis."""
    norm = float(np.linalg.norm(h))
    if norm == 0.0:
        return 0.0
    resid = basis.transform(h)
    for s in basis.spaces:
        s.subtract_symmetric(resid, s.x_form(resid))
    return float(np.linalg.norm(resid)) / norm


def symmetry_breaking(sym: SymmetryData, hessian) -> float:
    """Relative size of the symmetry-breaking part of a Hessian, ‖H − P(H)‖ / ‖H‖.

    P(H) = (1/h) Σ_R Γ(R) H Γ(R)ᵀ is the group average (Frobenius norms); 0 for a Hessian of
    the structure's full symmetry.

    Parameters
    ----------
    sym : SymmetryData
    hessian : array_like, shape (3N, 3N)

    Returns
    -------
    float
    """
    h = _check_hessian(sym, hessian)
    return _breaking(_adapted(sym), h)


def _warn_if_broken(sym, eps, tolerance):
    if eps > tolerance:
        name = getattr(sym.table, "name", "point-group")
        warnings.warn(
            f"the Hessian breaks the {name} symmetry: ‖H − P(H)‖/‖H‖ = {eps:.3g} > "
            f"{tolerance:g} (P = average over the group); modes are labelled from its "
            "symmetric part",
            SymmetryBreakingWarning,
            stacklevel=3,
        )


def _weighted(sym, hessian, masses, mass_weighted, unit):
    hessian_unit(unit)
    h = _check_hessian(sym, hessian)
    mvec = None if masses is None else _check_masses(sym, masses)
    if mass_weighted and mvec is None:
        raise InputError(
            "masses: a mass-weighted Hessian needs the masses, to place the translations "
            "and rotations"
        )
    hw = h
    if mvec is not None and not mass_weighted:
        inv = 1.0 / np.sqrt(np.repeat(mvec, 3))
        hw = h * inv[:, None] * inv[None, :]
    return h, hw, mvec


# ------------------------------------------------------------------------- block diagonalisation
@dataclass(frozen=True)
class HessianBlocks:
    """Eigenvalues of a Hessian found block by block in the symmetry-adapted basis.

    Attributes
    ----------
    eigenvalues : dict
        Irrep label -> (m_i,) eigenvalues of the symmetric part, one per degenerate set of d_i
        modes, ascending (translations and rotations included).
    frequencies : dict or None
        Irrep label -> (m_i,) wavenumbers in cm⁻¹ (None without masses or mass weighting).
    modes : dict
        Irrep label -> (m_i, d_i, 3N) mode vectors (rows, in the coordinates of the
        diagonalised matrix: mass-weighted if masses were used).
    max_splitting : float
        Largest spread, within one degenerate set, of the eigenvalues of the Hessian as given
        restricted to the set (first-order splitting; 0 for an exactly symmetric H).
    symmetry_breaking : float
        See :func:`symmetry_breaking`.
    """

    eigenvalues: dict
    frequencies: dict | None
    modes: dict
    max_splitting: float
    symmetry_breaking: float

    def all_eigenvalues(self) -> np.ndarray:
        """Every eigenvalue with its degeneracy, sorted (comparable with a full diagonalisation)."""
        vals = [
            np.repeat(v, m.shape[1]) for v, m in zip(self.eigenvalues.values(), self.modes.values())
        ]
        return np.sort(np.concatenate(vals)) if vals else np.zeros(0)


def _set_vectors(space: _Space, coeff: np.ndarray) -> np.ndarray:
    """(r, d, n): the d partners of each of the r copy combinations (columns of coeff)."""
    return np.transpose(space.combine(coeff).stack, (1, 0, 2))


def block_diagonalize(
    sym: SymmetryData,
    hessian,
    masses=None,
    mass_weighted: bool = False,
    unit: str = DEFAULT_UNIT,
    symmetry_tolerance: float = SYMMETRY_TOLERANCE,
) -> HessianBlocks:
    """Diagonalise the symmetric part of a Cartesian Hessian irrep by irrep.

    Parameters
    ----------
    sym : SymmetryData
    hessian : array_like, shape (3N, 3N), or HessianFile
        Cartesian Hessian in ``unit`` (mass-weighted, per u, if ``mass_weighted``).
    masses : array_like, shape (N,), optional
        Atomic masses in u; the Hessian is mass-weighted with them unless ``mass_weighted``.
    mass_weighted : bool
        True if ``hessian`` is already mass-weighted.
    unit : str
        Force-constant unit, one of :data:`HESSIAN_UNITS`.
    symmetry_tolerance : float
        Relative symmetry breaking above which a :class:`SymmetryBreakingWarning` is issued.

    Returns
    -------
    HessianBlocks

    Raises
    ------
    InputError
        For a Hessian of the wrong shape, not symmetric or with NaN; bad masses.
    """
    unit = hessian_unit(unit)
    h = _check_hessian(sym, hessian)
    mvec = None if masses is None else _check_masses(sym, masses)
    hw = h
    if mvec is not None and not mass_weighted:
        inv = 1.0 / np.sqrt(np.repeat(mvec, 3))
        hw = h * inv[:, None] * inv[None, :]
    basis = _adapted(sym)
    eps = _breaking(basis, h)
    _warn_if_broken(sym, eps, symmetry_tolerance)
    has_freq = mvec is not None or mass_weighted
    evals, freqs, modes = {}, {}, {}
    split = 0.0
    adapted = basis.transform(hw)
    for s in basis.spaces:
        w, v = np.linalg.eigh(s.form(adapted))
        vecs = _set_vectors(s, v)
        evals[s.label] = w
        modes[s.label] = vecs
        for k in range(len(w)):
            local = np.linalg.eigvalsh(vecs[k] @ hw @ vecs[k].T)
            split = max(split, float(local[-1] - local[0]))
        if has_freq:
            freqs[s.label] = frequencies_from_eigenvalues(w, unit)
    return HessianBlocks(evals, freqs if has_freq else None, modes, split, eps)


# ------------------------------------------------------------------------- labels
@dataclass(frozen=True)
class ModeSet:
    """A set of degenerate modes carrying one irrep.

    Attributes
    ----------
    irrep : str
    modes : tuple of int
        Indices into the mode list.
    value : float or None
        Eigenvalue of the set (symmetric part of the Hessian), or its frequency when the
        modes came with frequencies only; None for bare mode vectors.
    purity : float
        Smallest purity among its modes.
    frequency : float or None
        Wavenumber of the set in cm⁻¹ (negative: imaginary), from ``value``.
    kind : str
        ``"vibration"``, ``"translation"`` or ``"rotation"``.
    splitting : float
        Spread of its modes' frequencies (or eigenvalues without masses) in the Hessian as
        given: 0 when the Hessian has the full symmetry.
    """

    irrep: str
    modes: tuple
    value: float | None
    purity: float
    frequency: float | None = None
    kind: str = "vibration"
    splitting: float = 0.0


@dataclass(frozen=True)
class ModeLabels:
    """Irrep labels of normal modes.

    From a Hessian the modes are the vibrations, by ascending eigenvalue (imaginary ones
    first), then the translations and the rotations (projected out, see the module notes).

    Attributes
    ----------
    irreps : list of str
        Irrep of each mode.
    purity : ndarray, shape (n_modes,)
        Fraction of each mode's squared norm inside its irrep's isotypic component (from a
        Hessian: of the eigenvector of the Hessian as given matched to the mode; 1 for the
        translations and rotations, which are exact).
    degenerate_set : ndarray, shape (n_modes,)
        Index into ``sets`` for each mode.
    sets : list of ModeSet
    eigenvalues : ndarray or None
        Hessian eigenvalue of each mode (of the Hessian as given, translations and rotations
        projected out; for those the eigenvalues of the Hessian within their span).
    frequencies : ndarray or None
        Wavenumbers in cm⁻¹ (given, or from a mass-weighted Hessian); negative = imaginary.
    external : ndarray of bool
        True for translations and rotations (from mode vectors: > 50 % of the norm in their
        span).
    vectors : ndarray, shape (n_modes, 3N)
        Mode vectors, unit length; each of one irrep.
    symmetry_breaking : float or None
        ‖H − P(H)‖/‖H‖ of the Hessian (None for mode vectors).
    kinds : list of str
        ``"vibration"``, ``"translation"`` or ``"rotation"`` for each mode.
    irrep_order : tuple of str
        The irreps of the character table in its order.
    symmetry_tolerance : float or None
        The threshold ``symmetry_breaking`` was compared with.
    """

    irreps: list
    purity: np.ndarray
    degenerate_set: np.ndarray
    sets: list
    eigenvalues: np.ndarray | None
    frequencies: np.ndarray | None
    external: np.ndarray
    vectors: np.ndarray
    symmetry_breaking: float | None
    kinds: list | None = None
    irrep_order: tuple = ()
    symmetry_tolerance: float | None = None

    def _count(self, keep) -> dict:
        out = {}
        for s in self.sets:
            if keep(s):
                out[s.irrep] = out.get(s.irrep, 0) + 1
        order = {lab: k for k, lab in enumerate(self.irrep_order)}
        return dict(sorted(out.items(), key=lambda kv: order.get(kv[0], len(order))))

    def counts(self, vibrations_only: bool = True) -> dict:
        """Number of degenerate sets per irrep in table order (Γ_vib = 2A1 + B2 counts).

        Parameters
        ----------
        vibrations_only : bool
            Leave out translations and rotations.
        """
        if not vibrations_only:
            return self._count(lambda s: True)
        return self._count(lambda s: s.kind == "vibration" and not self.external[s.modes[0]])

    @property
    def gamma_trans(self) -> dict:
        """Γ_trans: irreps of the translations (table order)."""
        return self._count(lambda s: s.kind == "translation")

    @property
    def gamma_rot(self) -> dict:
        """Γ_rot: irreps of the rotations (table order)."""
        return self._count(lambda s: s.kind == "rotation")

    @property
    def imaginary(self) -> np.ndarray:
        """True for modes with a negative eigenvalue (an imaginary frequency)."""
        vals = self.eigenvalues if self.eigenvalues is not None else self.frequencies
        if vals is None:
            return np.zeros(len(self.irreps), dtype=bool)
        return np.asarray(vals) < 0


def _label_hessian(sym, h, hw, mvec, unit, tolerance, mass_weighted):
    basis, splits = _decompose(sym, None if mvec is None else mvec)
    labels = basis.labels
    eps = _breaking(basis, h)
    _warn_if_broken(sym, eps, tolerance)
    has_freq = mvec is not None or mass_weighted
    adapted = basis.transform(hw)

    # symmetric part, irrep by irrep: (value, table index, irrep, kind, (d, n) partners)
    found = []
    for sp in splits:
        s = sp.internal
        if s.copies:
            w, v = np.linalg.eigh(s.form(adapted))
            for val, vecs in zip(w, _set_vectors(s, v)):
                found.append((float(val), s.irrep, s.label, "vibration", vecs))
    found.sort(key=lambda item: (item[0], item[1]))
    external = []
    for kind, attr in (("translation", "trans"), ("rotation", "rot")):
        part = []
        for sp in splits:
            s = getattr(sp, attr)
            if s.copies:
                w, v = np.linalg.eigh(s.form(adapted))
                for val, vecs in zip(w, _set_vectors(s, v)):
                    part.append((float(val), s.irrep, s.label, kind, vecs))
        external += sorted(part, key=lambda item: (item[1], item[0]))

    n3 = h.shape[0]
    n_vib = sum(item[4].shape[0] for item in found)
    vib_vectors = np.vstack([item[4] for item in found]) if found else np.zeros((0, n3))

    # the Hessian as given on the internal space: eigenvectors matched to the modes above
    internal_rows = [sp.internal.rows() for sp in splits if sp.internal.copies]
    raw_vals = np.zeros(n_vib)
    purity_vib = np.ones(n_vib)
    if n_vib:
        y = np.vstack(internal_rows)
        row_irrep = np.concatenate(
            [np.full(sp.internal.dim * sp.internal.copies, sp.space.irrep) for sp in splits]
        )
        mu, v = np.linalg.eigh(y @ hw @ y.T)
        overlap = (vib_vectors @ y.T @ v) ** 2
        from scipy.optimize import linear_sum_assignment  # loads on first use only

        rows, cols = linear_sum_assignment(-overlap)
        match = np.empty(n_vib, dtype=np.int64)
        match[rows] = cols
        raw_vals = mu[match]
        mode_irrep = np.concatenate([np.full(item[4].shape[0], item[1]) for item in found])
        weight = v**2
        purity_vib = np.array(
            [weight[row_irrep == mode_irrep[k], match[k]].sum() for k in range(n_vib)]
        )

    irreps, kinds, vectors, evals, purity, sets = [], [], [], [], [], []
    set_of = []
    pos = 0
    for item in found:
        val, _, label, kind, vecs = item
        members = list(range(pos, pos + vecs.shape[0]))
        sets.append((label, members, val, kind))
        for j, k in enumerate(members):
            irreps.append(label)
            kinds.append(kind)
            vectors.append(vecs[j])
            evals.append(raw_vals[k])
            purity.append(purity_vib[k])
            set_of.append(len(sets) - 1)
        pos += vecs.shape[0]
    for val, _, label, kind, vecs in external:
        members = list(range(pos, pos + vecs.shape[0]))
        local = np.linalg.eigvalsh(vecs @ hw @ vecs.T)
        sets.append((label, members, val, kind))
        for j in range(len(members)):
            irreps.append(label)
            kinds.append(kind)
            vectors.append(vecs[j])
            evals.append(local[j])
            purity.append(1.0)
            set_of.append(len(sets) - 1)
        pos += vecs.shape[0]
    evals = np.asarray(evals, dtype=np.float64)
    purity = np.asarray(purity, dtype=np.float64)
    freqs = frequencies_from_eigenvalues(evals, unit) if has_freq else None
    per_mode = freqs if has_freq else evals
    mode_sets = []
    for label, members, val, kind in sets:
        spread = float(np.ptp(per_mode[members])) if members else 0.0
        fset = float(frequencies_from_eigenvalues([val], unit)[0]) if has_freq else None
        mode_sets.append(
            ModeSet(
                label,
                tuple(members),
                val,
                float(purity[members].min()),
                fset,
                kind,
                spread,
            )
        )
    ext = np.array([k != "vibration" for k in kinds], dtype=bool)
    return ModeLabels(
        irreps,
        purity,
        np.asarray(set_of, dtype=np.int64),
        mode_sets,
        evals,
        freqs,
        ext,
        np.asarray(vectors).reshape(len(irreps), n3),
        eps,
        kinds,
        labels,
        tolerance,
    )


def _label_vectors(sym, vectors, freqs, mvec, mass_weighted):
    """Labels for given mode vectors: each mode's weights in the irreps' internal and
    external parts; when the modes fill a known space (all 3N, or the 3N − 6 vibrations) the
    labels are assigned so that every irrep gets exactly its number of modes."""
    basis, splits = _decompose(sym, mvec if mass_weighted else None)
    labels = basis.labels
    n_modes = vectors.shape[0]
    parts, part_irrep, part_kind, part_dim = [], [], [], []
    for sp in splits:
        for kind, s in (
            ("vibration", sp.internal),
            ("translation", sp.trans),
            ("rotation", sp.rot),
        ):
            if s.copies:
                parts.append(s.rows())
                part_irrep.append(sp.space.irrep)
                part_kind.append(kind)
                part_dim.append(s.dim * s.copies)
    weights = np.stack([((vectors @ p.T) ** 2).sum(axis=1) for p in parts], axis=1)
    part_dim = np.asarray(part_dim)
    is_vib = np.array([k == "vibration" for k in part_kind])
    n3 = 3 * sym.n_atoms
    n_vib = int(part_dim[is_vib].sum())
    if n_modes == n3:
        slots = part_dim
    elif n_modes == n_vib:
        slots = np.where(is_vib, part_dim, 0)
    else:
        slots = None
    if slots is not None:
        owner = np.repeat(np.arange(len(parts)), slots)
        from scipy.optimize import linear_sum_assignment  # loads on first use only

        rows, cols = linear_sum_assignment(-weights[:, owner])
        choice = np.empty(n_modes, dtype=np.int64)
        choice[rows] = owner[cols]
    else:
        choice = np.argmax(weights, axis=1)
    irrep_of = [labels[part_irrep[c]] for c in choice]
    # purity: the weight in the irrep's whole isotypic component
    iso = np.zeros((n_modes, len(labels)))
    for j, i in enumerate(part_irrep):
        iso[:, i] += weights[:, j]
    purity = iso[np.arange(n_modes), [part_irrep[c] for c in choice]]
    ext_weight = weights[:, ~is_vib].sum(axis=1) if (~is_vib).any() else np.zeros(n_modes)
    external = ext_weight > 0.5
    kinds = [part_kind[c] for c in choice]
    # sets: within one irrep and kind, by frequency (or input order), d modes at a time
    dims = {sp.space.label: sp.space.dim for sp in splits}
    sets, set_of = [], np.zeros(n_modes, dtype=np.int64)
    keys = sorted({(part_irrep[c], part_kind[c]) for c in choice})
    for i, kind in keys:
        label = labels[i]
        members = [k for k in range(n_modes) if part_irrep[choice[k]] == i and kinds[k] == kind]
        if freqs is not None:
            members.sort(key=lambda k: (freqs[k], k))
        d = dims[label]
        for start in range(0, len(members), d):
            grp = members[start : start + d]
            for k in grp:
                set_of[k] = len(sets)
            val = None if freqs is None else float(np.mean(freqs[grp]))
            spread = 0.0 if freqs is None else float(np.ptp(freqs[grp]))
            sets.append(
                ModeSet(label, tuple(grp), val, float(purity[grp].min()), val, kind, spread)
            )
    return ModeLabels(
        irrep_of,
        purity,
        set_of,
        sets,
        None,
        freqs,
        external,
        vectors,
        None,
        kinds,
        labels,
        None,
    )


def label_modes(
    sym: SymmetryData,
    hessian=None,
    masses=None,
    modes=None,
    mass_weighted: bool = False,
    frequencies=None,
    unit: str = DEFAULT_UNIT,
    symmetry_tolerance: float = SYMMETRY_TOLERANCE,
    degeneracy_tolerance: float | None = None,
) -> ModeLabels:
    """Label normal modes by irrep, group degenerate sets and report purities.

    Give either a Cartesian ``hessian`` (analysed as the module notes describe) or ``modes``.

    Parameters
    ----------
    sym : SymmetryData
    hessian : array_like, shape (3N, 3N), or HessianFile, optional
        In ``unit``; mass-weighted with ``masses`` unless ``mass_weighted``.
    masses : array_like, shape (N,), optional
        Atomic masses in u (needed for frequencies, and for a mass-weighted Hessian).
    modes : array_like, shape (n_modes, 3N), optional
        Mode vectors as rows (Cartesian or mass-weighted Cartesian).
    mass_weighted : bool
        True if ``hessian`` is already mass-weighted (or ``modes`` are mass-weighted vectors).
    frequencies : array_like, shape (n_modes,), optional
        Frequencies of ``modes`` (any unit): they order the modes of one irrep into sets.
    unit : str
        Force-constant unit of the Hessian, one of :data:`HESSIAN_UNITS` (default mdyn/Å).
    symmetry_tolerance : float
        Relative symmetry breaking ‖H − P(H)‖/‖H‖ above which a
        :class:`~gammatrace.errors.SymmetryBreakingWarning` is issued.
    degeneracy_tolerance : float, optional
        Deprecated, without effect: degenerate sets come from the symmetry (a warning says
        so when it is given).

    Returns
    -------
    ModeLabels

    Raises
    ------
    InputError
        For a bad Hessian (shape, asymmetry, NaN), mode vectors that do not match the
        structure, or neither/both of ``hessian`` and ``modes``.
    """
    if degeneracy_tolerance is not None:
        warnings.warn(
            "label_modes: degeneracy_tolerance has no effect and will be removed; degenerate "
            "sets come from the symmetry (the partners of one irrep), not from a tolerance",
            DeprecationWarning,
            stacklevel=2,
        )
    if (hessian is None) == (modes is None):
        raise InputError("label_modes: give exactly one of hessian= and modes=")
    n3 = 3 * sym.n_atoms
    if hessian is not None:
        unit = hessian_unit(unit)
        h, hw, mvec = _weighted(sym, hessian, masses, mass_weighted, unit)
        return _label_hessian(sym, h, hw, mvec, unit, symmetry_tolerance, mass_weighted)
    mvec = None if masses is None else _check_masses(sym, masses)
    if mass_weighted and mvec is None:
        raise InputError("masses: mass-weighted mode vectors need the masses")
    vectors = np.asarray(modes, dtype=np.float64)
    if vectors.ndim == 1:
        vectors = vectors[None, :]
    if vectors.ndim != 2 or vectors.shape[1] != n3:
        raise InputError(
            f"modes: expected shape (n_modes, {n3}) for {plural(sym.n_atoms, 'atom')}, "
            f"received {np.shape(modes)}"
        )
    if not np.all(np.isfinite(vectors)):
        raise InputError("modes: contains NaN or infinite entries")
    norms = np.linalg.norm(vectors, axis=1)
    if np.any(norms == 0):
        raise InputError(f"modes: mode {int(np.argmin(norms))} is the zero vector")
    vectors = vectors / norms[:, None]
    freqs = None
    if frequencies is not None:
        freqs = np.asarray(frequencies, dtype=np.float64)
        if freqs.shape != (vectors.shape[0],):
            raise InputError(
                f"frequencies: expected shape ({vectors.shape[0]},), received {freqs.shape}"
            )
    return _label_vectors(sym, vectors, freqs, mvec, mass_weighted)
