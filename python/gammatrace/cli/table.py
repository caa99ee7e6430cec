"""``gammatrace table GROUP [--complex]``: the character table of any point group, as printed
(text), as JSON, or for papers and notes (Markdown, LaTeX)."""

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
    shown = table.complex_form() if args.complex else table
    if args.format == "json":
        write(dump(shown.to_dict()) + "\n")
    elif args.format == "markdown":
        write(shown.to_markdown() + "\n")
    elif args.format == "latex":
        write(shown.to_latex(document=args.latex_document))
    else:
        write(shown.to_text() + "\n")
    return 0


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    t = sub.add_parser("table", help="the character table of a point group")
    t.add_argument("group", metavar="GROUP", help="e.g. C2v, D6h, Td, Ih, C7v, D12d, D∞h")
    t.add_argument(
        "--complex",
        action="store_true",
        help="write complex-conjugate pairs apart: one column per class (g and g⁻¹ apart), "
        "one-dimensional irreps with complex characters (JSON: [re, im] pairs)",
    )
    add_format(t, exports=True)
    t.set_defaults(func=run)
