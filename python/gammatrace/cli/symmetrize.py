"""``gammatrace symmetrize PATH``: project a structure onto its exact point group."""

from __future__ import annotations

import argparse
import json
import sys

from ..descent.ladder import distortion_ladder
from ..io import Structure, write_xyz
from ..text import format_length
from ._shared import add_cell, add_format, add_tolerance, first_structure

__all__ = ["register", "run"]


def run(args: argparse.Namespace) -> int:
    res = first_structure(args.path, args.tol, args.cell)
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
                    masses=s.masses,
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
            f"{format_length(sym.rms_displacement)} Å, largest "
            f"{format_length(sym.max_displacement)} Å (atom {sym.most_moved_atom}); remaining "
            f"deviation {format_length(sym.max_deviation)} Å"
        )
        for t, g in higher:
            print(f"  within {t:g} Å this is {g}")
        if args.out:
            print(f"  written to {args.out}")
    return 0


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    y = sub.add_parser("symmetrize", help="project onto the exact point group")
    y.add_argument("path", metavar="PATH", help="XYZ file (first frame)")
    add_tolerance(y)
    add_cell(y)
    add_format(y)
    y.add_argument("--out", default=None, help="write the symmetrized structure (XYZ)")
    y.set_defaults(func=run)
