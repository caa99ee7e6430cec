"""Representations, vibrations and whole analyses as tables (our own layout).

- A representation (:func:`representation_grid`) is the table a practitioner works by hand,
  one column per class: the unshifted atoms (bonds, π centres) carrying the basis, the
  contribution of each, and the character; its reduction above it.
- The vibrations (:func:`vibrations_grid`): one row per irrep of Γ_vib with its count and
  whether it is IR active, Raman active, polarised.
- An analysis (:func:`analysis_blocks`): a line with the group and its facts, the Γ summary
  (one row per basis and Γ_vib, characters per class and the reduction), the activity of
  the fundamentals, the worked table of each basis, the symmetry-distinct atoms.

Objects are read duck-typed (``Representation``, ``Vibrations``, ``Analysis``), so this
module imports nothing from the layers that define them.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from ..text import format_length, plural
from .grid import Block, Cell, Grid, Paragraph, cell
from .markup import latex_irreps, latex_text, unicode_irreps
from .tables import class_cell, group_cell, irrep_cell

__all__ = [
    "analysis_blocks",
    "number",
    "representation_grid",
    "vibrations_grid",
]


def number(x: float) -> str:
    """A counted character or contribution: an integer, else three decimals."""
    v = float(x)
    r = round(v)
    return str(int(r)) if abs(v - r) < 1e-9 else f"{v:.3f}"


def _num(x: float) -> Cell:
    t = number(x)
    return Cell(t, f"${t}$")


def _gamma(name: str) -> Cell:
    """``Γ(cartesian)``; LaTeX ``$\\Gamma$(cartesian)``."""
    return Cell(f"Γ({name})", "$\\Gamma$(" + latex_text(name) + ")")


_GAMMA_VIB = Cell("Γ_vib", "$\\Gamma_{\\mathrm{vib}}$")


def _sum(irreps: dict) -> Cell:
    return Cell(unicode_irreps(irreps), latex_irreps(irreps))


def _equation(left: Cell, irreps: dict, tail: str = "") -> Cell:
    return _joined(left, " = ", _sum(irreps), tail)


def representation_grid(rep: Any) -> Grid:
    """The worked table of a :class:`~gammatrace.Representation`, classes across."""
    name = rep.basis.name
    item = rep.item_name
    head = [_gamma(name)] + [class_cell(label) for label in rep.class_labels]
    unshifted = [cell(f"unshifted {item}")] + [_num(n) for n in rep.unshifted]
    per = [cell(f"per {item.rstrip('s')}")]
    for n, contrib in zip(rep.unshifted, rep.contributions):
        per.append(cell("-") if n == 0 else cell("varies") if contrib is None else _num(contrib))
    chars = [Cell("χ", "$\\chi$")] + [_num(x) for x in rep.characters]
    return Grid(
        head,
        [unshifted, per, chars],
        "l" + "r" * len(rep.class_labels),
        rules=(0,),
        caption=_equation(_gamma(name), rep.irreps),
    )


def _yes(flag: bool) -> Cell:
    return cell("yes" if flag else "no")


def vibrations_grid(vib: Any) -> Grid:
    """The fundamentals of a :class:`~gammatrace.Vibrations`: count and activity per irrep."""
    head = [cell("irrep"), cell("count"), cell("IR"), cell("Raman"), cell("polarised")]
    rows = [
        [
            irrep_cell(label),
            _num(n),
            _yes(label in vib.ir_active),
            _yes(label in vib.raman_active),
            _yes(label in vib.polarised),
        ]
        for label, n in vib.irreps.items()
    ]
    notes = [
        cell(
            f"distinct fundamentals {vib.n_fundamentals}: {vib.n_ir} IR, {vib.n_raman} Raman"
            + ("; mutual exclusion (centrosymmetric)" if vib.mutual_exclusion else "")
        )
    ]
    caption = _equation(_GAMMA_VIB, vib.irreps, f" ({plural(vib.modes, 'mode')})")
    return Grid(head, rows, "lrlll", rules=(0,), caption=caption, notes=notes)


def _title(a: Any) -> Paragraph:
    s = a.structure
    order = f" (order {a.order})" if a.order else ""
    lead = f"{s.source} [frame {s.index}]: {plural(a.n_atoms, 'atom')}; point group "
    tail = f"{order}; tolerance {a.tol} Å, largest deviation {format_length(a.max_deviation)} Å"
    facts = f"symmetry number σ = {a.symmetry_number}, {a._chirality_text()}"
    return Paragraph([_joined(lead, group_cell(a.point_group), tail), cell(facts)])


def _summary(a: Any, reps: Sequence[Any]) -> Grid:
    head = [cell("Γ")] + [class_cell(c.label) for c in a.classes] + [cell("irreps")]
    rows = [
        [_gamma(rep.basis.name)] + [_num(x) for x in rep.characters] + [_sum(rep.irreps)]
        for rep in reps
    ]
    vib = a.vibrations()
    rows.append([_GAMMA_VIB] + [_num(x) for x in vib.characters] + [_sum(vib.irreps)])
    n = len(a.classes)
    return Grid(head, rows, "l" + "r" * n + "l", rules=(0, n))


def _joined(*parts: str | Cell) -> Cell:
    """Prose (str, escaped for LaTeX) and cells (their own LaTeX) run together."""
    cells = [p if isinstance(p, Cell) else cell(p) for p in parts]
    return Cell("".join(c.text for c in cells), "".join(c.latex for c in cells))


def _activity(vib: Any) -> Paragraph:
    first = _joined(
        _GAMMA_VIB,
        f": {plural(vib.modes, 'mode')}; IR active: ",
        _sum(vib.ir_active),
        "; Raman active: ",
        _sum(vib.raman_active),
        "; polarised: ",
        _sum(vib.polarised),
    )
    second = cell(
        f"distinct fundamentals {vib.n_fundamentals}: {vib.n_ir} IR, {vib.n_raman} Raman"
        + ("; mutual exclusion (centrosymmetric)" if vib.mutual_exclusion else "")
    )
    return Paragraph([first, second])


def analysis_blocks(
    a: Any,
    bases: Sequence[Any],
    worked: bool = True,
    extra: Sequence[str] = (),
) -> list[Block]:
    """An :class:`~gammatrace.Analysis` as blocks: title, Γ summary, activity, worked tables
    (``worked``), environments, then ``extra`` lines (orbits, near symmetry) as given."""
    reps = [a.representation(b) for b in bases]
    blocks: list[Block] = [_title(a), _summary(a, reps), _activity(a.vibrations())]
    if worked:
        blocks.extend(representation_grid(rep) for rep in reps)
    lines = [a._environments_text(), *extra]
    blocks.append(Paragraph([cell(line) for line in lines]))
    return blocks
