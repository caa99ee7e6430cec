"""Vibrational analyses against published worked examples.

Sources (each check names its own):
- G. Herzberg, Infrared and Raman Spectra of Polyatomic Molecules (Van Nostrand, 1945).
- K. Nakamoto, Infrared and Raman Spectra of Inorganic and Coordination Compounds, Part A.
- F. A. Cotton, Chemical Applications of Group Theory, 3rd ed. (Wiley, 1990), ch. 10.
- E. B. Wilson, J. C. Decius, P. C. Cross, Molecular Vibrations (McGraw-Hill, 1955).
Irrep labels follow Mulliken's 1955 axis recommendations (see README); where the printed
source uses another axis choice the labels were translated, which the comment says.
The irreps lists were written down from memory of these sources.
"""

from __future__ import annotations

import gammatrace as gt
import numpy as np
import pytest
from conftest import ase_molecule, octahedral, square_planar, trigonal_bipyramid

# name -> (structure factory, point group, Γ_vib, IR-active count, Raman-active count)
CASES = {
    # Herzberg (1945); water in the yz plane (Mulliken 1955) makes the antisymmetric stretch B2.
    "H2O": (lambda: ase_molecule("H2O"), "C2v", {"A1": 2, "B2": 1}, 3, 3),
    # Herzberg (1945), NH3: 2A1 + 2E, all active in IR and Raman.
    "NH3": (lambda: ase_molecule("NH3"), "C3v", {"A1": 2, "E": 2}, 4, 4),
    # Herzberg (1945), CH4: A1 + E + 2T2; IR only the two T2; Raman all four.
    "CH4": (lambda: ase_molecule("CH4"), "Td", {"A1": 1, "E": 1, "T2": 2}, 2, 4),
    # Herzberg (1945), CO2: Σg+ + Σu+ + Πu; IR Σu+ and Πu; Raman Σg+.
    "CO2": (lambda: ase_molecule("CO2"), "D∞h", {"Σg+": 1, "Σu+": 1, "Πu": 1}, 2, 1),
    # Herzberg (1945), C2H2: 2Σg+ + Σu+ + Πg + Πu; IR Σu+, Πu; Raman 2Σg+, Πg.
    "C2H2": (
        lambda: ase_molecule("C2H2"),
        "D∞h",
        {"Σg+": 2, "Σu+": 1, "Πg": 1, "Πu": 1},
        2,
        3,
    ),
    # Herzberg (1945), ethylene, printed (from memory) as 3ag + au + 2b1g + b1u + b2g + 2b2u
    # + 2b3u in axes with x along C=C and z perpendicular to the plane. Mulliken's axes used
    # here swap x and z (z along C=C, x perpendicular), which swaps the labels 1 <-> 3:
    # 3Ag + Au + 2B3g + B3u + B2g + 2B2u + 2B1u; 5 IR (B1u, B2u, B3u), 6 Raman (Ag, B2g, B3g).
    "C2H4": (
        lambda: ase_molecule("C2H4"),
        "D2h",
        {"Ag": 3, "B2g": 1, "B3g": 2, "Au": 1, "B1u": 2, "B2u": 2, "B3u": 1},
        5,
        6,
    ),
    # Wilson, Decius & Cross (1955), benzene (C2' through the carbon atoms):
    # 2A1g + A2g + 2B2g + E1g + 4E2g + A2u + 2B1u + 2B2u + 3E1u + 2E2u; IR 4, Raman 7.
    "C6H6": (
        lambda: ase_molecule("C6H6"),
        "D6h",
        {
            "A1g": 2,
            "A2g": 1,
            "B2g": 2,
            "E1g": 1,
            "E2g": 4,
            "A2u": 1,
            "B1u": 2,
            "B2u": 2,
            "E1u": 3,
            "E2u": 2,
        },
        4,
        7,
    ),
    # Nakamoto, Part A (octahedral XY6): A1g + Eg + T2g + 2T1u + T2u; IR 2, Raman 3.
    "SF6": (
        lambda: octahedral("S", "F", 1.561),
        "Oh",
        {"A1g": 1, "Eg": 1, "T2g": 1, "T1u": 2, "T2u": 1},
        2,
        3,
    ),
    # Nakamoto, Part A (trigonal-bipyramidal XY5): 2A1' + 2A2'' + 3E' + E''; IR 5, Raman 6.
    "PF5": (
        lambda: trigonal_bipyramid("P", "F", 1.577, 1.534),
        "D3h",
        {"A1'": 2, "E'": 3, "A2''": 2, "E''": 1},
        5,
        6,
    ),
    # Nakamoto, Part A (square-planar XY4): A1g + B1g + B2g + A2u + B2u + 2Eu; IR 3, Raman 3.
    "XeF4": (
        lambda: square_planar("Xe", "F", 1.95),
        "D4h",
        {"A1g": 1, "B1g": 1, "B2g": 1, "A2u": 1, "B2u": 1, "Eu": 2},
        3,
        3,
    ),
    # Herzberg (1945), allene: 3A1 + B1 + 3B2 + 4E; IR 3B2 + 4E = 7; Raman all 11.
    "allene": (
        lambda: ase_molecule("C3H4_D2d"),
        "D2d",
        {"A1": 3, "B1": 1, "B2": 3, "E": 4},
        7,
        11,
    ),
    # Herzberg (1945), staggered ethane: 3A1g + A1u + 2A2u + 3Eg + 3Eu; IR 5, Raman 6.
    "C2H6": (
        lambda: ase_molecule("C2H6"),
        "D3d",
        {"A1g": 3, "Eg": 3, "A1u": 1, "A2u": 2, "Eu": 3},
        5,
        6,
    ),
}


