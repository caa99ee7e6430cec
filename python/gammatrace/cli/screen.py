"""``gammatrace screen``: batch-screen ensembles into a table (JSON Lines, CSV, Parquet)."""

from __future__ import annotations

import argparse
import sys

from ..batch.screen import screen
from ..text import plural
from ._shared import add_cell, add_tolerance

__all__ = ["register", "run"]


def run(args: argparse.Namespace) -> int:
    summary = screen(
        args.paths,
        args.out,
        fmt=args.out_format,
        tol=args.tol,
        n_threads=args.threads,
        chunk_size=args.chunk,
        progress=not args.no_progress,
        resume=args.resume,
        cell=args.cell,
    )
    groups = summary["groups"]
    n = summary["n"]
    lines = [
        f"screened {plural(n, 'structure')}"
        + (f" ({summary['skipped']} already done)" if summary["skipped"] else "")
    ]
    for g, members in sorted(groups.items(), key=lambda kv: (-len(kv[1]), kv[0])):
        shown = ", ".join(members[: args.show])
        more = f", ... (+{len(members) - args.show})" if len(members) > args.show else ""
        lines.append(
            f"  {g:<6} {len(members):>9}  {100 * len(members) / max(n, 1):5.1f}%  {shown}{more}"
        )
    if summary["failures"]:
        lines.append(
            f"  failed {len(summary['failures']):>9}  "
            + ", ".join(summary["failures"][: args.show])
        )
    print("\n".join(lines), file=sys.stderr if args.out is None else sys.stdout)
    if args.chart:
        from ..pictures import plot_group_counts

        plot_group_counts({g: len(m) for g, m in groups.items()}, args.chart)
    return 1 if summary["failures"] else 0


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    sc = sub.add_parser("screen", help="batch-screen ensembles into a table")
    sc.add_argument("paths", nargs="+", metavar="PATH", help="multi-frame XYZ file(s)")
    sc.add_argument("--out", default=None, help="output table (.jsonl, .csv or .parquet)")
    sc.add_argument(
        "--out-format",
        choices=("jsonl", "csv", "parquet"),
        default=None,
        help="override the format implied by --out's extension",
    )
    add_tolerance(sc)
    add_cell(sc)
    sc.add_argument("--threads", type=int, default=0, help="core threads (0 = all cores)")
    sc.add_argument("--chunk", type=int, default=8192, help="structures per chunk")
    sc.add_argument(
        "--resume", action="store_true", help="skip frames already in --out (JSON Lines / CSV)"
    )
    sc.add_argument("--no-progress", action="store_true", help="no progress bar")
    sc.add_argument("--show", type=int, default=5, help="frames listed per point group")
    sc.add_argument("--chart", default=None, help="PNG bar chart of point-group counts")
    sc.set_defaults(func=run)
