"""``gammatrace modes PATH --hessian FILE``: normal modes, their irreps and frequencies from a
Cartesian Hessian (see :mod:`gammatrace.modes` for the method, :mod:`gammatrace.io.hessian`
for the file formats)."""

from __future__ import annotations

import argparse
import os
import sys
import warnings

import numpy as np

from ..errors import InputError, SymmetryBreakingWarning
from ..modes import DEFAULT_UNIT, HESSIAN_UNITS, SYMMETRY_TOLERANCE, hessian_unit, read_hessian
from ..pictures import draw_mode_spectrum
from ..spectroscopy import format_irreps
from ._shared import add_cell, add_format, add_tolerance, dump, first_structure, write

__all__ = ["register", "run"]


def _check_file_atoms(hf, res, tol: float) -> None:
    """A Hessian file that carries atoms (ASE) must describe the structure of PATH."""
    if hf.numbers is None:
        return
    numbers = np.asarray(res.structure.numbers)
    if hf.numbers.shape != numbers.shape or np.any(hf.numbers != numbers):
        raise InputError(
            f"{hf.source}: its atoms (atomic numbers {hf.numbers.tolist()}) are not those of "
            f"the structure ({numbers.tolist()})"
        )
    gap = float(np.abs(hf.positions - np.asarray(res.structure.positions)).max())
    if gap > tol:
        raise InputError(
            f"{hf.source}: its positions differ from the structure's by up to {gap:.3g} Å "
            f"(> --tol {tol:g}); the Hessian must belong to the same geometry in the same "
            "orientation"
        )
    if hf.masses is not None:
        ours = np.asarray(res.masses)
        k = int(np.argmax(np.abs(hf.masses - ours)))
        if abs(hf.masses[k] - ours[k]) > 1e-6 * ours[k]:
            raise InputError(
                f"{hf.source}: atom {k} has mass {hf.masses[k]:g} u there and {ours[k]:g} u in "
                "the structure; give the isotopes in the structure file"
            )


def _freq_text(f: float | None) -> str:
    """``1234.5`` or ``123.4i`` for an imaginary frequency."""
    if f is None:
        return "-"
    return f"{abs(f):.1f}i" if f < 0 else f"{f:.1f}"


def _unit_text(unit: str) -> str:
    return unit.replace("angstrom", "Å").replace("2", "²")


def _rows(labels) -> list:
    number = {}
    vib = [k for k in range(len(labels.irreps)) if labels.kinds[k] == "vibration"]
    for n, k in enumerate(vib, start=1):
        number[k] = n
    freqs = labels.frequencies
    out = []
    for k in range(len(labels.irreps)):
        f = None if freqs is None else float(freqs[k])
        out.append(
            {
                "mode": k,
                "number": number.get(k),
                "irrep": labels.irreps[k],
                "purity": float(labels.purity[k]),
                "set": int(labels.degenerate_set[k]),
                "external": bool(labels.external[k]),
                "kind": labels.kinds[k],
                "frequency_cm1": f,
                "imaginary": bool(labels.imaginary[k]),
                "eigenvalue": float(labels.eigenvalues[k]),
            }
        )
    return out


def _fundamentals(labels) -> list:
    """Vibrational sets in table order, highest frequency first within an irrep."""
    order = {lab: i for i, lab in enumerate(labels.irrep_order)}
    sets = [s for s in labels.sets if s.kind == "vibration"]
    return sorted(sets, key=lambda s: (order[s.irrep], -(s.value or 0.0)))


def _json(args, res, labels, unit, hf) -> str:
    sets = [
        {
            "irrep": s.irrep,
            "kind": s.kind,
            "modes": list(s.modes),
            "eigenvalue": s.value,
            "frequency_cm1": s.frequency,
            "imaginary": bool(s.value is not None and s.value < 0),
            "splitting_cm1": s.splitting,
            "purity": s.purity,
        }
        for s in labels.sets
    ]
    out = {
        "source": args.path,
        "hessian": hf.source,
        "hessian_format": hf.format,
        "point_group": res.point_group,
        "unit": unit,
        "modes": _rows(labels),
        "counts": labels.counts(),
        "gamma_trans": labels.gamma_trans,
        "gamma_rot": labels.gamma_rot,
        "sets": sets,
        "n_imaginary": int(sum(1 for s in labels.sets if s.kind == "vibration" and s.value < 0)),
        "symmetry_breaking": labels.symmetry_breaking,
        "symmetry_tolerance": labels.symmetry_tolerance,
        "symmetry_broken": bool(labels.symmetry_breaking > labels.symmetry_tolerance),
    }
    return dump(out) + "\n"


