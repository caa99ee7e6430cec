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
from .bases.counting import json_number_rows
from .spectroscopy import reduce_vibrations, vibrations_from_counts
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
    m_vib, modes, ok_vib, vib_chars = reduce_vibrations(table, cart, n_atoms)
    ok &= reduced[:k] & reduced[k:] & ok_vib
    labels = table.labels
    as_json = json_number_rows(chars)
    as_irreps = [{lab: v for lab, v in zip(labels, row) if v} for row in mult.tolist()]
    sigma = int(table.symmetry_number)
    rows: list = []
    for r, (vib, n_modes) in enumerate(zip(m_vib.tolist(), modes.tolist())):
        if not ok[r]:
            rows.append(None)
            continue
        rows.append(
            {
                "classes": table.class_dicts(),
                "representations": {
                    "atoms": {"characters": as_json[r], "irreps": as_irreps[r]},
                    "cartesian": {"characters": as_json[k + r], "irreps": as_irreps[k + r]},
                },
                "vibrations": vibrations_from_counts(table, vib, n_modes, vib_chars[r]).to_dict(),
                "symmetry_number": sigma,
                "chiral": plan.chiral,
            }
        )
    return rows
