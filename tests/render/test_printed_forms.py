"""Irrational characters, class headings and functions written as printed tables write them."""

from __future__ import annotations

import math

import pytest
from gammatrace.render.exact import CharacterForms
from gammatrace.render.markup import (
    latex_class,
    latex_group,
    latex_irrep,
    latex_text,
    unicode_function,
    unicode_label,
)
from gammatrace.tables import get_table


def _printed(name: str, irrep: str, cls: str) -> str:
    t = get_table(name)
    form = CharacterForms.for_table(t)
    j = [c.label for c in t.classes].index(cls)
    return form.form(t.irreps[t.index(irrep)].characters[j]).text


PRINTED = [
    # Source: Cotton, Chemical Applications of Group Theory, Appendix IIA, C5v  # from memory
    ("C5v", "E1", "2C5", "2cos72°"),
    ("C5v", "E1", "2C5^2", "2cos144°"),
    ("C5v", "E2", "2C5", "2cos144°"),
    # Source: Cotton, Appendix IIA, C5 (the pair E1 combined: 2cos72°)  # from memory
    ("C5", "E1", "2C5", "2cos72°"),
    # Source: Cotton, Appendix IIA, D5h (E1'' on 2S5: -2cos72°)  # from memory
    ("D5h", "E1'", "2S5", "2cos72°"),
    ("D5h", "E1''", "2S5", "-2cos72°"),
    ("D5h", "E2''", "2S5^3", "-2cos72°"),
    # Source: Cotton, Appendix IIA, D5d (E1u on 2S10^3: -2cos72°)  # from memory
    ("D5d", "E1u", "2S10^3", "-2cos72°"),
    # Source: Cotton, Appendix IIA, Ih: ½(1 ± √5) on the C5 classes  # from memory
    ("Ih", "T1g", "12C5", "(1+√5)/2"),
    ("Ih", "T1g", "12C5^2", "(1-√5)/2"),
    ("Ih", "T2g", "12C5", "(1-√5)/2"),
    ("I", "T1", "12C5", "(1+√5)/2"),
    ("Ih", "T1u", "12S10", "-(1-√5)/2"),
    # Source: Cotton, Appendix IIA, D4d (E1 on 2S8: √2)  # from memory
    ("D4d", "E1", "2S8", "√2"),
    ("D4d", "E3", "2S8", "-√2"),
    # Source: Cotton, Appendix IIA, D6d (E1 on 2S12: √3)  # from memory
    ("D6d", "E1", "2S12", "√3"),
    # Source: Cotton, Appendix IIA, D8h (E1g on 2C8: √2)  # from memory
    ("D8h", "E1g", "2C8", "√2"),
    # any n: 2cos(2πk/n), in degrees when whole (common practice)
    ("C7v", "E1", "2C7", "2cos(2π/7)"),
    ("C7v", "E2", "2C7", "2cos(4π/7)"),
    ("D9h", "E1'", "2C9", "2cos40°"),
    ("D9h", "E1''", "2S9", "-2cos40°"),
    ("S16", "E1", "2S16", "2cos(π/8)"),
    ("C10", "E1", "2C10", "2cos36°"),
    # linear groups: Π on the sampled 2C∞(360°/13) is 2cos φ (common practice)
    ("C∞v", "Π", "2C∞(27.69°)", "2cos(2π/13)"),
    ("D∞h", "Πu", "2S∞(152.3°)", "-2cos(2π/13)"),
    # rational characters stay integers
    ("Oh", "T1u", "8C3", "0"),
    ("C3v", "E", "2C3", "-1"),
]


@pytest.mark.parametrize("name, irrep, cls, printed", PRINTED)
def test_irrational_characters_are_written_as_printed(name, irrep, cls, printed):
    assert _printed(name, irrep, cls) == printed


def test_k_h_characters_stay_decimal():
    # χ_l(θ) = sin((2l+1)θ/2)/sin(θ/2) at sampled angles: no printed exact form (our design)
    assert _printed("K_h", "Pg", "∞C(27.69°)") == f"{1 + 2 * math.cos(2 * math.pi / 13):.3f}"


