"""The π basis: one p orbital per π centre. Which atoms are centres (never hydrogens by default;
``pi:C,N`` names the elements; local π systems in non-planar structures), the reductions
against textbook π systems, the worked table, and the errors when there is no π system.

Geometries are invented inputs built here (regular rings, 120° angles) or ASE's G2 set; the
expected reductions name their sources.
"""

from __future__ import annotations

import gammatrace as gt
import numpy as np
import pytest
from conftest import ase_molecule, ferrocene_like, random_rotation, twisted_ethylene

CC, CH = 1.40, 1.08


def naphthalene():
    """Two regular hexagons sharing the bond along y (invented geometry, D2h)."""
    c = CC * np.sqrt(3.0) / 2.0
    symbols, pos = [], []
    for side in (-1.0, 1.0):
        centre = np.array([side * c, 0.0, 0.0])
        for deg in (30, 90, 150, 210, 270, 330):
            u = np.array([np.cos(np.radians(deg)), np.sin(np.radians(deg)), 0.0])
            shared = abs(centre[0] + CC * u[0]) < 1e-9
            if shared and side > 0:
                continue  # the two bridgehead atoms belong to both rings
            symbols.append("C")
            pos.append(centre + CC * u)
            if not shared:
                symbols.append("H")
                pos.append(centre + (CC + CH) * u)
    return symbols, np.array(pos)


def ring(n: int):
    """A regular CnHn ring (invented geometry, Dnh)."""
    radius = CC / (2.0 * np.sin(np.pi / n))
    ang = 2.0 * np.pi * np.arange(n) / n
    u = np.stack([np.cos(ang), np.sin(ang), np.zeros(n)], axis=1)
    return ["C"] * n + ["H"] * n, np.vstack([radius * u, (radius + CH) * u])


def allyl():
    """The allyl radical C3H5, planar with 120° angles everywhere (invented geometry, C2v)."""

    def at(deg, r=1.0):
        return r * np.array([np.cos(np.radians(deg)), np.sin(np.radians(deg)), 0.0])

    c0 = np.zeros(3)
    c1, c2 = at(210, CC), at(330, CC)
    pos = [c0, c1, c2, c0 + at(90, CH)]
    pos += [c1 + at(270, CH), c1 + at(150, CH), c2 + at(270, CH), c2 + at(30, CH)]
    return ["C", "C", "C", "H", "H", "H", "H", "H"], np.array(pos)


def hydrogens_carry_nothing(res: gt.Analysis, spec="pi") -> bool:
    resolved = res.resolve_basis(spec)
    return bool(np.all(resolved.functions_per_atom[resolved.numbers == 1] == 0))


# ------------------------------------------------------------------ planar π systems
def test_benzene_pi_system_is_on_the_carbons_only():
    # Source: Cotton, Chemical Applications of Group Theory, ch. 7 (Hückel π MOs of
    # benzene): Γπ = A2u + B2g + E1g + E2u, six functions.
    res = gt.analyze(*ase_molecule("C6H6"))
    rep = res.representation("pi")
    assert rep.irreps == {"A2u": 1, "B2g": 1, "E1g": 1, "E2u": 1}
    assert rep.dimension == 6 and hydrogens_carry_nothing(res)
    # naming the element gives the same basis; '*' puts one on every atom, hydrogens too
    assert res.representation("pi:C").irreps == rep.irreps
    assert res.representation("pi:*").irreps == {"A2u": 2, "B2g": 2, "E1g": 2, "E2u": 2}


def test_naphthalene_pi_system():
    # Hand derivation from the D2h table (Cotton, appendix) in this project's axes (x normal
    # to the plane, z the in-plane axis through the two bridgehead atoms): Γπ = 10, −2 (C2(z),
    # two atoms turned over), 0, 0, 0, 0, +2 (σ(xz)), −10 (σ(yz), the plane). Textbook Hückel
    # treatment of naphthalene (from memory, Atkins, Physical Chemistry; Cotton, ch. 7,
    # problems) with z normal to the plane: 2Au + 3B1u + 2B2g + 3B3g; the same ten functions
    # relabelled for x normal: 2Au + 3B3u + 2B1g + 3B2g.
    symbols, pos = naphthalene()
    res = gt.analyze(symbols, pos @ random_rotation(np.random.default_rng(3)).T)
    assert res.point_group == "D2h"
    rep = res.representation("pi")
    assert rep.irreps == {"Au": 2, "B1g": 2, "B2g": 3, "B3u": 3}
    assert rep.dimension == 10 and hydrogens_carry_nothing(res)
    # the out-of-plane irrep: the p orbitals transform among themselves like x, as B3u
    table = gt.get_table("D2h")
    assert "x" in table.irreps[[i.label for i in table.irreps].index("B3u")].functions


