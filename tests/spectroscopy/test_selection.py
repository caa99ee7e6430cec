"""Polarised Raman bands, overtones and combinations of a structure's fundamentals, Fermi
resonance candidates, and the ``selection`` command.

Sources (each check names its own):
- G. Herzberg, Infrared and Raman Spectra of Polyatomic Molecules (Van Nostrand, 1945).
- K. Nakamoto, Infrared and Raman Spectra of Inorganic and Coordination Compounds, Part A.
- E. Fermi, Z. Physik 71, 250 (1931): the Fermi resonance of ν1 and 2ν2 in CO2.
- P. W. Atkins, M. S. Child, C. S. G. Phillips, Tables for Group Theory (OUP, 1970), the
  direct-product table of D6h.
Lists and wavenumbers were written down from memory of these sources.
"""

from __future__ import annotations

import json

import gammatrace as gt
import numpy as np
import pytest
from _force_field import water
from conftest import ase_molecule, octahedral
from gammatrace.cli import main
from gammatrace.errors import InputError
from gammatrace.spectroscopy import binary_bands, fermi_resonances, fundamentals
from gammatrace.tables import get_table

# --------------------------------------------------------------------- polarised Raman


@pytest.mark.parametrize(
    "factory, group, polarised",
    [
        # Herzberg (1945): CCl4, Γ_vib = A1 + E + 2T2; only ν1 (A1, 459 cm⁻¹) is polarised
        (lambda: ase_molecule("CCl4"), "Td", {"A1": 1}),
        # Herzberg (1945): benzene, ν1 and ν2 (A1g) are the two polarised Raman bands
        (lambda: ase_molecule("C6H6"), "D6h", {"A1g": 2}),
        # Nakamoto, Part A: SF6, ν1 (A1g) is the one polarised band
        (lambda: octahedral("S", "F", 1.561), "Oh", {"A1g": 1}),
        # Herzberg (1945): water, ν1 and ν2 (A1) polarised, ν3 (B2) depolarised
        (lambda: ase_molecule("H2O"), "C2v", {"A1": 2}),
        # Herzberg (1945): CO2, ν1 (Σg+) polarised
        (lambda: ase_molecule("CO2"), "D∞h", {"Σg+": 1}),
    ],
)
def test_polarised_raman_bands(factory, group, polarised):
    res = gt.analyze(*factory())
    assert res.point_group == group
    vib = res.vibrations()
    assert vib.polarised == polarised
    assert vib.to_dict()["polarised"] == polarised
    text = ", ".join(f"{n if n > 1 else ''}{k}" for k, n in polarised.items())
    assert f"polarised: {text}" in res.report(worked=False)


def test_polarised_in_c1_and_for_an_atom():
    # common practice: in C1 every vibration is totally symmetric, so every band is polarised
    rng = np.random.default_rng(7)
    res = gt.analyze(["C", "H", "F", "Cl", "Br"], rng.normal(size=(5, 3)) * 1.5)
    assert res.point_group == "C1"
    assert res.vibrations().polarised == {"A": 9}
    # an atom has no vibration, hence no polarised band
    assert gt.analyze(["Ar"], [[0.0, 0.0, 0.0]]).vibrations().polarised == {}


def test_analyze_json_carries_polarised(tmp_path, capsys):
    path = tmp_path / "water.xyz"
    sym, pos = ase_molecule("H2O")
    path.write_text("3\nwater\n" + "".join(f"{s} {x} {y} {z}\n" for s, (x, y, z) in zip(sym, pos)))
    assert main(["analyze", str(path), "--format", "json"]) == 0
    row = json.loads(capsys.readouterr().out)
    assert row["vibrations"]["polarised"] == {"A1": 2}


# --------------------------------------------------------------------- overtones, combinations


def _benzene():
    return gt.analyze(*ase_molecule("C6H6"))


