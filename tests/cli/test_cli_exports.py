"""``--format markdown`` and ``--format latex`` (with ``--latex-document``) of table, correlate
and analyze; the other commands keep text and JSON only."""

from __future__ import annotations

import gammatrace as gt
import pytest
from _render_helpers import check_latex, compile_latex, markdown_tables, tex_engine
from gammatrace.cli import main

WATER = """3
water (geometry from ASE's G2 collection)
O 0.000000 0.000000 0.119262
H 0.000000 0.763239 -0.477047
H 0.000000 -0.763239 -0.477047
"""
AMMONIA = """4
ammonia
N 0.000000 0.000000 0.116489
H 0.000000 0.939731 -0.271808
H 0.813831 -0.469865 -0.271808
H -0.813831 -0.469865 -0.271808
"""
BROKEN = """3
a frame with a bad coordinate line
O 0.0 0.0 0.1
H 0.0 0.76
H 0.0 -0.76 -0.47
"""


def run(capsys, argv):
    status = main(argv)
    out, err = capsys.readouterr()
    return status, out, err


def test_table_latex_fragment_and_document(capsys):
    status, fragment, _ = run(capsys, ["table", "C5v", "--format", "latex"])
    assert status == 0 and fragment == gt.get_table("C5v").to_latex()
    assert "\\documentclass" not in fragment and check_latex(fragment) == 1
    status, document, _ = run(capsys, ["table", "C5v", "--format", "latex", "--latex-document"])
    assert status == 0 and document.startswith("\\documentclass{article}")
    assert document.endswith("\\end{document}\n") and fragment in document


def test_correlate_latex_document(capsys):
    status, out, _ = run(
        capsys, ["correlate", "Td", "C3v", "--format", "latex", "--latex-document"]
    )
    assert status == 0 and check_latex(out) == 1 and out.endswith("\\end{document}\n")


def test_analyze_markdown_per_structure_and_errors_on_stderr(tmp_path, capsys):
    path = tmp_path / "three.xyz"
    path.write_text(WATER + BROKEN + AMMONIA)
    status, out, err = run(capsys, ["analyze", str(path), "--format", "markdown"])
    assert status == 1  # the broken frame
    assert "ReadError" in err and "ReadError" not in out
    titles = [line for line in out.splitlines() if " [frame " in line]
    assert len(titles) == 2 and "C2v" in titles[0] and "C3v" in titles[1]
    # each structure: the Γ summary and the worked tables of atoms and cartesian
    assert len(markdown_tables(out)) == 2 * 3
    status, brief, _ = run(capsys, ["analyze", str(tmp_path / "three.xyz"), "--brief",
                                    "--format", "markdown"])  # fmt: skip
    assert len(markdown_tables(brief)) == 2 and "unshifted atoms" not in brief


def test_analyze_markdown_carries_orbits_and_near_lines(tmp_path, capsys):
    path = tmp_path / "water.xyz"
    path.write_text(WATER)
    argv = ["analyze", str(path), "--format", "markdown", "--orbits", "--measure", "D2h"]
    status, out, err = run(capsys, argv)
    assert status == 0, err
    assert "orbit of 2 (Cs): atoms [1, 2]" in out and "measure against D2h" in out


def test_analyze_latex_document_holds_every_structure(tmp_path, capsys):
    path = tmp_path / "two.xyz"
    path.write_text(WATER + AMMONIA)
    argv = ["analyze", str(path), "--format", "latex", "--latex-document", "--basis", "bonds"]
    status, out, err = run(capsys, argv)
    assert status == 0, err
    assert out.count("\\documentclass") == 1 and out.count("\\end{document}") == 1
    assert check_latex(out) == 2 * 4  # per structure: summary + atoms, cartesian, bonds
    if tex_engine() is None:
        pytest.skip("no TeX engine (pdflatex or lualatex) installed: compilation not tried")
    compile_latex(out, tmp_path)


@pytest.mark.parametrize("command", [["selection", "Oh"], ["sites", "water.xyz"]])
def test_other_commands_keep_text_and_json(command, capsys):
    status, _, err = run(capsys, [*command, "--format", "markdown"])
    assert status == 2 and "invalid choice" in err
