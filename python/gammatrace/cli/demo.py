"""``gammatrace demo``: run the bundled (invented) demo scenario."""

from __future__ import annotations

import argparse

from ..demo import run_demo

__all__ = ["register", "run"]


def run(args: argparse.Namespace) -> int:
    return run_demo(out=args.out)


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    d = sub.add_parser("demo", help="run the bundled (invented) demo scenario")
    d.add_argument("--out", default=None, help="folder for the demo's files and pictures")
    d.set_defaults(func=run)