@pytest.mark.parametrize(
    "kind, quanta, irreps, ir, raman",
    [
        # D6h direct products (Atkins, Child & Phillips 1970): E1g ⊗ A2u = E1u, IR-active
        ("combination", ("E1g", "A2u"), {"E1u": 1}, True, False),
        # B2g ⊗ E2u = E1u (B2 × E2 = E1, g × u = u): IR-active
        ("combination", ("B2g", "E2u"), {"E1u": 1}, True, False),
        # E2g ⊗ E1u = B1u + B2u + E1u: IR-active
        ("combination", ("E2g", "E1u"), {"B1u": 1, "B2u": 1, "E1u": 1}, True, False),
        # E2g ⊗ E2u = A1u + A2u + E2u: IR-active through A2u
        ("combination", ("E2g", "E2u"), {"A1u": 1, "A2u": 1, "E2u": 1}, True, False),
        # A1g ⊗ B1u = B1u: silent
        ("combination", ("A1g", "B1u"), {"B1u": 1}, False, False),
        # E1g ⊗ E2g = B1g + B2g + E1g: Raman-active through E1g
        ("combination", ("E1g", "E2g"), {"B1g": 1, "B2g": 1, "E1g": 1}, False, True),
        # Herzberg (1945): 2ν(E1u) = A1g + E2g, Raman-active only
        ("overtone", ("E1u", "E1u"), {"A1g": 1, "E2g": 1}, False, True),
        # two different E2u fundamentals: the full square E2 ⊗ E2 = A1 + A2 + E2 (g)
        ("combination", ("E2u", "E2u"), {"A1g": 1, "A2g": 1, "E2g": 1}, False, True),
    ],
)
def test_benzene_combination_bands(kind, quanta, irreps, ir, raman):
    bands = {(b.kind, b.quanta): b for b in _benzene().combination_bands()}
    key = (kind, quanta) if (kind, quanta) in bands else (kind, quanta[::-1])
    b = bands[key]
    assert b.irreps == irreps
    assert (b.ir_active, b.raman_active) == (ir, raman)
    assert b.allowed == (ir or raman)


def test_benzene_lists_every_overtone_and_binary_combination():
    # Γ_vib of benzene has 10 species (Wilson, Decius & Cross 1955), 7 of them more than once:
    # 10 overtones, C(10, 2) = 45 combinations of two species, 7 of two fundamentals of one.
    vib = _benzene().vibrations()
    bands = _benzene().combination_bands()
    assert sum(b.kind == "overtone" for b in bands) == len(vib.irreps) == 10
    assert sum(b.kind == "combination" and b.quanta[0] != b.quanta[1] for b in bands) == 45
    assert sum(b.kind == "combination" and b.quanta[0] == b.quanta[1] for b in bands) == 7
    # mutual exclusion carries over to binary bands: g x g and u x u are g (Raman only),
    # g x u is u (IR only) (common practice)
    for b in bands:
        parity = {q[-1] for q in b.quanta}
        assert not (b.ir_active and b.raman_active)
        if len(parity) == 1:
            assert not b.ir_active
        else:
            assert not b.raman_active
    assert bands[0].label == "2ν(A1g)"
    assert bands[0].to_dict()["kind"] == "overtone"


def test_water_combination_bands():
    # Herzberg (1945), water: every binary band of A1 and B2 fundamentals is IR and Raman
    # active (A1 and B2 both carry a dipole component and a quadratic function)
    bands = gt.analyze(*ase_molecule("H2O")).combination_bands()
    assert {(b.kind, b.quanta): b.irreps for b in bands} == {
        ("overtone", ("A1", "A1")): {"A1": 1},
        ("combination", ("A1", "A1")): {"A1": 1},
        ("combination", ("A1", "B2")): {"B2": 1},
        ("overtone", ("B2", "B2")): {"A1": 1},
    }
    assert all(b.ir_active and b.raman_active for b in bands)


def test_binary_bands_of_nothing():
    assert binary_bands(get_table("K_h"), {}) == []


# --------------------------------------------------------------------- Fermi resonance

# CO2 fundamentals (Herzberg 1945; from memory): ν1 Σg+ 1388 (the mean of the Fermi dyad
# 1285/1388 is ~1337), ν2 Πu 667, ν3 Σu+ 2349 cm⁻¹.
CO2 = {"Σg+": 1388.0, "Πu": 667.0, "Σu+": 2349.0}


def test_co2_fermi_resonance_of_nu1_and_2nu2():
    # Fermi (1931): ν1 (Σg+) and 2ν2 (Πu² = Σg+ + Δg) share Σg+ and lie 54 cm⁻¹ apart
    res = gt.analyze(*ase_molecule("CO2"))
    found = res.fermi_resonances(CO2, window=60.0)
    assert len(found) == 1
    f = found[0]
    assert (f.fundamental.irrep, f.kind) == ("Σg+", "overtone")
    assert [q.irrep for q in f.quanta] == ["Πu", "Πu"]
    assert f.wavenumber == 1334.0 and f.separation == pytest.approx(54.0)
    assert f.irreps == {"Σg+": 1, "Δg": 1}
    assert f.to_dict()["fundamental"] == {"index": 0, "irrep": "Σg+", "wavenumber": 1388.0}
    # a narrower window finds none
    assert res.fermi_resonances(CO2, window=40.0) == []
    # ν3 (Σu+) near ν1 + 2ν2? Not binary; ν3 vs ν1 + ν2 = 2055 (Πu): other species, none
    assert all(f.fundamental.irrep != "Σu+" for f in res.fermi_resonances(CO2, window=400.0))


