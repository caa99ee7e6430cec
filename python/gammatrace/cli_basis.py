"""The change-of-basis commands of the ``gammatrace`` command line.

``salc`` (symmetry-adapted basis X saved as scipy .npz), ``modes`` (normal-mode labels from a
Hessian saved with numpy) and ``symmetrize`` (projection onto the exact group, with the higher
groups reachable at looser tolerances). Wired into :mod:`gammatrace.cli` by
:func:`add_commands`.
"""

from __future__ import annotations

import argparse
import json
import sys
from typing import Any

import numpy as np

from .bases import parse_basis
from .errors import InputError

__all__ = ["add_commands"]


def _one(path: str, tol: float):
    from .analysis import analyze

    return analyze(path, tol=tol, frame=0)


def _cmd_salc(args: argparse.Namespace) -> int:
    from .basis_change import save_npz

    res = _one(args.path, args.tol)
    sab = res.symmetry_adapted_basis(parse_basis(args.basis))
    if args.out:
        save_npz(args.out, sab.matrix, sab.labels)
    counts = {k: int(v) for k, v in sab.multiplicities.items() if v}
    if args.format == "json":
        out = {
            "source": args.path,
            "point_group": res.point_group,
            "basis": args.basis,
            "dimension": int(sab.matrix.shape[0]),
            "nnz": int(sab.matrix.nnz),
            "multiplicities": counts,
            "labels": [list(lab) for lab in sab.labels],
            "saved": args.out,
        }
        sys.stdout.write(json.dumps(out, ensure_ascii=False) + "\n")
    else:
        from .spectroscopy import format_irreps

        print(
            f"{args.path}: {res.point_group}, basis {args.basis}, dimension "
            f"{sab.matrix.shape[0]}, {sab.matrix.nnz} nonzeros in X"
        )
        print(f"  Γ = {format_irreps(counts)}")
        if args.out:
            print(f"  X (rows = symmetry-adapted functions) and labels saved to {args.out}")
    return 0


def _cmd_modes(args: argparse.Namespace) -> int:
    res = _one(args.path, args.tol)
    try:
        hessian = np.load(args.hessian)
    except (OSError, ValueError) as exc:
        raise InputError(f"--hessian {args.hessian}: cannot read a numpy array ({exc})") from None
    labels = res.label_modes(hessian, mass_weighted=args.mass_weighted, unit=args.unit)
    freqs = labels.frequencies
    if args.format == "json":
        rows = [
            {
                "mode": k,
                "irrep": labels.irreps[k],
                "purity": float(labels.purity[k]),
                "set": int(labels.degenerate_set[k]),
                "external": bool(labels.external[k]),
                "frequency_cm1": None if freqs is None else float(freqs[k]),
            }
            for k in range(len(labels.irreps))
        ]
        out = {
            "source": args.path,
            "point_group": res.point_group,
            "modes": rows,
            "counts": labels.counts(),
            "symmetry_breaking": labels.symmetry_breaking,
        }
        sys.stdout.write(json.dumps(out, ensure_ascii=False) + "\n")
    else:
        from .spectroscopy import format_irreps

        print(
            f"{args.path}: {res.point_group}; Γ_vib from the Hessian = "
            f"{format_irreps(labels.counts())}"
        )
        for k, irrep in enumerate(labels.irreps):
            f = "" if freqs is None else f"{freqs[k]:10.1f} cm-1"
            ext = "  (translation/rotation)" if labels.external[k] else ""
            print(f"  mode {k:3d}  {irrep:<5} purity {labels.purity[k]:.4f}  {f}{ext}")
    return 0


def _cmd_symmetrize(args: argparse.Namespace) -> int:
    from .descent import distortion_ladder
    from .io import Structure, write_xyz

    res = _one(args.path, args.tol)
    sym = res.symmetrize()
    loose = sorted({t for t in (2 * args.tol, 0.05, 0.1, 0.2, 0.5) if t > args.tol})
    ladder = distortion_ladder(res.structure, tolerances=loose)
    higher = []
    seen = {res.point_group}
    for step in ladder.steps:
        if (
            step.point_group
            and step.point_group not in seen
            and (step.order or 0) > (res.order or 0)
        ):
            seen.add(step.point_group)
            higher.append((step.tolerance, step.point_group))
    if args.out:
        s = res.structure
        write_xyz(
            [
                Structure(
                    s.numbers,
                    sym.positions,
                    comment=f"symmetrized to {res.point_group} by gammatrace",
                )
            ],
            args.out,
        )
    if args.format == "json":
        out = {
            "source": args.path,
            "point_group": res.point_group,
            "rms_displacement": sym.rms_displacement,
            "max_displacement": sym.max_displacement,
            "most_moved_atom": sym.most_moved_atom,
            "max_deviation": sym.max_deviation,
            "higher_groups": [{"tolerance": t, "point_group": g} for t, g in higher],
            "saved": args.out,
        }
        sys.stdout.write(json.dumps(out, ensure_ascii=False) + "\n")
    else:
        print(
            f"{args.path}: symmetrized to {res.point_group}: RMS displacement "
            f"{sym.rms_displacement:.2e} Å, largest {sym.max_displacement:.2e} Å "
            f"(atom {sym.most_moved_atom}); remaining deviation {sym.max_deviation:.1e} Å"
        )
        for t, g in higher:
            print(f"  within {t:g} Å this is {g}")
        if args.out:
            print(f"  written to {args.out}")
    return 0


def add_commands(subparsers: Any) -> None:
    """Add ``salc``, ``modes`` and ``symmetrize`` to the ``gammatrace`` subcommands."""
    from .analysis import DEFAULT_TOL

    def common(p: argparse.ArgumentParser) -> None:
        p.add_argument("path", metavar="PATH", help="XYZ file (first frame)")
        p.add_argument(
            "--tol",
            type=float,
            default=DEFAULT_TOL,
            help=f"distance tolerance in Å (default {DEFAULT_TOL})",
        )
        p.add_argument("--format", choices=("text", "json"), default="text")

    s = subparsers.add_parser("salc", help="symmetry-adapted basis (sparse X) of a basis")
    common(s)
    s.add_argument(
        "--basis",
        default="cartesian",
        help="cartesian, atoms, bonds, bond_vectors, orbitals:Fe=spd,H=s",
    )
    s.add_argument("--out", default=None, help="save X and its labels (.npz)")
    s.set_defaults(func=_cmd_salc)

    m = subparsers.add_parser("modes", help="label normal modes from a Cartesian Hessian")
    common(m)
    m.add_argument("--hessian", required=True, help="(3N, 3N) Hessian saved with numpy.save")
    m.add_argument(
        "--unit",
        default="mdyn/angstrom",
        help="force-constant unit: mdyn/angstrom, hartree/bohr2 or eV/angstrom2",
    )
    m.add_argument("--mass-weighted", action="store_true", help="the Hessian is mass-weighted")
    m.set_defaults(func=_cmd_modes)

    y = subparsers.add_parser("symmetrize", help="project onto the exact point group")
    common(y)
    y.add_argument("--out", default=None, help="write the symmetrized structure (XYZ)")
    y.set_defaults(func=_cmd_symmetrize)
