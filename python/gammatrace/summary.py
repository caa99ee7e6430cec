"""The group-dependent part of a structure's JSON object (shared/INTERFACE.md), for many
structures of one group at once.

Structures of one point group, their operations in canonical order, differ only in how many
atoms each operation leaves unshifted. From those counts this module builds, one vectorised
pass per group, what :meth:`gammatrace.Analysis.to_dict` reports by default: the classes,
Γ(atoms) and Γ_3N with their characters and reductions, Γ_vib with its activity (through
:func:`~gammatrace.spectroscopy.vibration_characters` and
:func:`~gammatrace.spectroscopy.vibration_spans`, as ``reduce_vibrations`` does), σ and the
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
from .spectroscopy import (
    external_characters,
    vibration_characters,
    vibration_spans,
    vibrations_from_counts,
)
from .tables._ops import describe
from .tables.table import INTEGER_TOL

__all__ = ["summary_rows"]


@dataclass(frozen=True)
class _Plan:
    """What the summary reads from one table, prepared once per table."""

    first: np.ndarray
    #: For each canonical operation, the first operation of its class.
    class_first: np.ndarray
    #: Γ_3N per unshifted atom for each class: 2cos θ ± 1 (l = 1, the core's
    #: ``orbital_contributions``), exact integers where it is integral.
    cartesian: np.ndarray
    #: True when every entry of ``cartesian`` is an integer: the characters are then
    #: integers, written without a per-value check.
    integral: bool
    #: ``(n_classes, 3 n_irreps)`` and ``(3 n_irreps,)``: class counts @ ``reduce`` +
    #: ``offset`` = the raw multiplicities of Γ(atoms), Γ_3N and Γ_vib side by side (the
    #: reduction formula composed with Γ_3N = counts × ``cartesian`` and
    #: Γ_vib = Γ_3N − Γ_trans − Γ_rot).
    reduce: np.ndarray
    offset: np.ndarray
    chiral: bool


def _plan(table) -> _Plan:
    return table.prepared("summary plan", _build_plan)


def _build_plan(table) -> _Plan:
    proper, angle, _ = describe(table.operations)
    proper = np.ascontiguousarray(proper, dtype=bool)
    first = table.class_representatives
    cart = _core.orbital_contributions(
        np.ascontiguousarray(proper[first]), np.ascontiguousarray(angle[first], dtype=np.float64), 1
    )
    rounded = np.rint(cart)
    integral = bool((np.abs(cart - rounded) < 1e-9).all())
    cart = rounded if integral else cart
    red = table.reduction_matrix
    cart_red = cart[:, None] * red
    zeros = np.zeros(red.shape[1])
    reduce = np.hstack([red, cart_red, cart_red])
    offset = np.concatenate([zeros, zeros, -(external_characters(table) @ red)])
    class_first = first[table.operation_class]
    for a in (cart, class_first, reduce, offset):
        a.setflags(write=False)
    return _Plan(first, class_first, cart, integral, reduce, offset, bool(proper.all()))


def summary_rows(table, unshifted: np.ndarray, n_atoms: np.ndarray) -> list:
    """The group-dependent keys of the JSON object of k structures of one group.

    Parameters
    ----------
    table : CharacterTable
        The group's table; each structure's h operations are in its canonical order.
    unshifted : array_like, shape (k, h)
        Atoms each operation leaves unshifted (whole numbers).
    n_atoms : array_like, shape (k,)

    Returns
    -------
    list of dict or None
        Per structure ``{"classes", "representations": {"atoms", "cartesian"},
        "vibrations", "symmetry_number", "chiral"}``, or None where the counts disagree
        within a class or the characters do not reduce.
    """
    plan = _plan(table)
    u = np.ascontiguousarray(unshifted, dtype=np.float64)
    # Γ(atoms): the unshifted atoms; Γ_3N: times the contribution of x, y, z per atom, which
    # is constant over a class, so the counts alone must agree within each class
    # the counts must agree within each class; Γ(atoms), Γ_3N and Γ_vib reduced in one
    # product in the core (rust/reduce.rs)
    mult, ok = _core.reduce_counts(
        u, plan.class_first, plan.first, plan.reduce, plan.offset, INTEGER_TOL
    )
    atoms = u[:, plan.first]
    cart = atoms * plan.cartesian
    m = len(table.irreps)
    if not table.spans_class_functions:
        raw = atoms @ plan.reduce[:, : 2 * m]
        ok &= ~table.unresolved_rows(atoms, raw[:, :m])
        ok &= ~table.unresolved_rows(cart, raw[:, m:])
    modes, spans = vibration_spans(table, mult[:, 2 * m :], n_atoms)
    ok &= spans
    vib_chars = vibration_characters(table, cart)
    atoms_json = atoms.astype(np.int64).tolist()
    cart_json = cart.astype(np.int64).tolist() if plan.integral else json_number_rows(cart)
    labels = table.labels
    sigma = int(table.symmetry_number)
    rows: list = []
    for r, (counts, n_modes) in enumerate(zip(mult.tolist(), modes.tolist())):
        if not ok[r]:
            rows.append(None)
            continue
        atoms_irreps = {lab: v for lab, v in zip(labels, counts[:m]) if v}
        cart_irreps = {lab: v for lab, v in zip(labels, counts[m : 2 * m]) if v}
        vib = vibrations_from_counts(table, counts[2 * m :], n_modes, vib_chars[r])
        rows.append(
            {
                "classes": table.class_dicts(),
                "representations": {
                    "atoms": {"characters": atoms_json[r], "irreps": atoms_irreps},
                    "cartesian": {"characters": cart_json[r], "irreps": cart_irreps},
                },
                "vibrations": vib.to_dict(),
                "symmetry_number": sigma,
                "chiral": plan.chiral,
            }
        )
    return rows
