"""Full reduction of site-based representations, one orbit type at a time (DESIGN.md §4).

A basis made of *sites* (atoms or bonds), each carrying an ``s``-dimensional space, transforms
as Γ(R) (e_j ⊗ u) = e_{π_R(j)} ⊗ M(R, j) u. The sites split into orbits; every orbit is an
induced representation determined by the stabiliser of one representative site (and, for
vectors along bonds, by which stabiliser elements reverse the bond). Orbits whose
representatives have the same stabiliser share one local reduction, computed once with small
dense matrices (at most ``h * s`` rows) and copied into the global sparse matrix.

Local reduction of an orbit, for irrep i with reference matrices D (orthogonal, d x d):

* transfer operators T_k1 = (d/h) Σ_R D_k1(R) Γ(R);
* range(T_11) is spanned by T_1j (e_rep ⊗ u) for j = 1..d and u a basis of the site space,
  because T_11 Γ(g) = Σ_j D_j1(g⁻¹) T_1j: only d*s candidate vectors, orthonormalised by SVD;
* real irreps (ν = 1): T_11 is the projector onto the first partners; partner k of copy c is
  T_k1 applied to first partner c; then Γ(R) v_k = Σ_j D_jk(R) v_j for every copy;
* complex-conjugate pairs shown as one real 2-d irrep (ν = 2): T_11 is the whole isotypic
  projector and T_21 = J a complex structure on it; the first partners are one vector from
  each 2-plane of the real Schur form of J, and partner 2 is J times partner 1.

Rows of the local matrix are ordered by irrep (table order), copy, partner.

Sign: a copy may be multiplied by −1 as a whole (all its partners together) without changing
its matrices D(R). :func:`reduce_components` fixes that choice so that every copy's first
partner has a positive first coefficient (the one of lowest basis index among those of
magnitude at least ``naming.COEFFICIENT_CUTOFF``), which is also the first term written out.
"""

from __future__ import annotations

import numpy as np
import scipy.linalg
import scipy.sparse as sp

from ..errors import ReductionError
from .naming import COEFFICIENT_CUTOFF

__all__ = ["reduce_components"]

_ZERO = 1e-13


def _apply_sum(weights, pi_inv, mats, vecs):
    """Σ_k weights[q, k] Γ(k) V for a local representation, V of shape (m, s, c).

    (Γ(k) V)[y] = M(k, π⁻¹(y)) V[π⁻¹(y)], gathered for all k at once.
    """
    h = pi_inv.shape[0]
    vg = vecs[pi_inv]  # (h, m, s, c)
    mg = mats[np.arange(h)[:, None], pi_inv]  # (h, m, s, s)
    return np.einsum("qk,kyab,kybc->qyac", weights, mg, vg, optimize=True)


