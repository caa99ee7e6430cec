"""``gammatrace salc PATH``: the symmetry-adapted basis (sparse X) of a basis, saved as .npz."""

from __future__ import annotations

import argparse
import json
import sys

from ..bases import parse_basis
from ..spectroscopy import format_irreps
from ..text import plural
from ._shared import add_cell, add_format, add_tolerance, first_structure

__all__ = ["register", "run"]


def run(args: argparse.Namespace) -> int:
    from ..bases.matrices import save_npz

    res = first_structure(args.path, args.tol, args.cell)
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
        print(
            f"{args.path}: {res.point_group}, basis {args.basis}, dimension "
            f"{sab.matrix.shape[0]}, {plural(sab.matrix.nnz, 'nonzero')} in X"
        )
        print(f"  Γ = {format_irreps(counts)}")
        if args.out:
            print(f"  X (rows = symmetry-adapted functions) and labels saved to {args.out}")
    return 0


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    s = sub.add_parser("salc", help="symmetry-adapted basis (sparse X) of a basis")
    s.add_argument("path", metavar="PATH", help="XYZ file (first frame)")
    add_tolerance(s)
    add_cell(s)
    add_format(s)
    s.add_argument(
        "--basis",
        default="cartesian",
        help="cartesian, atoms, bonds, bond_vectors, orbitals:Fe=spd,H=s",
    )
    s.add_argument("--out", default=None, help="save X and its labels (.npz)")
    s.set_defaults(func=run)
