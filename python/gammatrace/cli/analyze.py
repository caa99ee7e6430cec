"""``gammatrace analyze``: point group, representations and vibrations of every structure."""

from __future__ import annotations

import argparse
import os
import sys

from .._progress import progress
from ..analysis import DEFAULT_BASES, analyze_many
from ..bases import parse_basis
from ..batch.rows import analysis_rows
from ..batch.run import ragged_from_file
from ..errors import GammatraceError
from ..group.chirality import SEARCH_FACTOR
from ..group.measure import EXTENDED_BOUND
from ..io import FrameError
from ..render.grid import LATEX_END, LATEX_PREAMBLE
from ..tables import get_table
from ._shared import (
    add_cell,
    add_format,
    add_tolerance,
    dump,
    dump_bytes,
    fail,
    watched,
    write,
)

__all__ = ["register", "run"]

#: Frames per call into the core on the batch path (rows are written and flushed per chunk).
CHUNK = 4096


def run(args: argparse.Namespace) -> int:
    bases = ["atoms", "cartesian"] + [
        b for b in (args.basis or []) if b not in ("atoms", "cartesian")
    ]
    named = args.measure or []
    try:
        for spec in bases:
            parse_basis(spec)
        named = [get_table(name).name for name in named]
    except GammatraceError as exc:
        fail(exc, args.traceback)
        return 2
    status = 0
    document = args.format == "latex" and args.latex_document
    if document:
        write(LATEX_PREAMBLE)
    plain_json = (
        args.format == "json"
        and len(bases) == len(DEFAULT_BASES)
        and not (args.orbits or args.near or named or args.draw)
    )
    for path in args.paths:
        if plain_json and _is_xyz_file(path):
            status |= _json_rows_of_file(path, args)
        else:
            status |= _results_of(path, args, bases, named)
    if document:
        write(LATEX_END)
    return status


def _is_xyz_file(path: str) -> bool:
    """A file (not standard input) of the XYZ family, which the batch path reads."""
    return path != "-" and os.path.splitext(path)[1].lower() in (".xyz", ".extxyz", "")


def _json_rows_of_file(path: str, args: argparse.Namespace) -> int:
    """JSON Lines of every frame of one XYZ file through the batch path (the same objects
    as one structure at a time, without a Python object per frame); the one-structure path
    when the file cannot be read as a whole or holds no frame, for its error."""
    try:
        data = ragged_from_file(path, args.cell)
    except GammatraceError:
        data = None
    if data is None or len(data) == 0:  # unreadable or empty: the error as reported there
        return _results_of(path, args, list(DEFAULT_BASES), [])
    status = 0
    out = sys.stdout.buffer
    with progress(len(data), enabled=not sys.stdout.isatty() and sys.stderr.isatty()) as bar:
        for a in range(0, len(data), CHUNK):
            b = min(a + CHUNK, len(data))
            lines = []
            for row in analysis_rows(data.slice(a, b), tol=args.tol, chunk_size=CHUNK):
                if "error" in row:
                    status = 1
                    err = row["error"]
                    _frame_failed(row["source"], row["index"], err["type"], err["message"])
                lines.append(dump_bytes(row))
            out.write(b"\n".join(lines) + b"\n")
            out.flush()
            bar.update(b - a)
    return status


def _frame_failed(source: str, index: int, kind: str, message: str) -> None:
    """The standard-error line of a frame that could not be analysed."""
    print(f"gammatrace: {kind}: {source} [frame {index}]: {message}", file=sys.stderr)


