"""The group-dependent part of a structure's JSON object (shared/INTERFACE.md), for many
structures of one group at once.

Structures of one point group, their operations in canonical order, differ only in how many
atoms each operation leaves unshifted. From those counts this module builds, one vectorised
pass per group, what :meth:`gammatrace.Analysis.to_dict` reports by default: the classes,
Γ(atoms) and Γ_3N with their characters and reductions, Γ_vib with its activity (through
:func:`~gammatrace.spectroscopy.reduce_vibrations`, the one Γ_vib reduction), σ and the
chiral flag. Single analyses (k = 1) and the command line's many-frame JSON path both come
here, so the two write the same object.

A structure whose characters disagree within a class, or do not reduce, gets ``None``: the
caller takes the one-structure path, which raises the error that names the class or the
residuals.
"""

from __future__ import annotations

import numpy as np

from . import _core
from .bases.counting import json_number
from .spectroscopy import _facts, reduce_vibrations

__all__ = ["summary_rows"]

#: Characters of one class must agree to this (relative, as ``bases.counting.per_class``).
_CLASS_ATOL = 1e-6


def _class_spread_ok(per_op: np.ndarray, per_class: np.ndarray, op_class: np.ndarray):
    """Rows whose per-operation characters agree with their class's first operation."""
    ref = per_class[:, op_class]
    return (np.abs(per_op - ref) <= _CLASS_ATOL * np.maximum(1.0, np.abs(ref))).all(axis=1)


def _json_rows(chars: np.ndarray) -> list:
    """:func:`~gammatrace.bases.counting.json_number` of every entry, row by row (integral
    rows in one pass)."""
    r = np.rint(chars)
    integral = (np.abs(chars - r) < 1e-9).all(axis=1)
    ints = r.astype(np.int64).tolist()
    return [
        ints[k] if integral[k] else [json_number(x) for x in chars[k].tolist()]
        for k in range(len(chars))
    ]


def _irrep_dicts(labels: tuple, mult: np.ndarray) -> list:
    return [{lab: v for lab, v in zip(labels, row) if v} for row in mult.tolist()]


def summary_rows(
    table,
    unshifted: np.ndarray,
    proper: np.ndarray,
    angle: np.ndarray,
    n_atoms: np.ndarray,
) -> list:
    """The group-dependent keys of the JSON object of k structures of one group.

    Parameters
    ----------
    table : CharacterTable
        The group's table; each structure's h operations are in its canonical order.
    unshifted : array_like, shape (k, h)
        Atoms each operation leaves unshifted.
    proper, angle : array_like, shape (k, h)
        Each operation's kind and angle (degrees), as detection reports them.
    n_atoms : array_like, shape (k,)

    Returns
    -------
    list of dict or None
        Per structure ``{"classes", "representations": {"atoms", "cartesian"},
        "vibrations", "symmetry_number", "chiral"}``, or None where the characters disagree
        within a class or do not reduce.
    """
    u = np.asarray(unshifted, dtype=np.float64)
    k, h = u.shape
    op_class = table.operation_class
    first = table.class_representatives
    # Γ(atoms): the unshifted atoms; Γ_3N: times the contribution of x, y, z (l = 1) per atom
    per_atom = _core.orbital_contributions(
        np.ascontiguousarray(np.asarray(proper, dtype=bool).reshape(-1)),
        np.ascontiguousarray(np.asarray(angle, dtype=np.float64).reshape(-1)),
        1,
    ).reshape(k, h)
    # Γ(atoms) in rows 0 … k − 1, Γ_3N in rows k … 2k − 1: one pass for both
    per_op = np.concatenate([u, u * per_atom])
    chars = per_op[:, first]
    spread_ok = _class_spread_ok(per_op, chars, op_class)
    mult, reduced = table.reduce_rows(chars)
    cart = chars[k:]
    m_vib, modes, ok_vib, _ = reduce_vibrations(table, cart, n_atoms)
    ok = spread_ok[:k] & spread_ok[k:] & reduced[:k] & reduced[k:] & ok_vib
    facts = _facts(table)
    labels = facts.labels
    as_json = _json_rows(chars)
    as_irreps = _irrep_dicts(labels, mult)
    atoms_json, cart_json = as_json[:k], as_json[k:]
    atoms_irreps, cart_irreps = as_irreps[:k], as_irreps[k:]
    ir_mask, raman_mask = facts.ir_mask.tolist(), facts.raman_mask.tolist()
    a1 = facts.totally_symmetric
    sigma = int(table.symmetry_number)
    n_proper = np.asarray(proper, dtype=bool).sum(axis=1).tolist()
    rows: list = []
    for r, (vib, n_modes) in enumerate(zip(m_vib.tolist(), modes.tolist())):
        if not ok[r]:
            rows.append(None)
            continue
        irreps = {lab: v for lab, v in zip(labels, vib) if v}
        ir = {lab: v for lab, v, a in zip(labels, vib, ir_mask) if v and a}
        raman = {lab: v for lab, v, a in zip(labels, vib, raman_mask) if v and a}
        rows.append(
            {
                "classes": table.class_dicts(),
                "representations": {
                    "atoms": {"characters": atoms_json[r], "irreps": atoms_irreps[r]},
                    "cartesian": {"characters": cart_json[r], "irreps": cart_irreps[r]},
                },
                "vibrations": {
                    "irreps": irreps,
                    "modes": n_modes,
                    "ir_active": ir,
                    "raman_active": raman,
                    "n_fundamentals": sum(irreps.values()),
                    "n_ir_active": sum(ir.values()),
                    "n_raman_active": sum(raman.values()),
                    "mutual_exclusion": facts.centrosymmetric,
                    "polarised": {a1: irreps[a1]} if a1 in irreps and a1 in raman else {},
                },
                "symmetry_number": sigma,
                "chiral": n_proper[r] == h,
            }
        )
    return rows
