"""``gammatrace modes PATH --hessian H.npy``: normal-mode labels from a Cartesian Hessian."""

from __future__ import annotations

import argparse
import json
import sys

import numpy as np

from ..errors import InputError
from ..spectroscopy import format_irreps
from ._shared import add_format, add_tolerance, first_structure

__all__ = ["register", "run"]


def run(args: argparse.Namespace) -> int:
    res = first_structure(args.path, args.tol)
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
        print(
            f"{args.path}: {res.point_group}; Γ_vib from the Hessian = "
            f"{format_irreps(labels.counts())}"
        )
        for k, irrep in enumerate(labels.irreps):
            f = "" if freqs is None else f"{freqs[k]:10.1f} cm-1"
            ext = "  (translation/rotation)" if labels.external[k] else ""
            print(f"  mode {k:3d}  {irrep:<5} purity {labels.purity[k]:.4f}  {f}{ext}")
    return 0


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    m = sub.add_parser("modes", help="label normal modes from a Cartesian Hessian")
    m.add_argument("path", metavar="PATH", help="XYZ file (first frame)")
    add_tolerance(m)
    add_format(m)
    m.add_argument("--hessian", required=True, help="(3N, 3N) Hessian saved with numpy.save")
    m.add_argument(
        "--unit",
        default="mdyn/angstrom",
        help="force-constant unit: mdyn/angstrom, hartree/bohr2 or eV/angstrom2",
    )
    m.add_argument("--mass-weighted", action="store_true", help="the Hessian is mass-weighted")
    m.set_defaults(func=run)
