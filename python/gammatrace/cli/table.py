"""``gammatrace table GROUP``: the character table of any point group."""

from __future__ import annotations

import argparse

from ..errors import GammatraceError
from ..tables import get_table
from ._shared import add_format, dump, fail, write

__all__ = ["register", "run"]


def run(args: argparse.Namespace) -> int:
    try:
        table = get_table(args.group)
    except GammatraceError as exc:
        fail(exc, args.traceback)
        return 1
    if args.format == "json":
        write(dump(table.to_dict()) + "\n")
    else:
        write(table.to_text() + "\n")
    return 0


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    t = sub.add_parser("table", help="the character table of a point group")
    t.add_argument("group", metavar="GROUP", help="e.g. C2v, D6h, Td, Ih, C7v, D12d, D∞h")
    add_format(t)
    t.set_defaults(func=run)
