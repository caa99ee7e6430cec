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
import importlib
import sys
from collections.abc import Sequence

from ..errors import GammatraceError
from ._shared import fail

__all__ = ["COMMANDS", "main"]

#: The command modules in the order ``--help`` lists them. Only the one named on the command
#: line is imported (start-up time); ``--help`` and unknown names load them all.
COMMANDS = (
    "analyze",
    "table",
    "correlate",
    "selection",
    "screen",
    "sites",
    "ladder",
    "salc",
    "modes",
    "symmetrize",
    "demo",
)


def _parser(only: str | None = None) -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="gammatrace",
        description="Molecular point groups, characters and vibrational symmetry.",
    )
    p.add_argument("--traceback", action="store_true", help="print full tracebacks on errors")
    sub = p.add_subparsers(dest="command", required=True)
    for name in COMMANDS:
        if only is None or name == only:
            importlib.import_module(f"{__name__}.{name}").register(sub)
    return p


def _command_named(argv: Sequence[str]) -> str | None:
    """The command of a command line (the first word that is not an option), when known."""
    for word in argv:
        if not word.startswith("-"):
            return word if word in COMMANDS else None
    return None


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit status (0, 1 or 2)."""
    words = list(sys.argv[1:] if argv is None else argv)
    parser = _parser(_command_named(words))
    try:
        args = parser.parse_args(words)
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
