"""Normal modes in the symmetry-adapted basis: labels, purity, block-diagonal Hessians.

Units
-----
A Cartesian Hessian is in mdyn/Å by default (``unit="mdyn/angstrom"``; also accepted:
``"hartree/bohr2"`` and ``"eV/angstrom2"``), masses in unified atomic mass units (u). For a
mass-weighted Hessian the unit is that force-constant unit per u. Frequencies are wavenumbers in
cm⁻¹: ν̃ = sqrt(λ) / (2πc) (common practice), i.e. 1302.79 cm⁻¹ x sqrt(λ / (mdyn Å⁻¹ u⁻¹));
a negative eigenvalue gives a negative (imaginary) frequency.

Mode vectors are rows, (n_modes, 3N), atom-major x, y, z in the input frame, as the
symmetry-adapted basis of :mod:`gammatrace.basis_change` expects.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np
import scipy.linalg

from .bases.matrices import SymmetryData, representation_matrices, symmetry_adapted_basis
from .errors import InputError, SymmetryBreakingWarning, SymmetryError

__all__ = [
    "HESSIAN_UNITS",
    "HessianBlocks",
    "ModeLabels",
    "ModeSet",
    "block_diagonalize",
    "frequencies_from_eigenvalues",
    "label_modes",
    "symmetry_breaking",
]

# Force-constant units in mdyn/Å (1 mdyn/Å = 100 N/m). CODATA 2018: E_h = 4.3597447222071e-18 J,
# a0 = 0.529177210903e-10 m, e = 1.602176634e-19 C.
HESSIAN_UNITS = {
    "mdyn/angstrom": 1.0,
    "hartree/bohr2": 4.3597447222071e-18 / (0.529177210903e-10) ** 2 / 100.0,
    "eV/angstrom2": 1.602176634e-19 / 1e-20 / 100.0,
}
# sqrt(100 N/m / u) / (2π c), in cm⁻¹ (u = 1.66053906660e-27 kg, c = 2.99792458e10 cm/s).
_CM1 = np.sqrt(100.0 / 1.66053906660e-27) / (2.0 * np.pi * 2.99792458e10)


def frequencies_from_eigenvalues(eigenvalues, unit: str = "mdyn/angstrom") -> np.ndarray:
    """Wavenumbers (cm⁻¹) from eigenvalues of a mass-weighted Hessian (unit per u).

    Parameters
    ----------
    eigenvalues : array_like
        Eigenvalues in ``unit`` / u.
    unit : str
        One of :data:`HESSIAN_UNITS`.

    Returns
    -------
    ndarray
        sign(λ) * 1302.79 * sqrt(|λ| in mdyn Å⁻¹ u⁻¹).

    Examples
    --------
    >>> round(float(frequencies_from_eigenvalues([1.0])[0]), 2)
    1302.79
    """
    factor = _unit(unit)
    lam = np.asarray(eigenvalues, dtype=np.float64) * factor
    return np.sign(lam) * np.sqrt(np.abs(lam)) * _CM1


def _unit(unit):
    if unit not in HESSIAN_UNITS:
        raise InputError(f"unit: expected one of {sorted(HESSIAN_UNITS)}, received {unit!r}")
    return HESSIAN_UNITS[unit]


def _check_hessian(sym: SymmetryData, hessian) -> np.ndarray:
    n3 = 3 * sym.n_atoms
    arr = np.asarray(hessian, dtype=np.float64)
    if arr.shape != (n3, n3):
        raise InputError(
            f"hessian: expected shape ({n3}, {n3}) for {sym.n_atoms} atoms, received {arr.shape}"
        )
    if not np.all(np.isfinite(arr)):
        raise InputError("hessian: contains NaN or infinite entries")
    scale = max(np.abs(arr).max(), 1e-300)
    asym = np.abs(arr - arr.T).max()
    if asym > 1e-8 * scale:
        raise InputError(f"hessian: expected a symmetric matrix, largest |H - H.T| is {asym:.3g}")
    return 0.5 * (arr + arr.T)


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


def _effective_hessian(sym, hessian, masses, mass_weighted):
    h = _check_hessian(sym, hessian)
    if masses is not None and not mass_weighted:
        m = np.repeat(_check_masses(sym, masses), 3)
        inv = 1.0 / np.sqrt(m)
        h = h * inv[:, None] * inv[None, :]
    return h


def symmetry_breaking(sym: SymmetryData, hessian) -> float:
    """Largest relative change of a Hessian under the group: max_R ‖Γ H Γᵀ - H‖ / ‖H‖ (Frobenius).

    Parameters
    ----------
    sym : SymmetryData
    hessian : array_like, shape (3N, 3N)

    Returns
    -------
    float
    """
    h = _check_hessian(sym, hessian)
    norm = max(np.linalg.norm(h), 1e-300)
    worst = 0.0
    for gam in representation_matrices(sym, "cartesian"):
        moved = gam @ (gam @ h).T  # Γ H Γᵀ, with H symmetric
        worst = max(worst, float(np.linalg.norm(moved - h)) / norm)
    return worst


def _warn_if_broken(sym, h, tolerance):
    eps = symmetry_breaking(sym, h)
    if eps > tolerance:
        warnings.warn(
            f"the Hessian breaks the {getattr(sym.table, 'name', 'point-group')} symmetry: "
            f"max ‖Γ(R) H Γ(R)ᵀ - H‖ / ‖H‖ = {eps:.3g} > {tolerance:.3g}",
            SymmetryBreakingWarning,
            stacklevel=3,
        )
    return eps


@dataclass(frozen=True)
class HessianBlocks:
    """Eigenvalues of a Hessian found block by block in the symmetry-adapted basis.

    Attributes
    ----------
    eigenvalues : dict
        Irrep label -> (m_i,) eigenvalues, one per degenerate set of d_i modes, ascending.
    frequencies : dict or None
        Irrep label -> (m_i,) wavenumbers in cm⁻¹ (None without masses or mass weighting).
    modes : dict
        Irrep label -> (m_i, d_i, 3N) mode vectors (rows, in the coordinates of the
        diagonalised matrix: mass-weighted if masses were used).
    max_splitting : float
        Largest spread of eigenvalues within one degenerate set (0 for an exactly symmetric H).
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


