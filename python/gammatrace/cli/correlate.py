"""``gammatrace correlate GROUP SUBGROUP``: how irreps split in a subgroup."""

from __future__ import annotations

import argparse

from ..errors import GammatraceError
from ..render import correlation_latex, correlation_markdown
from ..tables import correlate
from ._shared import add_format, dump, fail, write

__all__ = ["register", "run"]


def run(args: argparse.Namespace) -> int:
    try:
        result = correlate(args.group, args.subgroup)
    except GammatraceError as exc:
        fail(exc, args.traceback)
        return 1
    if args.format == "json":
        write(dump(result) + "\n")
    elif args.format == "markdown":
        write(correlation_markdown(result) + "\n")
    elif args.format == "latex":
        write(correlation_latex(result, document=args.latex_document))
    else:
        write(f"{result['group']} -> {result['subgroup']}\n")
        for emb in result["embeddings"]:
            write(f"  {emb['description']}\n")
            for irrep, parts in emb["correlation"].items():
                rhs = " + ".join(f"{n if n != 1 else ''}{k}" for k, n in parts.items())
                write(f"    {irrep:>6s} -> {rhs}\n")
            for other in emb["other_namings"]:
                write(f"    (note: {other['note']})\n")
    return 0


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    c = sub.add_parser("correlate", help="how irreps split in a subgroup")
    c.add_argument("group", metavar="GROUP")
    c.add_argument("subgroup", metavar="SUBGROUP")
    add_format(c, exports=True)
    c.set_defaults(func=run)
