"""``gammatrace analyze``: point group, representations and vibrations of every structure."""

from __future__ import annotations

import argparse
import os
import sys

from ..analysis import analyze_many
from ..bases import parse_basis
from ..errors import GammatraceError
from ..io import FrameError
from ..pictures import draw_symmetry
from ._shared import add_cell, add_format, add_tolerance, dump, fail, write

__all__ = ["register", "run"]


def run(args: argparse.Namespace) -> int:
    bases = ["atoms", "cartesian"] + [
        b for b in (args.basis or []) if b not in ("atoms", "cartesian")
    ]
    try:
        for spec in bases:
            parse_basis(spec)
    except GammatraceError as exc:
        fail(exc, args.traceback)
        return 2
    status = 0
    for result in analyze_many(args.paths, tol=args.tol, cell=args.cell):
        if isinstance(result, FrameError):
            status = 1
            if args.format == "json":
                write(dump(result.to_dict()) + "\n")
            print(
                f"gammatrace: {result.type}: {result.source} [frame {result.index}]: "
                f"{result.message}",
                file=sys.stderr,
            )
            continue
        try:
            if args.draw:
                os.makedirs(args.draw, exist_ok=True)
                stem = os.path.splitext(os.path.basename(result.structure.source))[0] or "stdin"
                draw_symmetry(
                    result, os.path.join(args.draw, f"{stem}_{result.structure.index}.png")
                )
            if args.format == "json":
                write(dump(result.to_dict(bases, orbits=args.orbits)) + "\n")
            else:
                write(result.report(bases, worked=not args.brief) + "\n")
                if args.orbits:
                    for o in result.orbits:
                        write(f"    orbit of {o.size} ({o.site_group}): atoms {o.atoms}\n")
                write("\n")
        except GammatraceError as exc:
            status = 1
            err = FrameError(
                result.structure.source, result.structure.index, type(exc).__name__, str(exc)
            )
            if args.format == "json":
                write(dump(err.to_dict()) + "\n")
            fail(exc, args.traceback)
        sys.stdout.flush()
    return status


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    a = sub.add_parser("analyze", help="point group, representations and vibrations")
    a.add_argument("paths", nargs="+", metavar="PATH", help="XYZ file(s), '-' for stdin")
    add_tolerance(a)
    add_format(a)
    add_cell(a)
    a.add_argument(
        "--basis",
        action="append",
        metavar="SPEC",
        help="extra basis: pi, bonds, bond_vectors, orbitals:Fe=spd,H=s "
        "(repeatable; atoms and cartesian are always included)",
    )
    a.add_argument("--orbits", action="store_true", help="list symmetry-distinct atoms")
    a.add_argument("--brief", action="store_true", help="text: omit the per-class tables")
    a.add_argument(
        "--draw",
        default=None,
        metavar="DIR",
        help="write a PNG of each structure with its symmetry elements into DIR",
    )
    a.set_defaults(func=run)