def _results_of(path: str, args: argparse.Namespace, bases: list, named: list) -> int:
    """Every structure of one input through the one-structure path, in the chosen format."""
    status = 0
    for result in watched(analyze_many([path], tol=args.tol, cell=args.cell)):
        if isinstance(result, FrameError):
            status = 1
            if args.format == "json":
                write(dump(result.to_dict()) + "\n")
            _frame_failed(result.source, result.index, result.type, result.message)
            continue
        try:
            if args.draw:
                os.makedirs(args.draw, exist_ok=True)
                stem = os.path.splitext(os.path.basename(result.structure.source))[0] or "stdin"
                name = os.path.join(args.draw, f"{stem}_{result.structure.index}")
                from ..pictures import draw_stereogram, draw_symmetry  # matplotlib on demand

                draw_symmetry(result, name + ".png")
                if result.symmetry.group_order is not None:  # finite groups have a stereogram
                    draw_stereogram(result, name + "_stereogram.png")
            if args.format == "json":
                row = result.to_dict(bases, orbits=args.orbits, near=args.near, measure=named)
                write(dump(row) + "\n")
            elif args.format in ("markdown", "latex"):
                extra = _orbit_lines(result) if args.orbits else []
                extra += _near_texts(result, args.near, named)
                worked = not args.brief
                if args.format == "markdown":
                    write(result.to_markdown(bases, worked=worked, extra=extra) + "\n\n")
                else:
                    write(result.to_latex(bases, worked=worked, extra=extra) + "\\bigskip\n\n")
            else:
                write(result.report(bases, worked=not args.brief) + "\n")
                if args.orbits:
                    write("".join(f"    {line}\n" for line in _orbit_lines(result)))
                write(_near_lines(result, args.near, named))
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


def _orbit_lines(result) -> list:
    """The lines of ``--orbits``: one per set of symmetry-equivalent atoms."""
    return [f"orbit of {o.size} ({o.site_group}): atoms {o.atoms}" for o in result.orbits]


def _near_lines(result, near: bool, named: list) -> str:
    """The text lines of ``--near`` and ``--measure``."""
    return "".join(f"  {line}\n" for line in _near_texts(result, near, named))


def _near_texts(result, near: bool, named: list) -> list:
    """The lines of ``--near`` and ``--measure``, unindented."""
    lines = []
    if near:
        found = result.near_symmetry()
        lines += [r.describe("near") for r in found]
        if not found:
            lines.append(f"no higher group within {SEARCH_FACTOR * result.tol:g} Å")
        cm = result.chirality_measure
        lines.append(
            cm.describe("chirality")
            if cm is not None
            else "chirality measure: no improper operation within "
            f"{result.near.extended_bound:.2g} Å"
        )
    lines += [result.symmetry_measure(name).describe("named") for name in named]
    return lines


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    a = sub.add_parser("analyze", help="point group, representations and vibrations")
    a.add_argument("paths", nargs="+", metavar="PATH", help="XYZ file(s), '-' for stdin")
    add_tolerance(a)
    add_format(a, exports=True)
    add_cell(a)
    a.add_argument(
        "--basis",
        action="append",
        metavar="SPEC",
        help="extra basis: pi (p orbitals of the π system; pi:C,N names the elements), "
        "bonds, bond_vectors, orbitals:Fe=spd,H=s "
        "(repeatable; atoms and cartesian are always included)",
    )
    a.add_argument("--orbits", action="store_true", help="list symmetry-distinct atoms")
    a.add_argument(
        "--brief", action="store_true", help="text, markdown, latex: omit the per-class tables"
    )
    a.add_argument(
        "--near",
        action="store_true",
        help=f"list the higher groups found up to {SEARCH_FACTOR:g} x the tolerance, each with "
        "its continuous "
        "symmetry measure (0-100), and the chirality measure",
    )
    a.add_argument(
        "--measure",
        action="append",
        metavar="GROUP",
        help="continuous symmetry measure against a named group, searched up to "
        f"{EXTENDED_BOUND:g} Å (repeatable)",
    )
    a.add_argument(
        "--draw",
        default=None,
        metavar="DIR",
        help="write PNGs into DIR: each structure with one symmetry element per class "
        "(NAME_INDEX.png) and, for finite groups, the stereographic projection of its "
        "elements and of a general position (NAME_INDEX_stereogram.png)",
    )
    a.set_defaults(func=run)