def test_s_trans_butadiene_pi_system():
    # Hand derivation from the C2h table (Cotton, appendix): Γπ = 4, 0, 0, −4 (E, C2, i, σh)
    # = 2Au + 2Bg, the four Hückel π MOs of s-trans-butadiene (from memory, Cotton ch. 7).
    res = gt.analyze(*ase_molecule("butadiene"))
    assert res.point_group == "C2h"
    assert res.representation("pi").irreps == {"Au": 2, "Bg": 2}
    assert hydrogens_carry_nothing(res)


def test_pyridine_pi_system_with_named_elements():
    # Common practice (the π MOs of pyridine in C2v with the ring in yz): Γπ = 6, −2, 2, −6
    # = 4B1 + 2A2. N alone: one p orbital on the C2 axis, B1 (like x).
    res = gt.analyze(*ase_molecule("C5H5N"))
    assert res.point_group == "C2v"
    assert res.representation("pi:C,N").irreps == {"A2": 2, "B1": 4}
    assert res.representation("pi:N,C") == res.representation("pi:C,N")
    assert res.representation("pi").irreps == {"A2": 2, "B1": 4}  # the default: C and N
    assert res.representation("pi:N").irreps == {"B1": 1}
    assert res.representation("pi:C").irreps == {"A2": 2, "B1": 3}
    assert hydrogens_carry_nothing(res, "pi:C,N")


def test_allyl_and_cyclopentadienyl_pi_systems():
    # Common practice: the allyl π MOs are b1 (bonding), a2 (non-bonding), b1 (antibonding)
    # with the molecule in yz; C5H5⁻ (D5h): A2'' + E1'' + E2'' (Cotton, ch. 7, cyclic
    # polyenes CnHn, from memory).
    res = gt.analyze(*allyl())
    assert res.point_group == "C2v"
    assert res.representation("pi").irreps == {"A2": 1, "B1": 2}
    cp = gt.analyze(*ring(5))
    assert cp.point_group == "D5h"
    assert cp.representation("pi").irreps == {"A2''": 1, "E1''": 1, "E2''": 1}
    assert hydrogens_carry_nothing(cp)


def test_hydrogens_never_carry_pi_by_default():
    molecules = [ase_molecule(m) for m in ("C6H6", "C5H5N", "butadiene", "isobutene", "H2CO")]
    molecules += [naphthalene(), allyl(), ring(7), twisted_ethylene()]
    for symbols, pos in molecules:
        res = gt.analyze(symbols, pos)
        resolved = res.resolve_basis("pi")
        assert resolved.dimension == sum(s != "H" for s in symbols) or resolved.normal is None
        assert hydrogens_carry_nothing(res), symbols
    # a planar structure of hydrogens alone has no π system unless asked for with '*'
    h3 = gt.analyze(["H"] * 3, ring(3)[1][:3])
    with pytest.raises(gt.BasisError, match="no non-hydrogen atom"):
        h3.representation("pi")
    assert h3.representation("pi:*").irreps == {"A2''": 1, "E''": 1}


# ------------------------------------------------------------------ local π systems
def test_local_pi_systems_of_non_planar_molecules():
    # Common practice: in a C2v molecule whose heavy-atom plane is yz, every p orbital normal
    # to that plane on the C2 axis is B1 (like x). Isobutene (CH3)2C=CH2 and acetone
    # (CH3)2C=O: the two atoms of the double bond, not the methyl carbons.
    for name, elements in (("isobutene", ["C", "C"]), ("CH3COCH3", ["C", "O"])):
        symbols, pos = ase_molecule(name)
        res = gt.analyze(symbols, pos)
        assert res.point_group == "C2v"
        resolved = res.resolve_basis("pi")
        assert resolved.normal is None  # the molecule is not planar: found locally
        assert sorted(symbols[i] for i in resolved.centres) == elements
        assert res.representation("pi").irreps == {"B1": 2}


def test_sandwich_rings_keep_their_pi_systems():
    # Source: Cotton, ch. 8 (metallocenes; from memory): the ten Cp π orbitals of a staggered
    # ferrocene (D5d) span A1g + A2u + E1g + E1u + E2g + E2u. The Fe-C bonds are left out when
    # the π systems are found; Fe and H carry nothing.
    res = gt.analyze(ferrocene_like())
    resolved = res.resolve_basis("pi")
    assert resolved.centres.tolist() == [i for i, z in enumerate(resolved.numbers) if z == 6]
    assert np.allclose(np.abs(resolved.normals @ [0, 0, 1]), 1.0)  # along the 5-fold axis
    assert res.representation("pi").irreps == {
        "A1g": 1,
        "E1g": 1,
        "E2g": 1,
        "A2u": 1,
        "E1u": 1,
        "E2u": 1,
    }


