"""``gammatrace salc PATH``: the symmetry-adapted basis of a basis, written out and saved.

For a basis of up to :data:`LISTING_LIMIT` functions (or any size with ``--list all``) every
symmetry-adapted function (row of X) is written out, grouped by irrep in X's row order, as a
normalised combination of named basis functions (:mod:`gammatrace.bases.naming`: names,
coefficient cutoff, exact forms); ``--out X.npz`` saves the whole sparse X and its labels.
Larger bases are reduced with a progress bar on standard error (a terminal only).
"""

from __future__ import annotations

import argparse

from ..bases import check_matrix_kind, parse_basis
from ..bases.naming import COEFFICIENT_CUTOFF
from ..spectroscopy import format_irreps
from ..text import plural
from ._shared import add_cell, add_format, add_tolerance, dump, first_structure, write

__all__ = ["LISTING_LIMIT", "register", "run"]

#: Bases with more functions than this are not written out unless ``--list all``.
LISTING_LIMIT = 300
#: Text lines of a written-out function wrap before this width.
_WIDTH = 100


def _listed(args: argparse.Namespace, dimension: int) -> bool:
    if args.list == "all":
        return True
    if args.list == "none":
        return False
    return dimension <= LISTING_LIMIT


def _wrap(head: str, pieces: list, width: int = _WIDTH) -> list:
    """``head`` then the pieces, broken before a piece when a line would pass ``width``;
    continuation lines are indented under the first piece."""
    indent = " " * len(head)
    lines, line = [], head + pieces[0]
    for piece in pieces[1:]:
        if len(line) + len(piece) > width:
            lines.append(line)
            line = indent + piece.lstrip()
        else:
            line += piece
    lines.append(line)
    return lines


def _text_listing(combos: list) -> list:
    width = max(len(c.label) for c in combos)
    lines = [
        f"  SALCs (rows of X, normalised; coefficients below {COEFFICIENT_CUTOFF:g} left out):"
    ]
    for c in combos:
        lines.extend(_wrap(f"    {c.label:<{width}}  ", c.pieces()))
    return lines


def run(args: argparse.Namespace) -> int:
    from ..bases.matrices import save_npz, symmetry_adapted_basis

    res = first_structure(args.path, args.tol, args.cell)
    basis = parse_basis(args.basis)
    check_matrix_kind(basis)  # before resolving: the unsupported kind is the first thing to say
    resolved = res.resolve_basis(basis)
    dimension = resolved.dimension
    listed = _listed(args, dimension)
    # the bar is for bases too large to list (terminals only); small ones finish at once
    bar = None if dimension > LISTING_LIMIT else False
    sab = symmetry_adapted_basis(res.symmetry, resolved, progress=bar)
    if args.out:
        save_npz(args.out, sab.matrix, sab.labels)
    counts = {k: int(v) for k, v in sab.multiplicities.items() if v}
    combos = sab.combinations() if listed and dimension else []
    if args.format == "json":
        out = {
            "source": args.path,
            "point_group": res.point_group,
            "basis": args.basis,
            "dimension": int(sab.matrix.shape[0]),
            "nnz": int(sab.matrix.nnz),
            "multiplicities": counts,
            "labels": [list(lab) for lab in sab.labels],
            "saved": args.out,
            "listed": listed,
            "listing_limit": LISTING_LIMIT,
            "cutoff": COEFFICIENT_CUTOFF,
            "salcs": [c.to_dict() for c in combos] if listed else None,
        }
        write(dump(out) + "\n")
        return 0
    lines = [
        f"{args.path}: {res.point_group}, basis {args.basis}, dimension "
        f"{sab.matrix.shape[0]}, {plural(sab.matrix.nnz, 'nonzero')} in X",
        f"  Γ = {format_irreps(counts)}",
    ]
    if combos:
        lines.extend(_text_listing(combos))
    elif not listed:
        why = (
            "--list none"
            if args.list == "none"
            else f"{plural(dimension, 'function')} is more than the listing limit of "
            f"{LISTING_LIMIT}; --list all writes them out"
        )
        lines.append(f"  SALCs not listed ({why}); --out X.npz saves the whole basis")
    if args.out:
        lines.append(f"  X (rows = symmetry-adapted functions) and labels saved to {args.out}")
    write("\n".join(lines) + "\n")
    return 0


def register(sub) -> None:
    """Add the command to the ``gammatrace`` subcommands."""
    s = sub.add_parser(
        "salc",
        help="symmetry-adapted functions of a basis: written out by irrep, saved as sparse X",
    )
    s.add_argument("path", metavar="PATH", help="XYZ file (first frame)")
    add_tolerance(s)
    add_cell(s)
    add_format(s)
    s.add_argument(
        "--basis",
        default="cartesian",
        help="cartesian, atoms, bonds, bond_vectors, pi, orbitals:Fe=spd,H=s",
    )
    s.add_argument(
        "--list",
        choices=("auto", "all", "none"),
        default="auto",
        help=f"write out every symmetry-adapted function: auto (default) for bases of up to "
        f"{LISTING_LIMIT} functions, all for any size, none never",
    )
    s.add_argument("--out", default=None, help="save X and its labels (.npz)")
    s.set_defaults(func=run)
