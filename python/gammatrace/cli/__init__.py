"""The ``gammatrace`` command line: one module per command, registered here.

Commands: ``analyze``, ``table``, ``correlate``, ``selection``, ``screen``, ``sites``,
``ladder``, ``salc``, ``modes``, ``symmetrize``, ``demo``. Each command module has
``register(subparsers)`` and ``run(args)``; the shared options, writer and error line live
in :mod:`._shared`.
Machine-readable output follows shared/INTERFACE.md. Exit status: 0 when everything was analysed,
1 when anything failed (the rest is still written), 2 for a bad command line.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence

from ..errors import GammatraceError
from . import (
    analyze,
    correlate,
    demo,
    ladder,
    modes,
    salc,
    screen,
    selection,
    sites,
    symmetrize,
    table,
)
from ._shared import fail

__all__ = ["main"]

#: The commands in the order ``--help`` lists them.
COMMANDS = (
    analyze,
    table,
    correlate,
    selection,
    screen,
    sites,
    ladder,
    salc,
    modes,
    symmetrize,
    demo,
)


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="gammatrace",
        description="Molecular point groups, characters and vibrational symmetry.",
    )
    p.add_argument("--traceback", action="store_true", help="print full tracebacks on errors")
    sub = p.add_subparsers(dest="command", required=True)
    for command in COMMANDS:
        command.register(sub)
    return p


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit status (0, 1 or 2)."""
    parser = _parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # argparse: 2 for a bad command line, 0 for --help
        return int(exc.code or 0)
    if getattr(args, "tol", 1.0) is not None and getattr(args, "tol", 1.0) <= 0:
        print(
            f"gammatrace: --tol must be a positive distance in Å, got {args.tol}", file=sys.stderr
        )
        return 2
    try:
        return int(args.func(args))
    except GammatraceError as exc:
        fail(exc, args.traceback)
        return 1
    except BrokenPipeError:
        return 0