def test_twisted_ethylene_has_perpendicular_p_orbitals():
    # Hand derivation from the D2d table (Cotton, appendix): each p orbital is normal to its
    # own CH2 plane; Γπ = 2, 0 (S4), −2 (C2), 0 (C2'), 0 (σd: one kept, one turned over) = E.
    res = gt.analyze(*twisted_ethylene())
    assert res.point_group == "D2d"
    resolved = res.resolve_basis("pi")
    assert resolved.centres.tolist() == [0, 1]
    assert abs(resolved.normals[0] @ resolved.normals[1]) < 1e-9
    rep = res.representation("pi")
    assert rep.irreps == {"E": 1}
    # the σd class keeps one orbital and turns the other over: no single contribution
    sigma = rep.class_labels.index("2σd")
    assert rep.unshifted[sigma] == 2 and rep.contributions[sigma] is None
    assert "varies" in rep.worked_table()


def test_structures_without_a_pi_system_say_why():
    with pytest.raises(gt.BasisError, match=r"no π centres.*not planar"):
        gt.analyze(*ase_molecule("CH4")).representation("pi")
    # the O of dimethyl ether is flat with two bonds, but alone: no π system
    with pytest.raises(gt.BasisError, match="no π centres"):
        gt.analyze(*ase_molecule("CH3OCH3")).representation("pi")
    with pytest.raises(gt.BasisError, match="linear"):
        gt.analyze(*ase_molecule("CO2")).representation("pi")
    with pytest.raises(gt.BasisError, match="single atom"):
        gt.analyze(["Ne"], [[0.0, 0.0, 0.0]]).representation("pi")
    # naming an element the π system lacks
    with pytest.raises(gt.BasisError, match="no N atom"):
        gt.analyze(*ase_molecule("C6H6")).representation("pi:N")
    with pytest.raises(gt.BasisError, match="unknown element 'Qq'"):
        gt.Basis.pi("C,Qq")


# ------------------------------------------------------------------ worked tables
def test_pi_worked_table_counts_only_pi_centres():
    # Cotton, ch. 7, benzene: the p orbitals left in place are the 6 carbons under E and σh
    # and the 2 carbons on each C2' axis and σv plane; each contributes +1 or −1.
    res = gt.analyze(*ase_molecule("C6H6"))
    rep = res.representation("pi")
    labels = list(rep.class_labels)
    unshifted = dict(zip(labels, rep.unshifted.tolist()))
    assert unshifted == {
        "E": 6,
        "2C6": 0,
        "2C3": 0,
        "C2": 0,
        "3C2'": 2,
        "3C2''": 0,
        "i": 0,
        "2S3": 0,
        "2S6": 0,
        "σh": 6,
        "3σd": 0,
        "3σv": 2,
    }
    per_item = {lab: c for lab, c, n in zip(labels, rep.contributions, rep.unshifted) if n}
    assert per_item == {"E": 1, "3C2'": -1, "σh": -1, "3σv": 1}
    text = rep.worked_table()
    assert "unshifted π centres" in text and "varies" not in text


def test_orbital_worked_table_counts_only_atoms_with_orbitals():
    # [Fe(CN)6] (invented octahedral geometry): with orbitals on Fe alone, only Fe is counted,
    # unshifted by every operation, and its s + p + d contribution is the character. Cotton,
    # appendix (Oh functions): s -> A1g, p -> T1u, d -> Eg + T2g.
    axes = np.vstack([np.eye(3), -np.eye(3)])
    pos = np.vstack([[0.0, 0.0, 0.0], 1.92 * axes, 3.08 * axes])
    res = gt.analyze(["Fe"] + ["C"] * 6 + ["N"] * 6, pos)
    rep = res.representation("orbitals:Fe=spd")
    assert rep.irreps == {"A1g": 1, "Eg": 1, "T2g": 1, "T1u": 1}
    assert rep.unshifted.tolist() == [1] * len(rep.class_labels)
    assert all(c is not None for c in rep.contributions)
    assert np.allclose(rep.contributions, rep.characters)
    assert "varies" not in rep.worked_table()
    # ferrocene-like: Fe alone is counted, never a ring carbon
    fc = gt.analyze(ferrocene_like())
    rep = fc.representation("orbitals:Fe=spd")
    assert rep.unshifted.tolist() == [1] * len(rep.class_labels)
    assert "varies" not in rep.worked_table()
    # orbitals on Fe and C: a class whose unshifted atoms are Fe alone still has one
    # contribution; E and σd (Fe plus carbons in the plane) mix the two kinds
    both = fc.representation("orbitals:Fe=spd,C=p")
    labels = list(both.class_labels)
    assert both.unshifted[labels.index("E")] == 11
    assert both.contributions[labels.index("E")] is None
    assert both.contributions[labels.index("5σd")] is None
    assert both.contributions[labels.index("i")] == pytest.approx(3.0)  # Fe: 1 + 3·(−1) + 5
