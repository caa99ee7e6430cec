"""Analyses, representations, vibrations and correlations as Markdown, LaTeX and HTML, read
back against their JSON (tests/_render_helpers.py parses them independently)."""

from __future__ import annotations

import json

import gammatrace as gt
import numpy as np
import pytest
from _render_helpers import (
    ascii_label,
    check_html,
    check_latex,
    compile_latex,
    irrep_sum,
    markdown_tables,
    tex_engine,
)
from conftest import octahedral
from gammatrace.cli import main
from gammatrace.render import correlation_html, correlation_latex, correlation_markdown
from gammatrace.tables import Correlation

WATER = (["O", "H", "H"], [[0, 0, 0.1173], [0, 0.7572, -0.4692], [0, -0.7572, -0.4692]])
AMMONIA = (
    ["N", "H", "H", "H"],
    [[0, 0, 0.1165], [0, 0.9397, -0.2718], [0.8138, -0.4699, -0.2718], [-0.8138, -0.4699, -0.2718]],
)
CO2 = (["O", "C", "O"], [[0, 0, -1.16], [0, 0, 0], [0, 0, 1.16]])


def _structures():
    return {
        "water": WATER,
        "ammonia": AMMONIA,
        "co2": CO2,
        "sf6": octahedral("S", "F", 1.56),
        "atom": (["Ar"], [[0.0, 0.0, 0.0]]),
    }


STRUCTURES = sorted(_structures())


@pytest.mark.parametrize("key", STRUCTURES)
def test_analysis_markdown_reads_back_as_its_json(key):
    a = gt.analyze(*_structures()[key])
    d = a.to_dict()
    md = a.to_markdown()
    summary, *worked = markdown_tables(md)
    classes = [c["label"] for c in d["classes"]]
    assert [ascii_label(c) for c in summary[0][1:-1]] == classes
    rows = {r[0]: r for r in summary[1:]}
    for basis, rep in d["representations"].items():
        row = rows[f"Γ({basis})"]
        np.testing.assert_allclose([float(x) for x in row[1:-1]], rep["characters"], atol=5e-4)
        assert irrep_sum(row[-1]) == rep["irreps"]
    assert irrep_sum(rows["Γ_vib"][-1]) == d["vibrations"]["irreps"]
    # one worked table per basis: unshifted atoms, per atom, χ across the classes
    assert len(worked) == len(d["representations"])
    for table, (basis, rep) in zip(worked, d["representations"].items()):
        head, unshifted, per, chi = table
        assert head[0] == f"Γ({basis})" and [ascii_label(c) for c in head[1:]] == classes
        assert unshifted[0] == "unshifted atoms" and per[0] == "per atom" and chi[0] == "χ"
        np.testing.assert_allclose([float(x) for x in chi[1:]], rep["characters"], atol=5e-4)
        counted = np.array([float(x) for x in unshifted[1:]])
        each = np.array([float(x) for x in per[1:]])
        np.testing.assert_allclose(counted * each, rep["characters"], atol=5e-3)
    assert d["point_group"] in md.splitlines()[0]
    brief = a.to_markdown(worked=False)
    assert len(markdown_tables(brief)) == 1 and "unshifted atoms" not in brief


@pytest.mark.parametrize("key", STRUCTURES)
def test_analysis_latex_is_balanced(key, tmp_path):
    a = gt.analyze(*_structures()[key])
    fragment = a.to_latex(bases=["atoms", "cartesian"])
    assert check_latex(fragment) == 3  # the Γ summary and two worked tables
    assert "\\documentclass" not in fragment
    document = a.to_latex(document=True)
    assert check_latex(document) == 3
    if tex_engine() is None:
        pytest.skip("no TeX engine (pdflatex or lualatex) installed: compilation not tried")
    compile_latex(document, tmp_path)