def block_diagonalize(
    sym: SymmetryData,
    hessian,
    masses=None,
    mass_weighted: bool = False,
    unit: str = "mdyn/angstrom",
    symmetry_tolerance: float = 1e-6,
) -> HessianBlocks:
    """Diagonalise a Cartesian Hessian irrep by irrep.

    Parameters
    ----------
    sym : SymmetryData
    hessian : array_like, shape (3N, 3N)
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
    _unit(unit)
    h = _effective_hessian(sym, hessian, masses, mass_weighted)
    eps = _warn_if_broken(sym, h, symmetry_tolerance)
    sab = symmetry_adapted_basis(sym, "cartesian")
    evals, freqs, modes = {}, {}, {}
    split = 0.0
    for lab in sab.multiplicities:
        xi = sab.matrix[sab.rows_of(lab)]
        d = int(sab.dims[sab.irreps.index(lab)])
        block = np.asarray((xi @ (xi @ h).T).T)
        w, v = np.linalg.eigh(0.5 * (block + block.T))
        sets = w.reshape(-1, d)
        split = max(split, float(np.ptp(sets, axis=1).max()))
        evals[lab] = sets.mean(axis=1)
        modes[lab] = np.asarray((xi.T @ v).T).reshape(-1, d, h.shape[0])
        if masses is not None or mass_weighted:
            freqs[lab] = frequencies_from_eigenvalues(evals[lab], unit)
    return HessianBlocks(
        evals, freqs if (masses is not None or mass_weighted) else None, modes, split, eps
    )


@dataclass(frozen=True)
class ModeSet:
    """A set of degenerate modes carrying one irrep.

    Attributes
    ----------
    irrep : str
    modes : tuple of int
        Indices into the mode list.
    value : float or None
        Eigenvalue (or frequency) of the set.
    purity : float
        Smallest purity among its modes.
    """

    irrep: str
    modes: tuple
    value: float | None
    purity: float


@dataclass(frozen=True)
class ModeLabels:
    """Irrep labels of normal modes.

    Attributes
    ----------
    irreps : list of str
        Irrep of each mode.
    purity : ndarray, shape (n_modes,)
        Fraction of each mode's squared norm inside its irrep's isotypic component.
    degenerate_set : ndarray, shape (n_modes,)
        Index into ``sets`` for each mode.
    sets : list of ModeSet
    eigenvalues : ndarray or None
        Hessian eigenvalues (with a Hessian), ascending.
    frequencies : ndarray or None
        Wavenumbers in cm⁻¹ (given, or from a mass-weighted Hessian).
    external : ndarray of bool
        True for modes that are mostly translation or rotation (> 50 % of the norm).
    vectors : ndarray, shape (n_modes, 3N)
        Mode vectors, unit length; within a degenerate set rotated so that each is pure.
    symmetry_breaking : float or None
        Relative symmetry breaking of the Hessian (None for mode vectors).
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

    def counts(self, vibrations_only: bool = True) -> dict:
        """Number of degenerate sets per irrep (the textbook Γ_vib = 2A1 + B2 counts).

        Parameters
        ----------
        vibrations_only : bool
            Leave out sets made of external (translation/rotation) modes.
        """
        out = {}
        for s in self.sets:
            if vibrations_only and np.any(self.external[list(s.modes)]):
                continue
            out[s.irrep] = out.get(s.irrep, 0) + 1
        return out