def _reduce_local(pi, mats, r0, g):
    """Dense full reduction of one orbit's representation (see module docstring).

    Parameters
    ----------
    pi : ndarray, shape (h, m)
        Local site permutation.
    mats : ndarray, shape (h, m, s, s)
        Site matrices M(R, j).
    r0 : int
        Local index of the representative site.
    g : GroupData
        Group and reference irreps.

    Returns
    -------
    x : ndarray, shape (n, n)
        Rows = symmetry-adapted functions (n = m * s), ordered by irrep, copy, partner.
    irrep, copy_first, partner : ndarray, shape (n,)
        Irrep index, local row of the copy's first partner, partner index of each row.
    """
    h, m = pi.shape
    s = mats.shape[2]
    n = m * s
    pi_inv = np.empty_like(pi)
    pi_inv[np.arange(h)[:, None], pi] = np.arange(m)[None, :]
    fixed = pi == np.arange(m)[None, :]
    chi_loc = (np.trace(mats, axis1=2, axis2=3) * fixed).sum(axis=1)
    mult = (g.chars @ chi_loc) / (h * g.nu)
    if np.any(np.abs(mult - np.rint(mult)) > 1e-6):
        raise ReductionError(
            f"an orbit's representation does not reduce to integer multiplicities "
            f"(characters {np.round(chi_loc, 6).tolist()}, multiplicities "
            f"{np.round(mult, 6).tolist()})"
        )
    mult = np.rint(mult).astype(np.int64)
    rows, irr, first, part = [], [], [], []
    done = 0
    for i in np.nonzero(mult)[0]:
        d, nu, dm, c = int(g.dims[i]), int(g.nu[i]), g.matrices[i], int(mult[i])
        # Candidates T_1j (e_rep ⊗ u_b), j = 1..d, b = 1..s, scattered onto their sites.
        cand = np.zeros((m, s, d, s))
        contrib = (d / h) * np.einsum("kj,kab->kajb", dm[:, 0, :], mats[:, r0])
        np.add.at(cand, pi[:, r0], contrib)
        u, sv, _ = np.linalg.svd(cand.reshape(n, d * s), full_matrices=False)
        rank = int((sv > 1e-8 * max(sv.max(initial=0.0), 1e-300)).sum())
        if rank != c * nu:
            raise ReductionError(
                f"irrep {g.labels[i]}: found {rank} independent functions, expected "
                f"{c * nu} (multiplicity {c}); the operations do not form the table's group"
            )
        basis = u[:, :rank]
        weights = (d / h) * dm[:, :, 0].T  # (d, h): T_k1 for k = 1..d
        if nu == 2:
            jb = _apply_sum(weights[1:2], pi_inv, mats, basis.reshape(m, s, rank))[0]
            jw = basis.T @ jb.reshape(n, rank)
            _, z = scipy.linalg.schur(0.5 * (jw - jw.T), output="real")
            basis = basis @ z[:, 0::2]
        parts = _apply_sum(weights, pi_inv, mats, basis.reshape(m, s, c)).reshape(d, n, c)
        block = parts.transpose(2, 0, 1).reshape(c * d, n)
        err = np.abs(block @ block.T - np.eye(c * d)).max()
        if err > 1e-8:
            raise ReductionError(
                f"irrep {g.labels[i]}: symmetry-adapted functions are not orthonormal "
                f"(error {err:.2g}); the operations do not form an exact group"
            )
        rows.append(block)
        irr.append(np.full(c * d, i))
        first.append(done + d * np.repeat(np.arange(c), d))
        part.append(np.tile(np.arange(d), c))
        done += c * d
    if done != n:
        raise ReductionError(f"an orbit reduced to {done} functions instead of {n}")
    x = np.concatenate(rows, axis=0)
    x[np.abs(x) < _ZERO] = 0.0
    return x, np.concatenate(irr), np.concatenate(first), np.concatenate(part)


def _stabiliser_keys(pi, sign):
    """Rank of each site's stabiliser (and reversal pattern) among all distinct ones."""
    n_c = pi.shape[1]
    fixed = pi == np.arange(n_c)[None, :]
    bits = fixed if sign is None else np.concatenate([fixed, fixed & (sign < 0)], axis=0)
    packed = np.ascontiguousarray(np.packbits(bits, axis=0).T)
    void = packed.view(np.dtype((np.void, packed.shape[1]))).ravel()
    _, rank = np.unique(void, return_inverse=True)
    return rank.ravel(), packed


def _orient_copies(x, partner):
    """Multiply each copy (rows from one partner-0 row to the next) by the sign of the first
    coefficient of its first partner of magnitude ≥ the cutoff; ``x`` is changed in place."""
    n = x.shape[0]
    if n == 0:
        return
    x.sort_indices()
    lengths = np.diff(x.indptr)
    row_of = np.repeat(np.arange(n), lengths)
    big = np.flatnonzero(np.abs(x.data) >= COEFFICIENT_CUTOFF)
    rows, first = np.unique(row_of[big], return_index=True)
    row_sign = np.ones(n)
    row_sign[rows] = np.sign(x.data[big[first]])
    copy_id = np.cumsum(partner == 0) - 1
    copy_sign = row_sign[partner == 0]
    x.data *= np.repeat(copy_sign[copy_id], lengths)


