"""Character tables as printed (text, Markdown, LaTeX, HTML), read back against the JSON table.

Every export is parsed by the independent readers of tests/_render_helpers.py: classes and
irrep labels must be the JSON ones once the primes and superscripts are undone, characters
the JSON numbers once the printed forms (2cos72°, √2, (1+√5)/2, …) are evaluated, and the two
function columns together the JSON functions.
"""

from __future__ import annotations

import json
import re

import numpy as np
import pytest
from _render_helpers import (
    ascii_function,
    ascii_label,
    character_value,
    check_html,
    check_latex,
    compile_latex,
    is_exact,
    markdown_tables,
    tex_engine,
)
from gammatrace.cli import main
from gammatrace.render.tables import LINEAR_HEAD, QUADRATIC_HEAD
from gammatrace.tables import get_table

# any n (C7v, D9h, S16, C10), polyhedral (Oh, Ih), linear (C∞v, D∞h), complex pairs (C3, T,
# C5), five-fold (C5v, D5h, D5d), surds (D4d, D6d), K_h, small (C2v, Cs)
GROUPS = [
    "C7v",
    "D9h",
    "S16",
    "C10",
    "Oh",
    "Ih",
    "C∞v",
    "D∞h",
    "C3",
    "T",
    "C5",
    "C5v",
    "D5h",
    "D5d",
    "D4d",
    "D6d",
    "K_h",
    "C2v",
    "Cs",
]


def _json_table(capsys, name: str) -> dict:
    assert main(["table", name, "--format", "json"]) == 0
    return json.loads(capsys.readouterr().out)


def _check_rows(data: dict, head: list[str], rows: list[list[str]]) -> None:
    """A printed table (head, rows of cells) against the JSON table."""
    n = len(data["classes"])
    assert head[0] == data["group"]
    assert [ascii_label(c) for c in head[1 : 1 + n]] == [c["label"] for c in data["classes"]]
    assert head[1 + n :] == [LINEAR_HEAD, QUADRATIC_HEAD]
    assert [ascii_label(r[0]) for r in rows] == [ir["label"] for ir in data["irreps"]]
    exact_everywhere = data["group"] != "K_h"
    for row, ir in zip(rows, data["irreps"]):
        assert len(row) == n + 3
        printed = row[1 : 1 + n]
        got = [character_value(c) for c in printed]
        # exact forms to 1e-12, decimals (K_h only) to their three places
        tol = 1e-12 if exact_everywhere else 5e-4
        np.testing.assert_allclose(got, ir["characters"], atol=tol, rtol=0)
        if exact_everywhere:
            assert all(is_exact(c) for c in printed), printed
        linear = [f for f in row[n + 1].split("; ") if f]
        quadratic = [f for f in row[n + 2].split("; ") if f]
        assert not any("²" in f or f in ("xy", "xz", "yz") for f in linear), linear
        assert all("²" in f or "xy" in f or "xz" in f or "yz" in f for f in quadratic), quadratic
        back = [ascii_function(f) for f in linear + quadratic]
        assert sorted(back) == sorted(ir["functions"])


@pytest.mark.parametrize("name", GROUPS)
def test_markdown_table_reads_back_as_the_json_table(name, capsys):
    data = _json_table(capsys, name)
    md = get_table(name).to_markdown()
    tables = markdown_tables(md)
    assert len(tables) == 1
    head, *rows = tables[0]
    _check_rows(data, head, rows)
    assert "x2" not in md and "^" not in md  # squares and powers as superscripts
    # the command line writes the same
    assert main(["table", name, "--format", "markdown"]) == 0
    assert capsys.readouterr().out == md + "\n"


@pytest.mark.parametrize("name", GROUPS)
def test_text_table_reads_back_as_the_json_table(name, capsys):
    data = _json_table(capsys, name)
    t = get_table(name)
    lines = t.to_text().splitlines()
    n = len(data["classes"])
    # the character columns are the first n + 1 words of each line: no cell holds a space
    head = [*lines[0].split()[: n + 1], LINEAR_HEAD, QUADRATIC_HEAD]
    assert re.search(f"{LINEAR_HEAD}  +{QUADRATIC_HEAD}$", lines[0])
    assert set(lines[1]) == {"-"}
    rows = []
    linear_at, quad_at = lines[0].index(LINEAR_HEAD), lines[0].index(QUADRATIC_HEAD)
    for line in lines[2 : 2 + len(data["irreps"])]:
        words = line[:linear_at].split()
        assert len(words) == n + 1, line
        rows.append([*words, line[linear_at:quad_at].strip(), line[quad_at:].strip()])
    _check_rows(data, head, rows)