def _text(args, res, labels, unit) -> str:
    lines = []
    vib = [k for k in range(len(labels.irreps)) if labels.kinds[k] == "vibration"]
    lines.append(
        f"{args.path}: {res.point_group}, {len(vib)} vibrations from the Hessian "
        f"({_unit_text(unit)}, masses in u)"
    )
    lines.append(f"  Γ_vib   = {format_irreps(labels.counts())}")
    lines.append(
        f"  Γ_trans = {format_irreps(labels.gamma_trans)};  Γ_rot = "
        f"{format_irreps(labels.gamma_rot)}  (projected out)"
    )
    lines.append(
        f"  symmetry breaking ‖H − P(H)‖/‖H‖ = {labels.symmetry_breaking:.2g} "
        f"(warning above {labels.symmetry_tolerance:.2g})"
    )
    n_imag = sum(1 for s in labels.sets if s.kind == "vibration" and s.value < 0)
    if n_imag:
        lines.append(f"  {n_imag} imaginary frequenc{'y' if n_imag == 1 else 'ies'} (shown as …i)")
    number = {k: n for n, k in enumerate(vib, start=1)}
    lines.append("")
    lines.append("  fundamentals in table order")
    lines.append("  irrep     cm-1   modes")
    for s in _fundamentals(labels):
        members = ", ".join(str(number[k]) for k in s.modes)
        lines.append(f"  {s.irrep:<6} {_freq_text(s.frequency):>8}   {members}")
    lines.append("")
    lines.append("  mode  irrep      cm-1   purity")
    freqs = labels.frequencies
    for k in vib:
        f = None if freqs is None else float(freqs[k])
        lines.append(
            f"  {number[k]:4d}  {labels.irreps[k]:<6} {_freq_text(f):>8}   {labels.purity[k]:.4f}"
        )
    ext = [k for k in range(len(labels.irreps)) if labels.external[k]]
    if ext and freqs is not None:
        worst = max(abs(float(freqs[k])) for k in ext)
        lines.append(
            f"  translations and rotations: largest |ν| of the Hessian within their span "
            f"{worst:.1f} cm-1"
        )
    return "\n".join(lines) + "\n"


def run(args: argparse.Namespace) -> int:
    given = None if args.unit is None else hessian_unit(args.unit)
    res = first_structure(args.path, args.tol, args.cell)
    hf = read_hessian(args.hessian, n_atoms=res.n_atoms)
    if given is None:
        unit = hf.unit or DEFAULT_UNIT
    else:
        unit = given
        if hf.unit is not None and unit != hf.unit:
            raise InputError(
                f"--unit {args.unit}: {hf.source} is {hf.format} data, always in {hf.unit}"
            )
    _check_file_atoms(hf, res, args.tol)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", SymmetryBreakingWarning)
        labels = res.label_modes(
            hf.matrix,
            mass_weighted=args.mass_weighted,
            unit=unit,
            symmetry_tolerance=args.symmetry_tolerance,
        )
    for w in caught:
        if issubclass(w.category, SymmetryBreakingWarning):
            print(f"gammatrace: warning: {args.hessian}: {w.message}", file=sys.stderr)
        else:
            warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    write(
        _json(args, res, labels, unit, hf)
        if args.format == "json"
        else _text(args, res, labels, unit)
    )
    if args.draw and labels.frequencies is not None:
        os.makedirs(args.draw, exist_ok=True)
        stem = os.path.splitext(os.path.basename(res.structure.source))[0] or "stdin"
        vib = [k for k in range(len(labels.irreps)) if labels.kinds[k] == "vibration"]
        draw_mode_spectrum(
            [float(labels.frequencies[k]) for k in vib],
            [labels.irreps[k] for k in vib],
            table=res.table,
            path=os.path.join(args.draw, f"{stem}_modes.png"),
            title=f"{res.point_group}: {format_irreps(labels.counts())}",
        )
    return 0


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    m = sub.add_parser(
        "modes",
        help="normal modes, irreps and frequencies from a Cartesian Hessian",
        description=(
            "Label the normal modes of the first structure in PATH from its Cartesian "
            "Hessian: Γ_vib in table order, translations and rotations projected out, "
            "frequencies in cm-1 (imaginary ones as 123.4i)."
        ),
    )
    m.add_argument("path", metavar="PATH", help="XYZ file (first frame)")
    add_tolerance(m)
    add_cell(m)
    add_format(m)
    m.add_argument(
        "--hessian",
        required=True,
        metavar="FILE",
        help=(
            "Cartesian Hessian, atom-major (3*atom + x,y,z): a .npy array; plain text "
            "(white space or commas; the full 3N x 3N matrix, or its lower triangle by rows, "
            "one row a line or as a flat list); or the JSON of ase.vibrations.VibrationsData"
            ".write (always eV/angstrom2)"
        ),
    )
    m.add_argument(
        "--unit",
        default=None,
        metavar="UNIT",
        help=(
            f"force-constant unit of the Hessian (default {DEFAULT_UNIT}; ASE files: "
            f"eV/angstrom2). One of: {', '.join(HESSIAN_UNITS)}"
        ),
    )
    m.add_argument(
        "--mass-weighted",
        action="store_true",
        help="the Hessian is already mass-weighted (UNIT per u)",
    )
    m.add_argument(
        "--symmetry-tolerance",
        type=float,
        default=SYMMETRY_TOLERANCE,
        metavar="REL",
        help=(
            "warn when the symmetry-breaking part of the Hessian, ‖H − P(H)‖/‖H‖ with P the "
            f"group average, exceeds REL (default {SYMMETRY_TOLERANCE:g})"
        ),
    )
    m.add_argument(
        "--draw",
        default=None,
        metavar="DIR",
        help="write a stick spectrum coloured by irrep, IR/Raman activity marked, into DIR",
    )
    m.set_defaults(func=run)
