"""Character tables, their complex forms and correlations as printed tables lay them out.

A character table (:func:`table_grid`): the group in the corner, the classes across (``2C3``,
``3σv``, ``C2′``, ``12C5²``), the irreps down, the characters in their exact printed forms
(:mod:`.exact`), then two function columns as printed tables have them: linear functions and
rotations (``z``, ``(x,y)``, ``Rz``, ``(Rx,Ry)``), and quadratic functions (``x²+y²``, ``z²``,
``(x²-y²,xy)``, ``(xz,yz)``). The tables carry no cubic functions, so there is no third
column. Under it: the decimal value of each exact form used, then the table's own notes
(complex-conjugate pairs, the sampling of the linear groups and of K_h).

A correlation (:func:`correlation_grid`): the group's irreps down, one column per
inequivalent embedding of the subgroup (numbered when there are several), the subgroup's
irreps each one contains; the embeddings' descriptions and other namings as notes.

The objects are read duck-typed (``CharacterTable``, ``ComplexForm``, the ``correlate``
dict), so this module imports nothing from the tables layer.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from typing import Any

from .exact import CharacterForms
from .grid import Cell, Grid, cell
from .markup import (
    latex_class,
    latex_function,
    latex_group,
    latex_irrep,
    latex_irreps,
    latex_text,
    unicode_function,
    unicode_irreps,
    unicode_label,
)

__all__ = [
    "LINEAR_HEAD",
    "QUADRATIC_HEAD",
    "complex_grid",
    "correlation_grid",
    "split_functions",
    "table_grid",
]

#: Heads of the two function columns.
LINEAR_HEAD = "linear, rotations"
QUADRATIC_HEAD = "quadratic"

_LINEAR_PARTS = frozenset({"x", "y", "z", "Rx", "Ry", "Rz"})


def split_functions(functions: Sequence[str]) -> tuple[list[str], list[str]]:
    """The functions of an irrep split into (linear and rotations, quadratic), in order.

    Examples
    --------
    >>> split_functions(["(x,y)", "(Rx,Ry)", "(x2-y2,xy)", "(xz,yz)"])
    (['(x,y)', '(Rx,Ry)'], ['(x2-y2,xy)', '(xz,yz)'])
    """
    linear, quadratic = [], []
    for f in functions:
        parts = f.strip("()").split(",")
        (linear if all(p in _LINEAR_PARTS for p in parts) else quadratic).append(f)
    return linear, quadratic


def _functions_cell(functions: Sequence[str]) -> Cell:
    return Cell(
        "; ".join(unicode_function(f) for f in functions),
        "; ".join(latex_function(f) for f in functions),
    )


def group_cell(name: str) -> Cell:
    """A point-group name (Unicode as given, LaTeX ``$C_{2v}$``)."""
    return Cell(name, latex_group(name))


def class_cell(label: str) -> Cell:
    """A class heading as printed (``3C2′``, ``12C5²``; LaTeX ``$3C_{2}'$``)."""
    return Cell(unicode_label(label), latex_class(label))


def irrep_cell(label: str) -> Cell:
    """An irrep label as printed (``E″``, ``A1g``; LaTeX ``$E''$``, ``$A_{1g}$``)."""
    return Cell(unicode_label(label), latex_irrep(label))


def _function_heads() -> list[Cell]:
    return [cell(LINEAR_HEAD), cell(QUADRATIC_HEAD)]


def table_grid(table: Any) -> Grid:
    """A :class:`~gammatrace.tables.CharacterTable` as a printed table (see the module)."""
    forms = CharacterForms.for_table(table)
    head = [group_cell(table.name)] + [class_cell(c.label) for c in table.classes]
    head += _function_heads()
    rows, used = [], []
    for ir in table.irreps:
        written = [forms.form(x) for x in ir.characters]
        used.extend(written)
        linear, quadratic = split_functions(ir.functions)
        rows.append(
            [irrep_cell(ir.label)]
            + [Cell(f.text, f"${f.latex}$") for f in written]
            + [_functions_cell(linear), _functions_cell(quadratic)]
        )
    notes = []
    legend = CharacterForms.legend(used)
    if legend:
        notes.append(
            Cell(
                "(" + ", ".join(f"{f.text} = {f.value:.3f}" for f in legend) + ")",
                "(" + ", ".join(f"${f.latex} = {f.value:.3f}$" for f in legend) + ")",
            )
        )
    notes.extend(cell(n) for n in table.notes)
    n = len(table.classes)
    return Grid(head, rows, "l" + "r" * n + "ll", rules=(0, n), notes=notes)


def _latex_root(text: str) -> str:
    """A character of the complex form (``ε²*``, ``-i``, ``1``) in LaTeX."""
    sign, body = ("-", text[1:]) if text.startswith("-") else ("", text)
    if body.startswith("ε"):
        rest = body[1:]
        star = rest.endswith("*")
        power = latex_text(rest.rstrip("*")).strip("$").removeprefix("^{").removesuffix("}")
        sup = power + ("*" if star else "")
        return f"${sign}\\varepsilon^{{{sup}}}$" if sup else f"${sign}\\varepsilon$"
    if text.isascii():
        return f"${text}$"
    return latex_text(text)


def complex_grid(form: Any, write: Callable[[complex], str], notes: Sequence[str]) -> Grid:
    """A :class:`~gammatrace.tables.ComplexForm` with pairs: one column per class, the
    members ``1E``, ``2E``; ``write`` spells a character (ε notation), ``notes`` go under."""
    head = [group_cell(form.name)] + [class_cell(c.label) for c in form.classes]
    head += _function_heads()
    rows = []
    for label, row, funcs in zip(form.labels, form.characters, form.functions):
        linear, quadratic = split_functions(funcs)
        texts = [write(z) for z in row.tolist()]
        rows.append(
            [irrep_cell(label)]
            + [Cell(t, _latex_root(t)) for t in texts]
            + [_functions_cell(linear), _functions_cell(quadratic)]
        )
    n = len(form.classes)
    return Grid(head, rows, "l" + "r" * n + "ll", rules=(0, n), notes=[cell(t) for t in notes])


def _arrow(group: str, sub: str) -> Cell:
    a, b = latex_group(group), latex_group(sub)
    if a.startswith("$") and b.startswith("$"):
        latex = f"${a[1:-1]} \\to {b[1:-1]}$"
    else:
        latex = f"{a} $\\to$ {b}"
    return Cell(f"{group} → {sub}", latex)


def correlation_grid(result: Mapping[str, Any]) -> Grid:
    """The ``correlate`` result (a dict: ``group``, ``subgroup``, ``embeddings``) as a
    correlation table: group irreps down, one column per embedding."""
    group, sub = result["group"], result["subgroup"]
    embeddings = result["embeddings"]
    many = len(embeddings) > 1
    head = [group_cell(group)]
    for k in range(1, len(embeddings) + 1):
        c = group_cell(sub)
        head.append(Cell(f"{c.text} ({k})", f"{c.latex} ({k})") if many else c)
    irreps = list(embeddings[0]["correlation"]) if embeddings else []
    rows = [
        [irrep_cell(ir)]
        + [
            Cell(unicode_irreps(e["correlation"][ir]), latex_irreps(e["correlation"][ir]))
            for e in embeddings
        ]
        for ir in irreps
    ]
    notes = []
    for k, e in enumerate(embeddings, 1):
        tag = f"({k}) " if many else ""
        notes.append(cell(tag + e["description"]))
        notes.extend(cell(f"{tag}note: {o['note']}") for o in e.get("other_namings", ()))
    return Grid(
        head,
        rows,
        "l" * len(head),
        rules=(0,),
        caption=_arrow(group, sub),
        notes=notes,
    )
