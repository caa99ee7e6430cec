"""``gammatrace sites PATH...``: symmetry-distinct atoms with their oriented site groups;
``--induced`` adds Γ_3N and Γ_vib by the site-symmetry route, checked against counting."""

from __future__ import annotations

import argparse
import sys

from ..analysis import analyze_structure
from ..descent import check_induced, site_analysis
from ..errors import GammatraceError
from ._shared import (
    add_cell,
    add_format,
    add_tolerance,
    dump,
    error_record,
    fail,
    skip_unread,
    structures,
    watched,
    write,
)

__all__ = ["register", "run"]


def run(args: argparse.Namespace) -> int:
    status = 0
    for source, index, item in watched(structures(args.paths, args.cell)):
        if skip_unread(item, args.format):
            status = 1
            continue
        try:
            analysis = analyze_structure(item, args.tol)
            sites = site_analysis(analysis)
            induced = check_induced(analysis) if args.induced else None
        except GammatraceError as exc:
            status = 1
            if args.format == "json":
                write(dump(error_record(source, index, exc)) + "\n")
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


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    s = sub.add_parser("sites", help="symmetry-distinct atoms and their site groups")
    s.add_argument("paths", nargs="+", metavar="PATH", help="XYZ file(s), '-' for stdin")
    add_tolerance(s)
    add_cell(s)
    add_format(s)
    s.add_argument(
        "--induced",
        action="store_true",
        help="add Γ_3N and Γ_vib by the site-symmetry route, checked against counting",
    )
    s.set_defaults(func=run)