@pytest.mark.parametrize("name", GROUPS)
def test_latex_table_is_balanced_and_complete(name, tmp_path):
    t = get_table(name)
    fragment = t.to_latex()
    assert "\\documentclass" not in fragment and "\\usepackage" not in fragment
    assert check_latex(fragment) == 1
    rows = fragment.split("\\begin{tabular}")[1].split("\\end{tabular}")[0]
    body = [r for r in rows.replace("\\hline", "").split("\\\\") if r.strip()]
    assert len(body) == 1 + len(t.irreps)  # heads, then one row per irrep
    document = t.to_latex(document=True)
    assert document.startswith("\\documentclass{article}")
    assert document.rstrip().endswith("\\end{document}") and fragment in document
    assert check_latex(document) == 1
    if tex_engine() is None:
        pytest.skip("no TeX engine (pdflatex or lualatex) installed: compilation not tried")
    compile_latex(document, tmp_path)


def test_latex_writes_labels_and_forms_in_math():
    # C5v: 2C5² as $2C_{5}^{2}$, 2cos72° as $2\cos 72^\circ$, x² as $x^2$ (common practice)
    latex = get_table("C5v").to_latex()
    assert "$2C_{5}^{2}$" in latex and "$5\\sigma_{v}$" in latex
    assert "$2\\cos 72^\\circ$" in latex and "$x^2+y^2$" in latex and "$(R_x, R_y)$" in latex
    ih = get_table("Ih").to_latex()
    assert "$\\frac{1+\\sqrt{5}}{2}$" in ih and "$T_{1g}$" in ih
    dinf = get_table("D∞h").to_latex()
    assert "$D_{\\infty h}$" in dinf and "$\\Sigma_{g}^{+}$" in dinf and "$\\Pi_{u}$" in dinf


@pytest.mark.parametrize("name", ["C3", "T", "C5", "S8", "D3h"])
def test_complex_form_exports(name, capsys):
    form = get_table(name).complex_form()
    md = form.to_markdown()
    (head, *rows), *_ = markdown_tables(md)
    assert [ascii_label(c) for c in head[1 : 1 + len(form.classes)]] == [
        c.label for c in form.classes
    ]
    assert [ascii_label(r[0]) for r in rows] == list(form.labels)
    assert check_latex(form.to_latex()) == 1
    check_html(form._repr_html_())
    assert main(["table", name, "--complex", "--format", "markdown"]) == 0
    assert capsys.readouterr().out == md + "\n"
    if not form.has_pairs:
        assert "no complex-conjugate pairs" in md


@pytest.mark.parametrize("name", ["C2v", "D5h", "Ih", "D∞h", "C3", "K_h"])
def test_table_html_is_well_formed_and_labelled(name):
    t = get_table(name)
    page = check_html(t._repr_html_())
    labels = {ascii_label(c) for c in page.cells}
    assert {ir.label for ir in t.irreps} <= labels
    assert {c.label for c in t.classes} <= labels
    assert t._repr_markdown_() == t.to_markdown()


def test_json_keeps_ascii_labels_and_numbers(capsys):
    # the printed forms are for readers: JSON keeps x2+y2, C2', 12C5^2 and floats
    data = _json_table(capsys, "D5h")
    assert "2C5^2" in [c["label"] for c in data["classes"]]
    text = json.dumps(data, ensure_ascii=False)
    assert "²" not in text and "′" not in text and "cos" not in text
    e1 = next(ir for ir in data["irreps"] if ir["label"] == "E1'")
    assert isinstance(e1["characters"][1], float) and e1["functions"] == ["(x,y)"]
    assert "x2+y2" in data["irreps"][0]["functions"]