def test_forms_carry_their_values_and_latex():
    forms = CharacterForms("cos", [5])
    f = forms.form(2 * math.cos(math.radians(144)))
    assert (f.text, f.latex) == ("2cos144°", "2\\cos 144^\\circ")
    assert math.isclose(f.value, -1.6180339887, abs_tol=1e-9)
    g = forms.form(-2 * math.cos(math.radians(72)))
    assert g.text == "-2cos72°" and g.base.text == "2cos72°"
    # a number that is no such form is written with three decimals, never rounded silently
    assert forms.form(0.5).text == "0.500"
    legend = CharacterForms.legend([f, g, forms.form(1.0), g])
    assert [(x.text, round(x.value, 3)) for x in legend] == [
        ("2cos144°", -1.618),
        ("2cos72°", 0.618),
    ]
    with pytest.raises(ValueError, match="style"):
        CharacterForms("roman")


def test_legend_under_the_text_table_gives_the_decimals():
    text = get_table("C5v").to_text()
    assert "(2cos72° = 0.618, 2cos144° = -1.618)" in text
    assert "((1+√5)/2 = 1.618, (1-√5)/2 = -0.618)" in get_table("Ih").to_text()
    assert "(√2 = 1.414)" in get_table("D4d").to_text()
    assert " = " not in get_table("Oh").to_text()  # integers only: no legend


@pytest.mark.parametrize(
    "label, printed, latex",
    [
        # class headings as printed tables head them (common practice)
        ("2C3", "2C3", "$2C_{3}$"),
        ("3σv", "3σv", "$3\\sigma_{v}$"),
        ("3C2'", "3C2′", "$3C_{2}'$"),
        ("3C2''", "3C2″", "$3C_{2}''$"),
        ("σv'(yz)", "σv′(yz)", "$\\sigma_{v}'(yz)$"),
        ("12C5^2", "12C5²", "$12C_{5}^{2}$"),
        ("2S10^3", "2S10³", "$2S_{10}^{3}$"),
        ("σd", "σd", "$\\sigma_{d}$"),
        ("∞σv", "∞σv", "$\\infty \\sigma_{v}$"),
        ("2S∞(152.3°)", "2S∞(152.3°)", "$2S_{\\infty}(152.3^\\circ)$"),
        ("E", "E", "$E$"),
        ("i", "i", "$i$"),
    ],
)
def test_class_headings(label, printed, latex):
    assert unicode_label(label) == printed
    assert latex_class(label) == latex


@pytest.mark.parametrize(
    "label, latex",
    [
        ("A1g", "$A_{1g}$"),
        ("E'", "$E'$"),
        ("A2''", "$A_{2}''$"),
        ("Σg+", "$\\Sigma_{g}^{+}$"),
        ("Πu", "$\\Pi_{u}$"),
        ("T2u", "$T_{2u}$"),
        ("1E2", "${}^{1}E_{2}$"),
        ("Sg", "$S_{g}$"),
    ],
)
def test_irrep_labels_in_latex(label, latex):
    assert latex_irrep(label) == latex


def test_group_names_functions_and_prose():
    assert latex_group("D∞h") == "$D_{\\infty h}$" and latex_group("Cs") == "$C_{s}$"
    assert unicode_function("(2z2-x2-y2,x2-y2)") == "(2z²-x²-y²,x²-y²)"
    assert unicode_function("x2+y2+z2") == "x²+y²+z²"
    prose = latex_text("Σ χ_i, 50% of {x} & 360°/13 ≤ h; ε²* ⁻¹")
    assert prose.isascii()
    assert "\\%" in prose and "\\{x\\}" in prose and "\\&" in prose and "\\_i" in prose
    assert "$\\Sigma$" in prose and "$\\varepsilon^{2}$*" in prose and "$^{-1}$" in prose
    assert "$$" not in prose  # adjacent symbols share one math run
