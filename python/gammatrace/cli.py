"""The ``gammatrace`` command line.

Commands: ``analyze`` (structures -> point group, representations, vibrations), ``table``
(character tables), ``correlate`` (descent in symmetry), ``demo`` (the bundled scenario).
Machine-readable output follows shared/INTERFACE.md. Exit status: 0 when everything was analysed,
1 when anything failed (the rest is still written), 2 for a bad command line.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence

from .bases import parse_basis
from .cli_output import dump, fail, write
from .errors import GammatraceError

__all__ = ["main"]


def _cmd_analyze(args: argparse.Namespace) -> int:
    from .analysis import analyze_many
    from .io import FrameError

    bases = ["atoms", "cartesian"] + [
        b for b in (args.basis or []) if b not in ("atoms", "cartesian")
    ]
    try:
        for spec in bases:
            parse_basis(spec)
    except GammatraceError as exc:
        fail(exc, args.traceback)
        return 2
    status = 0
    for result in analyze_many(args.paths, tol=args.tol):
        if isinstance(result, FrameError):
            status = 1
            if args.format == "json":
                write(dump(result.to_dict()) + "\n")
            print(
                f"gammatrace: {result.type}: {result.source} [frame {result.index}]: "
                f"{result.message}",
                file=sys.stderr,
            )
            continue
        try:
            if args.draw:
                import os

                from .pictures import draw_symmetry

                os.makedirs(args.draw, exist_ok=True)
                stem = os.path.splitext(os.path.basename(result.structure.source))[0] or "stdin"
                draw_symmetry(
                    result, os.path.join(args.draw, f"{stem}_{result.structure.index}.png")
                )
            if args.format == "json":
                write(dump(result.to_dict(bases, orbits=args.orbits)) + "\n")
            else:
                write(result.report(bases, worked=not args.brief) + "\n")
                if args.orbits:
                    for o in result.orbits:
                        write(f"    orbit of {o.size} ({o.site_group}): atoms {o.atoms}\n")
                write("\n")
        except GammatraceError as exc:
            status = 1
            err = FrameError(
                result.structure.source, result.structure.index, type(exc).__name__, str(exc)
            )
            if args.format == "json":
                write(dump(err.to_dict()) + "\n")
            fail(exc, args.traceback)
        sys.stdout.flush()
    return status


def _cmd_table(args: argparse.Namespace) -> int:
    from .tables import get_table

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


def _cmd_correlate(args: argparse.Namespace) -> int:
    try:
        from .tables import correlate
    except ImportError:
        print("gammatrace: correlate is not available in this build", file=sys.stderr)
        return 1
    try:
        result = correlate(args.group, args.subgroup)
    except GammatraceError as exc:
        fail(exc, args.traceback)
        return 1
    if args.format == "json":
        write(dump(result) + "\n")
    else:
        write(f"{result['group']} -> {result['subgroup']}\n")
        for emb in result["embeddings"]:
            write(f"  {emb['description']}\n")
            for irrep, parts in emb["correlation"].items():
                rhs = " + ".join(f"{n if n != 1 else ''}{k}" for k, n in parts.items())
                write(f"    {irrep:>6s} -> {rhs}\n")
    return 0


def _cmd_screen(args: argparse.Namespace) -> int:
    from .screen import screen

    summary = screen(
        args.paths,
        args.out,
        fmt=args.out_format,
        tol=args.tol,
        n_threads=args.threads,
        chunk_size=args.chunk,
        progress=not args.no_progress,
        resume=args.resume,
    )
    groups = summary["groups"]
    n = summary["n"]
    lines = [
        f"screened {n} structures"
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
        from .pictures import plot_group_counts

        plot_group_counts({g: len(m) for g, m in groups.items()}, args.chart)
    return 1 if summary["failures"] else 0


def _cmd_demo(args: argparse.Namespace) -> int:
    from .demo import run_demo

    return run_demo(out=args.out)


def _parser() -> argparse.ArgumentParser:
    from .analysis import DEFAULT_TOL

    p = argparse.ArgumentParser(
        prog="gammatrace",
        description="Molecular point groups, characters and vibrational symmetry.",
    )
    p.add_argument("--traceback", action="store_true", help="print full tracebacks on errors")
    sub = p.add_subparsers(dest="command", required=True)

    a = sub.add_parser("analyze", help="point group, representations and vibrations")
    a.add_argument("paths", nargs="+", metavar="PATH", help="XYZ file(s), '-' for stdin")
    a.add_argument(
        "--tol",
        type=float,
        default=DEFAULT_TOL,
        help=f"distance tolerance in Å (default {DEFAULT_TOL})",
    )
    a.add_argument("--format", choices=("text", "json"), default="text")
    a.add_argument(
        "--basis",
        action="append",
        metavar="SPEC",
        help="extra basis: pi, bonds, bond_vectors, orbitals:Fe=spd,H=s "
        "(repeatable; atoms and cartesian are always included)",
    )
    a.add_argument("--orbits", action="store_true", help="list symmetry-distinct atoms")
    a.add_argument("--brief", action="store_true", help="text: omit the per-class tables")
    a.add_argument(
        "--draw",
        default=None,
        metavar="DIR",
        help="write a PNG of each structure with its symmetry elements into DIR",
    )
    a.set_defaults(func=_cmd_analyze)

    t = sub.add_parser("table", help="the character table of a point group")
    t.add_argument("group", metavar="GROUP", help="e.g. C2v, D6h, Td, Ih, C7v, D12d, D∞h")
    t.add_argument("--format", choices=("text", "json"), default="text")
    t.set_defaults(func=_cmd_table)

    c = sub.add_parser("correlate", help="how irreps split in a subgroup")
    c.add_argument("group", metavar="GROUP")
    c.add_argument("subgroup", metavar="SUBGROUP")
    c.add_argument("--format", choices=("text", "json"), default="text")
    c.set_defaults(func=_cmd_correlate)

    sc = sub.add_parser("screen", help="batch-screen ensembles into a table")
    sc.add_argument("paths", nargs="+", metavar="PATH", help="multi-frame XYZ file(s)")
    sc.add_argument("--out", default=None, help="output table (.jsonl, .csv or .parquet)")
    sc.add_argument(
        "--out-format",
        choices=("jsonl", "csv", "parquet"),
        default=None,
        help="override the format implied by --out's extension",
    )
    sc.add_argument(
        "--tol",
        type=float,
        default=DEFAULT_TOL,
        help=f"distance tolerance in Å (default {DEFAULT_TOL})",
    )
    sc.add_argument("--threads", type=int, default=0, help="core threads (0 = all cores)")
    sc.add_argument("--chunk", type=int, default=8192, help="structures per chunk")
    sc.add_argument(
        "--resume", action="store_true", help="skip frames already in --out (JSON Lines / CSV)"
    )
    sc.add_argument("--no-progress", action="store_true", help="no progress bar")
    sc.add_argument("--show", type=int, default=5, help="frames listed per point group")
    sc.add_argument("--chart", default=None, help="PNG bar chart of point-group counts")
    sc.set_defaults(func=_cmd_screen)

    from . import cli_basis, cli_descent

    cli_descent.add_commands(sub)
    cli_basis.add_commands(sub)

    d = sub.add_parser("demo", help="run the bundled (invented) demo scenario")
    d.add_argument("--out", default=None, help="folder for the demo's files and pictures")
    d.set_defaults(func=_cmd_demo)
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


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