def test_fermi_resonance_needs_the_same_species():
    # common practice: only levels of the same species interact. Water (A1, A1, B2): with a
    # window wide enough for every pair, only the A1 fundamentals find partners, since every
    # binary band of water is A1 or B2 and the B2 band ν1 + ν3 or ν2 + ν3 contains ν3 itself.
    res = gt.analyze(*ase_molecule("H2O"))
    freqs = [("A1", 3657.0), ("A1", 1595.0), ("B2", 3756.0)]  # Herzberg (1945)
    found = res.fermi_resonances(freqs, window=1e5)
    assert {f.fundamental.irrep for f in found} == {"A1"}
    for f in found:
        assert f.fundamental.irrep in f.irreps
        assert f.fundamental not in f.quanta
    by = {(f.fundamental.index, tuple(q.index for q in f.quanta)) for f in found}
    # ν1 with 2ν2 and 2ν3; ν2 with 2ν1 and 2ν3; ν1 + ν2 is A1 but contains both A1 modes
    assert by == {(0, (1, 1)), (0, (2, 2)), (1, (0, 0)), (1, (2, 2))}


def test_fermi_resonance_from_labelled_modes():
    # the labelled modes of a force-field Hessian give the same fundamentals as a dict
    pos, num, hess, _ = water()
    res = gt.analyze(num, pos)
    labels = res.label_modes(hess)
    funds = fundamentals(res.table, labels, res.vibrations().irreps)
    assert sorted(f.irrep for f in funds) == ["A1", "A1", "B2"]
    pairs = [(f.irrep, f.wavenumber) for f in funds]
    assert res.fermi_resonances(labels, 5000.0) == res.fermi_resonances(pairs, 5000.0)


def test_fermi_resonance_input_errors():
    res = gt.analyze(*ase_molecule("H2O"))
    with pytest.raises(InputError, match="A1, A2, B1, B2"):
        res.fermi_resonances({"E": 1000.0}, 10.0)
    with pytest.raises(InputError, match="positive"):
        res.fermi_resonances({"A1": -5.0}, 10.0)
    with pytest.raises(InputError, match="window"):
        res.fermi_resonances({"A1": 1000.0}, 0.0)
    with pytest.raises(InputError, match="holds 1"):
        res.fermi_resonances({"B2": [3756.0, 3000.0]}, 10.0)
    with pytest.raises(InputError, match="B1"):  # not in Γ_vib of water
        res.fermi_resonances({"B1": 500.0}, 10.0)
    # without Γ_vib (the plain function), any number of fundamentals of any irrep is accepted
    found = fermi_resonances(get_table("C2v"), {"A1": [1000.0, 2001.0]}, 5.0)
    assert [(f.fundamental.index, f.kind, f.separation) for f in found] == [(1, "overtone", 1.0)]


# --------------------------------------------------------------------- the command


def test_selection_command_json(capsys):
    argv = ["selection", "Oh", "--band", "T1u^2", "--band", "A1g+T1u", "--format", "json"]
    argv += ["--transition", "A1g->T1u", "--transition", "T2g->Eg"]
    assert main(argv) == 0
    out = json.loads(capsys.readouterr().out)
    assert set(out) == {"group", "bands", "transitions"}
    assert out["group"] == "Oh"
    assert [set(b) for b in out["bands"]] == [{"band", "irreps", "ir_active", "raman_active"}] * 2
    assert out["bands"][0] == {
        "band": "T1u^2",
        "irreps": {"A1g": 1, "Eg": 1, "T2g": 1},
        "ir_active": False,
        "raman_active": True,
    }
    assert out["bands"][1]["irreps"] == {"T1u": 1} and out["bands"][1]["ir_active"]
    assert out["transitions"] == [
        {"transition": "A1g->T1u", "allowed": True, "components": ["x", "y", "z"]},
        # Laporte (common practice): d–d in Oh is g → g, forbidden
        {"transition": "T2g->Eg", "allowed": False, "components": []},
    ]


def test_selection_command_text(capsys):
    argv = ["selection", "D∞h", "--band", "Πu^2", "--transition", "Σg+->Πu"]
    assert main(argv) == 0
    out = capsys.readouterr().out.splitlines()
    assert out[0] == "D∞h"
    assert "Σg+ + Δg" in out[1] and "IR inactive, Raman active" in out[1]
    assert "allowed (x, y)" in out[2]


def test_selection_command_errors(capsys):
    assert main(["selection", "Oh", "--band", "Q^2"]) == 1
    err = capsys.readouterr().err
    assert "'Q^2'" in err and "A1g" in err
    assert main(["selection", "Oh", "--transition", "A1g"]) == 1
    assert "'->'" in capsys.readouterr().err
    assert main(["selection", "Oh"]) == 2
    assert main(["selection", "Xy", "--band", "A"]) == 1
