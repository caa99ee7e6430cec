"""``gammatrace ladder PATH...``: the point group at each of a series of tolerances, the
largest deviation, and the correlation between successive groups."""

from __future__ import annotations

import argparse
import os
import sys

from ..descent import distortion_ladder
from ..errors import GammatraceError
from ..pictures import draw_ladder
from ._shared import (
    add_cell,
    add_format,
    dump,
    error_record,
    fail,
    skip_unread,
    structures,
    watched,
    write,
)

__all__ = ["register", "run"]


def _parse_tolerances(text: str | None) -> list[float] | None:
    if text is None:
        return None
    try:
        values = [float(t) for t in text.split(",") if t.strip()]
    except ValueError:
        raise argparse.ArgumentTypeError(
            f"--tolerances: expected comma-separated distances in Å, got '{text}'"
        ) from None
    if not values or any(not v > 0 for v in values):
        raise argparse.ArgumentTypeError(
            f"--tolerances: every tolerance must be a positive distance in Å, got '{text}'"
        )
    return values


def run(args: argparse.Namespace) -> int:
    try:
        tolerances = _parse_tolerances(args.tolerances)
    except argparse.ArgumentTypeError as exc:
        print(f"gammatrace: {exc}", file=sys.stderr)
        return 2
    status = 0
    for source, index, item in watched(structures(args.paths, args.cell)):
        if skip_unread(item, args.format):
            status = 1
            continue
        try:
            ladder = distortion_ladder(item, tolerances)
        except GammatraceError as exc:
            status = 1
            if args.format == "json":
                write(dump(error_record(source, index, exc)) + "\n")
            fail(exc, args.traceback, f"{source} [frame {index}]: ")
            continue
        if args.draw:
            try:
                os.makedirs(args.draw, exist_ok=True)
                stem = os.path.splitext(os.path.basename(source))[0] or "stdin"
                draw_ladder(ladder, os.path.join(args.draw, f"{stem}_{index}_ladder.png"))
            except (GammatraceError, OSError) as exc:
                status = 1
                fail(exc, args.traceback, f"{source} [frame {index}]: ")
        if args.format == "json":
            out = {"source": source, "index": index}
            out.update(ladder.to_dict())
            out["source"] = source
            write(dump(out) + "\n")
        else:
            write(f"[frame {index}] {ladder.to_text()}\n\n")
        sys.stdout.flush()
    return status


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    lad = sub.add_parser("ladder", help="point groups over a series of tolerances")
    lad.add_argument("paths", nargs="+", metavar="PATH", help="XYZ file(s), '-' for stdin")
    lad.add_argument(
        "--tolerances",
        default=None,
        metavar="T1,T2,...",
        help="comma-separated tolerances in Å (default: 13 from 1e-4 to 0.5, geometric)",
    )
    add_format(lad)
    add_cell(lad)
    lad.add_argument(
        "--draw",
        default=None,
        metavar="DIR",
        help="write a PNG of each ladder (group order against tolerance) into DIR "
        "(NAME_INDEX_ladder.png)",
    )
    lad.set_defaults(func=run)
