"""What every command shares, defined once: the common options, the writer (JSON rows, UTF-8
text on stdout), the one stderr error line, and reading frames with failures kept in place.

Command modules import this and the layers below; never :mod:`gammatrace.cli` itself.
"""

from __future__ import annotations

import argparse
import sys
import traceback
from collections.abc import Iterable, Iterator, Sequence
from typing import Any

import orjson

from .._progress import progress
from ..analysis import Analysis, analyze
from ..errors import GammatraceError
from ..group import DEFAULT_TOL
from ..io import CELL_CHOICES, FrameError, apply_cell, read_structures

__all__ = [
    "EXPORT_FORMATS",
    "add_cell",
    "add_format",
    "add_tolerance",
    "dump",
    "error_record",
    "fail",
    "first_structure",
    "skip_unread",
    "structures",
    "watched",
    "write",
]


def add_tolerance(parser: argparse.ArgumentParser) -> None:
    """``--tol DIST`` (Å, default the core's tolerance)."""
    parser.add_argument(
        "--tol",
        type=float,
        default=DEFAULT_TOL,
        help=f"distance tolerance in Å (default {DEFAULT_TOL})",
    )


def add_cell(parser: argparse.ArgumentParser) -> None:
    """``--cell refuse|ignore|unwrap``: what to do with periodic frames."""
    parser.add_argument(
        "--cell",
        choices=CELL_CHOICES,
        default=CELL_CHOICES[0],
        help="periodic frames (extended XYZ with pbc/Lattice): refuse them (default: an error "
        "naming the frame; a crystal has a space group, not a point group), ignore the cell "
        "(analyse the coordinates as a finite cluster as given), or unwrap (make molecules "
        "whole across the cell with the minimum-image rule and covalent-radius bonds, then "
        "analyse the whole unwrapped set)",
    )


def add_format(parser: argparse.ArgumentParser, exports: bool = False) -> None:
    """``--format text|json``; with ``exports`` also ``markdown`` and ``latex``, and
    ``--latex-document`` (a whole LaTeX document instead of a fragment)."""
    if not exports:
        parser.add_argument("--format", choices=("text", "json"), default="text")
        return
    parser.add_argument(
        "--format",
        choices=EXPORT_FORMATS,
        default="text",
        help="text (default), json, markdown (pipe tables) or latex (a fragment of tabular "
        "environments needing no package; see --latex-document)",
    )
    parser.add_argument(
        "--latex-document",
        action="store_true",
        help="with --format latex: write a whole document (article class, amsmath) that "
        "pdflatex compiles as it is, instead of a fragment to paste",
    )


#: The choices of ``--format`` for the commands with exports (table, correlate, analyze).
EXPORT_FORMATS = ("text", "json", "markdown", "latex")


def write(text: str) -> None:
    """Write text to stdout as UTF-8, whatever the terminal's encoding."""
    sys.stdout.buffer.write(text.encode("utf-8"))


def dump(obj: Any) -> str:
    """One JSON row, UTF-8 kept (Greek labels, ∞), always valid JSON (a NaN would be null).

    Written with orjson: several times faster than the standard library on these rows.
    """
    return orjson.dumps(obj, option=orjson.OPT_SERIALIZE_NUMPY).decode()


def dump_bytes(obj: Any) -> bytes:
    """:func:`dump` as UTF-8 bytes, ready for ``sys.stdout.buffer``."""
    return orjson.dumps(obj, option=orjson.OPT_SERIALIZE_NUMPY)


def fail(exc: BaseException, show_traceback: bool, where: str = "") -> None:
    """The one stderr line of a failure (``--traceback`` adds the full story)."""
    if show_traceback:
        traceback.print_exception(type(exc), exc, exc.__traceback__, file=sys.stderr)
    print(f"gammatrace: {type(exc).__name__}: {where}{exc}", file=sys.stderr)


def error_record(source: str, index: int, exc: BaseException) -> dict:
    """The JSON row of a structure that failed: ``{"source", "index", "error"}``."""
    return {
        "source": source,
        "index": index,
        "error": {"type": type(exc).__name__, "message": str(exc)},
    }


def structures(paths: Sequence[str], cell: str | None = None):
    """(source, index, Structure or FrameError) for every frame of every path; a periodic
    frame goes through the ``cell`` choice (:func:`gammatrace.io.apply_cell`), and one that
    is refused becomes a FrameError in its place."""
    for path in paths:
        try:
            frames = read_structures(path)
        except GammatraceError as exc:
            yield str(path), 0, FrameError(str(path), 0, type(exc).__name__, str(exc))
            continue
        for fr in frames:
            if not isinstance(fr, FrameError):
                try:
                    fr = apply_cell(fr, cell)
                except GammatraceError as exc:
                    fr = FrameError(fr.source, fr.index, type(exc).__name__, str(exc))
            yield fr.source, fr.index, fr


def skip_unread(item: Any, fmt: str) -> bool:
    """Write a frame that could not be read (JSON record and one stderr line); True if so."""
    if not isinstance(item, FrameError):
        return False
    if fmt == "json":
        write(dump(item.to_dict()) + "\n")
    print(
        f"gammatrace: {item.type}: {item.source} [frame {item.index}]: {item.message}",
        file=sys.stderr,
    )
    return True


def first_structure(path: str, tol: float, cell: str | None = None) -> Analysis:
    """The analysis of the first frame of ``path`` (the one-structure commands)."""
    return analyze(path, tol=tol, frame=0, cell=cell)


def watched(items: Iterable[Any], unit: str = "frame") -> Iterator[Any]:
    """``items`` with a progress bar on standard error while the results go elsewhere (standard
    output redirected, standard error a terminal); otherwise just ``items``."""
    shown = not sys.stdout.isatty() and sys.stderr.isatty()
    with progress(None, unit=unit, enabled=shown) as bar:
        for item in items:
            yield item
            bar.update(1)