def _multiset(d: dict) -> dict:
    return {k: v for k, v in d.items() if v}


@pytest.mark.parametrize("name", sorted(CASES))
def test_published_vibrational_analysis(name):
    factory, group, gamma_vib, n_ir, n_raman = CASES[name]
    symbols, positions = factory()
    res = gt.analyze(symbols, positions, tol=0.01)
    assert res.point_group == group
    vib = res.vibrations()
    assert _multiset(vib.irreps) == gamma_vib
    assert vib.n_ir == n_ir
    assert vib.n_raman == n_raman
    dims = {ir.label: ir.dim for ir in res.table.irreps}
    linear = group.endswith(("∞h", "∞v"))
    assert sum(dims[k] * v for k, v in vib.irreps.items()) == 3 * len(symbols) - (
        5 if linear else 6
    )


def test_water_vibrations_are_2a1_plus_b2():
    # Mulliken 1955 axes: water in yz; bend and symmetric stretch A1, antisymmetric stretch B2.
    res = gt.analyze(["O", "H", "H"], [[0, 0, 0.1173], [0, 0.7572, -0.4692], [0, -0.7572, -0.4692]])
    assert res.vibrations().irreps == {"A1": 2, "B2": 1}
    # Γ_3N of water: 3A1 + A2 + 2B1 + 3B2 (Cotton, ch. 10, with the yz-plane convention)
    assert res.representation("cartesian").irreps == {"A1": 3, "A2": 1, "B1": 2, "B2": 3}


def test_c60_vibrations():
    # Source: Dresselhaus, Dresselhaus & Eklund, Science of Fullerenes and Carbon Nanotubes
    # (1996), Table 11.1: 2Ag + 3T1g + 4T2g + 6Gg + 8Hg + Au + 4T1u + 5T2u + 6Gu + 7Hu;
    # four IR-active T1u, ten Raman-active (2Ag + 8Hg).
    from gammatrace.io.builders import c60

    s = c60()
    res = gt.analyze(s)
    assert res.point_group == "Ih"
    vib = res.vibrations()
    assert vib.irreps == {
        "Ag": 2,
        "T1g": 3,
        "T2g": 4,
        "Gg": 6,
        "Hg": 8,
        "Au": 1,
        "T1u": 4,
        "T2u": 5,
        "Gu": 6,
        "Hu": 7,
    }
    assert vib.ir_active == {"T1u": 4}
    assert vib.raman_active == {"Ag": 2, "Hg": 8}
    assert vib.n_ir == 4 and vib.n_raman == 10
    assert vib.mutual_exclusion


