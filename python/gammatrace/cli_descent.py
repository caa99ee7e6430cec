"""Command-line commands for site symmetry and descent in symmetry: ``sites`` and ``ladder``.

:func:`add_commands` adds both to the ``gammatrace`` parser's subcommands (``cli._parser``):

* ``gammatrace sites PATH... [--tol DIST] [--format json] [--induced]`` — the symmetry-distinct
  atoms of each structure with their site groups, oriented; ``--induced`` adds Γ_3N and Γ_vib
  by the site-symmetry route, checked against the counted characters.
* ``gammatrace ladder PATH... [--tolerances T1,T2,...] [--format json]`` — the point group at
  each tolerance, the largest deviation, and the correlation between successive groups.

JSON Lines, one object per structure, in input order; a structure that fails is written as
``{"source", "index", "error": {"type", "message"}}``. Exit status 0, 1 when anything failed,
2 for a bad command line.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence
from typing import Any

from .cli_output import dump, fail, write
from .errors import GammatraceError

__all__ = ["add_commands"]


def _error_record(source: str, index: int, exc: BaseException) -> dict:
    return {
        "source": source,
        "index": index,
        "error": {"type": type(exc).__name__, "message": str(exc)},
    }


def _structures(paths: Sequence[str]):
    """(source, index, Structure or FrameError) for every frame of every path."""
    from .io import FrameError, read_structures

    for path in paths:
        try:
            frames = read_structures(path)
        except GammatraceError as exc:
            yield str(path), 0, FrameError(str(path), 0, type(exc).__name__, str(exc))
            continue
        for fr in frames:
            yield fr.source, fr.index, fr


def _skip_unread(item: Any, fmt: str) -> bool:
    """Write a frame that could not be read (JSON record and one stderr line); True if so."""
    from .io import FrameError

    if not isinstance(item, FrameError):
        return False
    if fmt == "json":
        write(dump(item.to_dict()) + "\n")
    print(
        f"gammatrace: {item.type}: {item.source} [frame {item.index}]: {item.message}",
        file=sys.stderr,
    )
    return True


def _cmd_sites(args: argparse.Namespace) -> int:
    from .analysis import analyze_structure
    from .descent import check_induced, site_analysis

    status = 0
    for source, index, item in _structures(args.paths):
        if _skip_unread(item, args.format):
            status = 1
            continue
        try:
            analysis = analyze_structure(item, args.tol)
            sites = site_analysis(analysis)
            induced = check_induced(analysis) if args.induced else None
        except GammatraceError as exc:
            status = 1
            if args.format == "json":
                write(dump(_error_record(source, index, exc)) + "\n")
            fail(exc, args.traceback, f"{source} [frame {index}]: ")
            continue
        if args.format == "json":
            out = {"source": source, "index": index, "tolerance": args.tol}
            out.update(sites.to_dict())
            if induced is not None:
                out["induced"] = induced.to_dict()
            write(dump(out) + "\n")
        else:
            write(f"{source} [frame {index}]\n{sites.to_text()}\n")
            if induced is not None:
                write(induced.to_text() + "\n  (agrees with the counted characters)\n")
            write("\n")
        sys.stdout.flush()
    return status


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


def _cmd_ladder(args: argparse.Namespace) -> int:
    from .descent import distortion_ladder

    try:
        tolerances = _parse_tolerances(args.tolerances)
    except argparse.ArgumentTypeError as exc:
        print(f"gammatrace: {exc}", file=sys.stderr)
        return 2
    status = 0
    for source, index, item in _structures(args.paths):
        if _skip_unread(item, args.format):
            status = 1
            continue
        try:
            ladder = distortion_ladder(item, tolerances)
        except GammatraceError as exc:
            status = 1
            if args.format == "json":
                write(dump(_error_record(source, index, exc)) + "\n")
            fail(exc, args.traceback, f"{source} [frame {index}]: ")
            continue
        if args.format == "json":
            out = {"source": source, "index": index}
            out.update(ladder.to_dict())
            out["source"] = source
            write(dump(out) + "\n")
        else:
            write(f"[frame {index}] {ladder.to_text()}\n\n")
        sys.stdout.flush()
    return status


def add_commands(subparsers: Any) -> None:
    """Add ``sites`` and ``ladder`` to the subcommands of the ``gammatrace`` parser.

    Parameters
    ----------
    subparsers
        The object returned by ``ArgumentParser.add_subparsers``; the parent parser is
        expected to define ``--traceback``.
    """
    from .analysis import DEFAULT_TOL

    s = subparsers.add_parser("sites", help="symmetry-distinct atoms and their site groups")
    s.add_argument("paths", nargs="+", metavar="PATH", help="XYZ file(s), '-' for stdin")
    s.add_argument(
        "--tol", type=float, default=DEFAULT_TOL, help=f"distance tolerance in Å ({DEFAULT_TOL})"
    )
    s.add_argument("--format", choices=("text", "json"), default="text")
    s.add_argument(
        "--induced",
        action="store_true",
        help="add Γ_3N and Γ_vib by the site-symmetry route, checked against counting",
    )
    s.set_defaults(func=_cmd_sites)

    lad = subparsers.add_parser("ladder", help="point groups over a series of tolerances")
    lad.add_argument("paths", nargs="+", metavar="PATH", help="XYZ file(s), '-' for stdin")
    lad.add_argument(
        "--tolerances",
        default=None,
        metavar="T1,T2,...",
        help="comma-separated tolerances in Å (default: 13 from 1e-4 to 0.5, geometric)",
    )
    lad.add_argument("--format", choices=("text", "json"), default="text")
    lad.set_defaults(func=_cmd_ladder)
