"""``gammatrace selection GROUP --band SPEC --transition SPEC``: overtone and combination
bands (species, IR/Raman activity) and electric-dipole transitions in one point group."""

from __future__ import annotations

import argparse
import sys

from ..spectroscopy import format_irreps
from ..tables.products import selection
from ._shared import add_format, dump, write

__all__ = ["register", "run"]


def _activity(active: bool) -> str:
    return "active" if active else "inactive"


def run(args: argparse.Namespace) -> int:
    bands, transitions = args.band or [], args.transition or []
    if not bands and not transitions:
        print("gammatrace selection: give at least one --band or --transition", file=sys.stderr)
        return 2
    result = selection(args.group, bands, transitions)
    if args.format == "json":
        write(dump(result) + "\n")
        return 0
    lines = [result["group"]]
    width = max(len(x) for x in [*bands, *transitions]) + 1
    for b in result["bands"]:
        lines.append(
            f"  {b['band'] + ':':<{width}} {format_irreps(b['irreps'])}   "
            f"IR {_activity(b['ir_active'])}, Raman {_activity(b['raman_active'])}"
        )
    for t in result["transitions"]:
        verdict = f"allowed ({', '.join(t['components'])})" if t["allowed"] else "forbidden"
        lines.append(f"  {t['transition'] + ':':<{width}} electric-dipole {verdict}")
    write("\n".join(lines) + "\n")
    return 0


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    s = sub.add_parser(
        "selection", help="species and activity of overtone/combination bands; dipole transitions"
    )
    s.add_argument("group", metavar="GROUP", help="e.g. C2v, D6h, Oh, D∞h (or Dinfh), K_h")
    s.add_argument(
        "--band",
        action="append",
        metavar="SPEC",
        help="T1u^2 (first overtone: symmetric square), T1u^3, E1u+E2g (combination), A1+E^2",
    )
    s.add_argument(
        "--transition",
        action="append",
        metavar="SPEC",
        help="A1g->T1u: electric-dipole transition between two states",
    )
    add_format(s)
    s.set_defaults(func=run)