def _external_basis(sym, masses, weighted):
    r = sym.positions - sym.center
    n = sym.n_atoms
    vecs = []
    for a in range(3):
        t = np.zeros((n, 3))
        t[:, a] = 1.0
        vecs.append(t)
        axis = np.zeros(3)
        axis[a] = 1.0
        vecs.append(np.cross(axis, r))
    v = np.stack([x.ravel() for x in vecs], axis=1)
    if weighted and masses is not None:
        v = v * np.sqrt(np.repeat(masses, 3))[:, None]
    q, rr, _ = scipy.linalg.qr(v, mode="economic", pivoting=True)
    diag = np.abs(np.diag(rr))
    return q[:, diag > 1e-8 * max(diag.max(), 1e-300)]


def _group_values(values, tol):
    order = np.argsort(values, kind="stable")
    groups, current = [], [order[0]]
    for a, b in zip(order[:-1], order[1:]):
        if abs(values[b] - values[a]) <= tol:
            current.append(b)
        else:
            groups.append(current)
            current = [b]
    groups.append(current)
    return groups


def label_modes(
    sym: SymmetryData,
    hessian=None,
    masses=None,
    modes=None,
    mass_weighted: bool = False,
    frequencies=None,
    unit: str = "mdyn/angstrom",
    symmetry_tolerance: float = 1e-6,
    degeneracy_tolerance: float | None = None,
) -> ModeLabels:
    """Label normal modes by irrep, group degenerate sets and report purities.

    Give either a Cartesian ``hessian`` (diagonalised here) or ``modes`` (rows).

    Parameters
    ----------
    sym : SymmetryData
    hessian : array_like, shape (3N, 3N), optional
        In ``unit``; mass-weighted with ``masses`` unless ``mass_weighted``.
    masses : array_like, shape (N,), optional
        Atomic masses in u.
    modes : array_like, shape (n_modes, 3N), optional
        Mode vectors as rows (Cartesian or mass-weighted Cartesian).
    mass_weighted : bool
        True if ``hessian`` is already mass-weighted (or ``modes`` are mass-weighted vectors).
    frequencies : array_like, shape (n_modes,), optional
        Frequencies of ``modes`` (any unit), used only to find degenerate sets.
    unit : str
        Force-constant unit of the Hessian, one of :data:`HESSIAN_UNITS`.
    symmetry_tolerance : float
        Relative symmetry breaking of the Hessian above which a
        :class:`~gammatrace.errors.SymmetryBreakingWarning` is issued.
    degeneracy_tolerance : float, optional
        Largest difference of eigenvalues (or of ``frequencies``) inside one degenerate set.
        Default: 1e-6 x the largest |eigenvalue|, or 0.5 for frequencies.

    Returns
    -------
    ModeLabels

    Raises
    ------
    InputError
        For a bad Hessian (shape, asymmetry, NaN), mode vectors that do not match the
        structure, or neither/both of ``hessian`` and ``modes``.
    """
    if (hessian is None) == (modes is None):
        raise InputError("label_modes: give exactly one of hessian= and modes=")
    n3 = 3 * sym.n_atoms
    mvec = None if masses is None else _check_masses(sym, masses)
    eps = None
    values = None
    evals = freqs = None
    if hessian is not None:
        _unit(unit)
        h = _effective_hessian(sym, hessian, mvec, mass_weighted)
        eps = _warn_if_broken(sym, h, symmetry_tolerance)
        evals, vec = np.linalg.eigh(h)
        vectors = vec.T
        values = evals
        tol = degeneracy_tolerance
        if tol is None:
            tol = 1e-6 * max(np.abs(evals).max(), 1e-300)
        if mvec is not None or mass_weighted:
            freqs = frequencies_from_eigenvalues(evals, unit)
        weighted = mvec is not None or mass_weighted
    else:
        vectors = np.asarray(modes, dtype=np.float64)
        if vectors.ndim == 1:
            vectors = vectors[None, :]
        if vectors.ndim != 2 or vectors.shape[1] != n3:
            raise InputError(
                f"modes: expected shape (n_modes, {n3}) for {sym.n_atoms} atoms, "
                f"received {np.shape(modes)}"
            )
        if not np.all(np.isfinite(vectors)):
            raise InputError("modes: contains NaN or infinite entries")
        norms = np.linalg.norm(vectors, axis=1)
        if np.any(norms == 0):
            raise InputError(f"modes: mode {int(np.argmin(norms))} is the zero vector")
        vectors = vectors / norms[:, None]
        if frequencies is not None:
            freqs = np.asarray(frequencies, dtype=np.float64)
            if freqs.shape != (vectors.shape[0],):
                raise InputError(
                    f"frequencies: expected shape ({vectors.shape[0]},), received {freqs.shape}"
                )
            values = freqs
            tol = 0.5 if degeneracy_tolerance is None else degeneracy_tolerance
        weighted = mass_weighted
    sab = symmetry_adapted_basis(sym, "cartesian")
    x = sab.matrix
    dims = sab.dims
    n_modes = vectors.shape[0]
    coeff = np.asarray(x @ vectors.T)  # (3N, n_modes): components in the adapted basis
    labels = [""] * n_modes
    purity = np.zeros(n_modes)
    set_of = np.zeros(n_modes, dtype=np.int64)
    sets = []
    out_vectors = vectors.copy()
    groups = _group_values(values, tol) if values is not None else [[k] for k in range(n_modes)]
    for grp in groups:
        grp = np.array(sorted(grp))
        c = coeff[:, grp]  # (3N, g)
        grams = {}
        for i in range(len(sab.irreps)):
            rows = sab.row_irrep == i
            if rows.any():
                grams[i] = c[rows].T @ c[rows]
        traces = {i: float(np.trace(m)) for i, m in grams.items()}
        want = {i: round(t / dims[i]) * int(dims[i]) for i, t in traces.items()}
        remaining = np.eye(grp.size)
        assigned = []
        if sum(want.values()) == grp.size:
            for i in sorted(traces, key=lambda j: -traces[j]):
                k = want[i]
                if k == 0:
                    continue
                w, v = np.linalg.eigh(remaining.T @ grams[i] @ remaining)
                assigned.append((i, remaining @ v[:, -k:], w[-k:]))
                remaining = remaining @ v[:, :-k]
        else:
            for col in range(grp.size):
                i = max(traces, key=lambda j: grams[j][col, col])
                e = np.zeros((grp.size, 1))
                e[col] = 1.0
                assigned.append((i, e, np.array([grams[i][col, col]])))
        pos = 0
        assigned.sort(key=lambda item: item[0])  # irreps in table order within a set
        for i, rot, pur in assigned:
            k = rot.shape[1]
            idx = grp[pos : pos + k]
            out_vectors[idx] = rot.T @ vectors[grp]
            d = int(dims[i])
            for start in range(0, k, d):
                members = idx[start : start + d]
                for j, m in enumerate(members):
                    labels[m] = sab.irreps[i]
                    purity[m] = pur[start + j]
                    set_of[m] = len(sets)
                val = None if values is None else float(np.mean(values[grp]))
                sets.append(
                    ModeSet(
                        sab.irreps[i],
                        tuple(int(m) for m in members),
                        val,
                        float(pur[start : start + d].min()),
                    )
                )
            pos += k
    if values is None:
        sets, set_of = _group_runs(labels, purity, dims, sab.irreps)
    ext = _external_basis(sym, mvec, weighted)
    external = (np.asarray(out_vectors @ ext) ** 2).sum(axis=1) > 0.5
    return ModeLabels(labels, purity, set_of, sets, evals, freqs, external, out_vectors, eps)


def _group_runs(labels, purity, dims, irreps):
    """Without frequencies: consecutive modes of one irrep, d at a time, form a set."""
    sets, set_of = [], np.zeros(len(labels), dtype=np.int64)
    k = 0
    while k < len(labels):
        d = int(dims[irreps.index(labels[k])])
        members = [k]
        while (
            len(members) < d
            and k + len(members) < len(labels)
            and labels[k + len(members)] == labels[k]
        ):
            members.append(k + len(members))
        for m in members:
            set_of[m] = len(sets)
        sets.append(ModeSet(labels[k], tuple(members), None, float(purity[members].min())))
        k += len(members)
    return sets, set_of
