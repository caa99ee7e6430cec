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

from dataclasses import dataclass

import numpy as np

from . import _core
from .bases.counting import json_number
from .spectroscopy import _facts, reduce_vibrations
from .tables._ops import describe

__all__ = ["summary_rows"]

#: Characters of one class must agree to this (relative, as ``bases.counting.per_class``).
_CLASS_ATOL = 1e-6


@dataclass(frozen=True)
class _Plan:
    """What the summary reads from one table, prepared once per table."""

    op_class: np.ndarray
    first: np.ndarray
    #: Γ_3N per unshifted atom for each canonical operation: 2cos θ ± 1 (l = 1, the core's
    #: ``orbital_contributions``), constant over each class.
    cartesian: np.ndarray
    chiral: bool


def _plan(table) -> _Plan:
    return table.prepared("summary plan", _build_plan)


def _build_plan(table) -> _Plan:
    proper, angle, _ = describe(table.operations)
    proper = np.ascontiguousarray(proper, dtype=bool)
    cart = _core.orbital_contributions(proper, np.ascontiguousarray(angle, dtype=np.float64), 1)
    cart.setflags(write=False)
    return _Plan(table.operation_class, table.class_representatives, cart, bool(proper.all()))


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


def summary_rows(table, unshifted: np.ndarray, n_atoms: np.ndarray) -> list:
    """The group-dependent keys of the JSON object of k structures of one group.

    Parameters
    ----------
    table : CharacterTable
        The group's table; each structure's h operations are in its canonical order.
    unshifted : array_like, shape (k, h)
        Atoms each operation leaves unshifted.
    n_atoms : array_like, shape (k,)

    Returns
    -------
    list of dict or None
        Per structure ``{"classes", "representations": {"atoms", "cartesian"},
        "vibrations", "symmetry_number", "chiral"}``, or None where the counts disagree
        within a class or the characters do not reduce.
    """
    plan = _plan(table)
    u = np.asarray(unshifted, dtype=np.float64)
    k = len(u)
    # Γ(atoms): the unshifted atoms; Γ_3N: times the contribution of x, y, z per atom, which
    # is constant over a class, so the counts alone must agree within each class
    atoms = u[:, plan.first]
    ok = (np.abs(u - atoms[:, plan.op_class]) <= _CLASS_ATOL).all(axis=1)
    chars = np.concatenate([atoms, atoms * plan.cartesian[plan.first]])
    mult, reduced = table.reduce_rows(chars)
    cart = chars[k:]
    m_vib, modes, ok_vib, _ = reduce_vibrations(table, cart, n_atoms)
    ok &= reduced[:k] & reduced[k:] & ok_vib
    facts = _facts(table)
    labels = facts.labels
    as_json = _json_rows(chars)
    as_irreps = _irrep_dicts(labels, mult)
    atoms_json, cart_json = as_json[:k], as_json[k:]
    atoms_irreps, cart_irreps = as_irreps[:k], as_irreps[k:]
    ir_mask, raman_mask = facts.ir_mask.tolist(), facts.raman_mask.tolist()
    a1 = facts.totally_symmetric
    sigma = int(table.symmetry_number)
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
                "chiral": plan.chiral,
            }
        )
    return rows