@pytest.mark.parametrize("key", STRUCTURES)
def test_notebook_displays_are_well_formed(key):
    a = gt.analyze(*_structures()[key])
    page = check_html(a._repr_html_())
    text = "".join(page.text)
    assert a.point_group in text and "<array>" in text  # the source, escaped on the way
    assert {c.label for c in a.classes} <= {ascii_label(c) for c in page.cells}
    assert {ascii_label(x) for x in irrep_sum(page.cells[-1])} == set(a.vibrations().irreps)
    rep = a.representation("cartesian")
    cells = {ascii_label(c) for c in check_html(rep._repr_html_()).cells}
    assert {c.label for c in a.classes} <= cells and "χ" in cells
    vib = a.vibrations()
    page = check_html(vib._repr_html_())
    assert {ascii_label(c) for c in page.cells[5::5]} == set(vib.irreps)  # one row per irrep
    for obj in (a, rep, vib):
        assert markdown_tables(obj._repr_markdown_())


def test_vibration_rows_say_ir_raman_and_polarised():
    # water: 2A1 + B2, all IR and Raman active, A1 polarised (common practice)
    vib = gt.analyze(*WATER).vibrations()
    head, *rows = markdown_tables(vib._repr_markdown_())[0]
    assert head == ["irrep", "count", "IR", "Raman", "polarised"]
    assert rows == [["A1", "2", "yes", "yes", "yes"], ["B2", "1", "yes", "yes", "no"]]


def test_bond_and_pi_worked_tables_name_their_items():
    a = gt.analyze(*WATER)
    tables = markdown_tables(a.to_markdown(bases=["atoms", "bonds"]))
    bonds = tables[-1]
    assert bonds[0][0] == "Γ(bonds)" and bonds[1][0] == "unshifted bonds"
    assert bonds[2][0] == "per bond"


# -------------------------------------------------------------------------- correlations


@pytest.mark.parametrize(
    "group, sub", [("Oh", "D4h"), ("D6h", "D3h"), ("Td", "C3v"), ("D∞h", "C2v"), ("K_h", "Oh")]
)
def test_correlation_markdown_reads_back_as_its_json(group, sub, capsys):
    assert main(["correlate", group, sub, "--format", "json"]) == 0
    data = json.loads(capsys.readouterr().out)
    result = gt.correlate(group, sub)
    assert isinstance(result, Correlation) and isinstance(result, dict) and result == data
    md = result.to_markdown()
    assert md == correlation_markdown(data)  # a plain dict renders the same
    (head, *rows), *_ = markdown_tables(md)
    embeddings = data["embeddings"]
    assert head[0] == group and len(head) == 1 + len(embeddings)
    assert all(h.startswith(sub) for h in head[1:])
    assert [ascii_label(r[0]) for r in rows] == list(embeddings[0]["correlation"])
    for row in rows:
        for k, e in enumerate(embeddings):
            assert irrep_sum(row[1 + k]) == e["correlation"][ascii_label(row[0])]
    for e in embeddings:
        assert e["description"] in md
    latex = correlation_latex(data)
    assert latex == result.to_latex() and check_latex(latex) == 1
    page = check_html(correlation_html(data))
    assert page.cells[0] == group
    assert result._repr_html_() == correlation_html(data)
    assert result._repr_markdown_() == md
    assert main(["correlate", group, sub, "--format", "markdown"]) == 0
    assert capsys.readouterr().out == md + "\n"


def test_correlation_stays_the_same_dict_for_json_and_text(capsys):
    result = gt.correlate("C3v", "Cs")
    assert json.loads(json.dumps(result)) == result
    assert main(["correlate", "C3v", "Cs", "--format", "json"]) == 0
    assert json.loads(capsys.readouterr().out) == json.loads(json.dumps(dict(result)))
    assert main(["correlate", "C3v", "Cs"]) == 0
    # the text form as it was: group -> subgroup, the description, one line per irrep
    lines = capsys.readouterr().out.splitlines()
    assert lines[0] == "C3v -> Cs"
    assert lines[2:] == ["        A1 -> A'", "        A2 -> A''", "         E -> A' + A''"]


@pytest.mark.parametrize("group, sub", [("Oh", "D4h"), ("D6h", "D3h")])
def test_correlation_latex_compiles(group, sub, tmp_path):
    document = gt.correlate(group, sub).to_latex(document=True)
    assert check_latex(document) == 1
    if tex_engine() is None:
        pytest.skip("no TeX engine (pdflatex or lualatex) installed: compilation not tried")
    compile_latex(document, tmp_path)