def reduce_components(components, g, progress=None):
    """Symmetry-adapted basis of a whole basis made of components, as sparse rows.

    Parameters
    ----------
    components : list of gammatrace.bases.components.Component
    g : GroupData
    progress : gammatrace._progress.Progress, optional
        Told the number of functions reduced after each orbit type of each component.

    Returns
    -------
    x : scipy.sparse.csr_matrix, shape (n, n)
        Rows = symmetry-adapted functions ordered by irrep, then copy, then partner; each
        copy's first partner starts with a positive coefficient (module notes).
    irrep, copy, partner : ndarray, shape (n,)
        Labels of each row (copy counted from 0 within each irrep).
    """
    cache = {}
    indptr_parts, index_parts, data_parts = [], [], []
    irr_parts, key_parts, part_parts = [], [], []
    n_rows = 0
    n_total = 0
    for comp in components:
        if comp.sites.size == 0:
            continue
        s = comp.size
        n_total += comp.sites.size * s
        pi = comp.local_perm()
        sign = comp.local_sign()
        orbit = pi.min(axis=0)
        rank, packed = _stabiliser_keys(pi, sign)
        order = np.lexsort((np.arange(pi.shape[1]), rank, orbit))
        first = np.ones(order.size, dtype=bool)
        first[1:] = orbit[order][1:] != orbit[order][:-1]
        reps = order[first]
        rep_rank = rank[reps]
        for t in np.unique(rep_rank):
            reps_t = reps[rep_rank == t]
            a = reps_t[0]
            imgs = pi[:, a]
            members, g_first = np.unique(imgs, return_index=True)
            srt = np.argsort(g_first)
            cosets = g_first[srt]  # canonical local order: by first operation reaching a site
            members_t = members[srt]
            m = members_t.size
            loc = np.full(pi.shape[1], -1, dtype=np.int64)
            loc[members_t] = np.arange(m)
            pi_loc = loc[pi[:, members_t]]
            all_members = pi[cosets][:, reps_t].T  # (n_o, m)
            if sign is None:
                tau = None
                mats_loc = np.broadcast_to(comp.mats[:, None], (pi.shape[0], m, s, s))
                sig_key = b""
            else:
                tau = sign[cosets][:, reps_t].T  # (n_o, m): transported orientation
                t0 = tau[0]
                sl = t0[pi_loc] * sign[:, members_t] * t0[None, :]
                mats_loc = comp.mats[:, None] * sl[:, :, None, None]
                sig_key = b"signed"
            key = (comp.tag, packed[a].tobytes(), sig_key)
            if key not in cache:
                r0 = int(loc[a])
                cache[key] = _reduce_local(pi_loc, np.ascontiguousarray(mats_loc), r0, g)
            x_loc, irr_loc, first_loc, part_loc = cache[key]
            n_o, n_loc = reps_t.size, m * s
            loc_csr = sp.csr_matrix(x_loc)
            gidx = (comp.offsets[all_members][:, :, None] + np.arange(s)).reshape(n_o, n_loc)
            index_parts.append(gidx[:, loc_csr.indices].ravel())
            if tau is None:
                data_parts.append(np.tile(loc_csr.data, n_o))
            else:
                fac = np.repeat(tau, s, axis=1)[:, loc_csr.indices]
                data_parts.append((fac * loc_csr.data[None, :]).ravel())
            indptr_parts.append(np.tile(np.diff(loc_csr.indptr), n_o))
            irr_parts.append(np.tile(irr_loc, n_o))
            base = n_rows + n_loc * np.arange(n_o)[:, None]
            key_parts.append((base + first_loc[None, :]).ravel())
            part_parts.append(np.tile(part_loc, n_o))
            n_rows += n_o * n_loc
            if progress is not None:
                progress.update(n_o * n_loc)
    if n_rows != n_total:
        raise ReductionError(f"the reduction produced {n_rows} functions for {n_total}")
    counts = np.concatenate(indptr_parts) if indptr_parts else np.zeros(0, dtype=np.int64)
    indptr = np.concatenate([[0], np.cumsum(counts)]).astype(np.int64)
    x_orb = sp.csr_matrix(
        (
            np.concatenate(data_parts) if data_parts else np.zeros(0),
            np.concatenate(index_parts) if index_parts else np.zeros(0, dtype=np.int64),
            indptr,
        ),
        shape=(n_rows, n_total),
    )
    irrep = np.concatenate(irr_parts) if irr_parts else np.zeros(0, dtype=np.int64)
    ckey = np.concatenate(key_parts) if key_parts else np.zeros(0, dtype=np.int64)
    partner = np.concatenate(part_parts) if part_parts else np.zeros(0, dtype=np.int64)
    order = np.lexsort((partner, ckey, irrep))
    x = x_orb[order]
    irrep, partner = irrep[order], partner[order]
    _orient_copies(x, partner)
    starts = np.searchsorted(irrep, irrep, side="left")
    copy = (np.arange(n_rows) - starts) // g.dims[irrep]
    return x, irrep, copy, partner