def test_centrosymmetric_structures_report_mutual_exclusion():
    # common practice: with an inversion centre, g modes are Raman-only, u modes IR-only.
    co2 = gt.analyze(*ase_molecule("CO2")).vibrations()
    assert co2.mutual_exclusion
    assert not set(co2.ir_active) & set(co2.raman_active)
    assert not gt.analyze(*ase_molecule("H2O")).vibrations().mutual_exclusion


# Rotational symmetry numbers. Source: NIST-JANAF / common practice in statistical
# thermodynamics (e.g. McQuarrie, Statistical Mechanics, table 8.x), from memory.
SIGMA = {
    "H2O": 2,
    "NH3": 3,
    "CH4": 12,
    "C6H6": 12,
    "CO2": 2,
    "HCN": 1,
    "C2H6": 6,
    "C2H4": 4,
    "CH3Cl": 3,
    "CCl4": 12,
}


@pytest.mark.parametrize("name", sorted(SIGMA))
def test_symmetry_numbers(name):
    res = gt.analyze(*ase_molecule(name))
    assert res.symmetry_number == SIGMA[name]
    assert res.chiral is False


def test_sf6_symmetry_number_is_24():
    # McQuarrie, Statistical Mechanics: σ(SF6) = 24 (from memory)
    assert gt.analyze(*octahedral("S", "F", 1.56)).symmetry_number == 24


def test_chiral_structure_is_reported_chiral(rng):
    # common practice: a structure whose group has only proper rotations is chiral.
    # A D3 "propeller": orbit of a general point under the D3 rotations.
    from gammatrace.io.builders import orbit_structure

    s = orbit_structure(gt.get_table("D3").operations, np.array([[1.3, 0.4, 0.7]]), [6])
    res = gt.analyze(s)
    assert res.point_group == "D3"
    assert res.chiral
    assert res.symmetry_number == 6


def test_single_atom_has_no_vibrations():
    res = gt.analyze(["Ar"], [[0.0, 0.0, 0.0]])
    assert res.point_group == "K_h"
    assert res.order is None
    vib = res.vibrations()
    assert vib.modes == 0 and vib.irreps == {}
    assert res.representation("cartesian").irreps == {"Pu": 1}
    d = res.to_dict()
    assert d["point_group"] == "K_h" and d["order"] is None


def test_diatomic_has_one_mode():
    # common practice: a diatomic has 3N - 5 = 1 vibration, totally symmetric.
    res = gt.analyze(["N", "N"], [[0, 0, -0.55], [0, 0, 0.55]])
    assert res.point_group == "D∞h"
    assert res.vibrations().irreps == {"Σg+": 1}
    hcl = gt.analyze(["H", "Cl"], [[0, 0, 0], [0, 0, 1.27]])
    assert hcl.point_group == "C∞v"
    assert hcl.vibrations().irreps == {"Σ+": 1}


def test_hcn_is_linear_c_inf_v():
    # Herzberg (1945): HCN 2Σ+ + Π (4 modes, 3 fundamentals), all IR and Raman active.
    res = gt.analyze(*ase_molecule("HCN"))
    assert res.point_group == "C∞v"
    vib = res.vibrations()
    assert vib.irreps == {"Σ+": 2, "Π": 1}
    assert vib.modes == 4 and vib.n_ir == 3 and vib.n_raman == 3
