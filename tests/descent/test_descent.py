"""Site symmetry, the site-symmetry route to Γ_3N and distortion ladders (gammatrace.descent).

Reference answers: Mackay icosahedra from ASE's cluster builder (orbits worked out from the
construction, see ``mackay_orbits``), random symmetric structures built in every group of a
list (Σ orbit sizes, orbit-stabiliser theorem, induced = counted Γ_3N), and published
correlation tables for the distortion ladder.
"""

from __future__ import annotations

import doctest
import importlib
import json
from collections import Counter

import gammatrace as gt
import numpy as np
import pytest
from gammatrace.descent import (
    check_induced,
    distortion_ladder,
    induced_representation,
    site_analysis,
)
from gammatrace.errors import BasisError, SymmetryError
from gammatrace.io import Structure, builders
from gammatrace.tables import correlate, get_table
from hypothesis import assume, given
from hypothesis import strategies as st

GOLDEN = (1.0 + 5.0**0.5) / 2.0


# --------------------------------------------------------------------------------------------
# Mackay icosahedra
# --------------------------------------------------------------------------------------------


def mackay_orbits(n_shells: int) -> Counter:
    """Orbits (size, site group) of a Mackay icosahedron with ``n_shells`` shells (centre = 1).

    From the construction (common practice): shell k ≥ 1 is an icosahedron of edge k
    spacings with 10k² + 2 atoms: its 12 vertices (site C5v); k − 1 atoms on each of the 30
    edges, at j/k along the edge — the midpoint (k even) lies on a C2 axis and two mirrors
    (C2v, 30 atoms), every other pair j, k − j is swapped by that C2 and lies only in the
    mirror containing the edge (Cs, 60 atoms); and the atoms inside each of the 20 faces at
    barycentric coordinates (a, b, c)/k, a + b + c = k, all ≥ 1, one orbit per partition of k
    into three positive parts: a = b = c is the face centre on a C3 axis (C3v, 20 atoms), two
    equal parts lie on a mirror (Cs, 60 atoms), three different parts are general (C1, 120).
    """
    out: Counter = Counter({(1, "Ih"): 1})
    for k in range(1, n_shells):
        out[(12, "C5v")] += 1
        for j in range(1, k):
            if 2 * j == k:
                out[(30, "C2v")] += 1
            elif j < k - j:
                out[(60, "Cs")] += 1
        for a in range(1, k):
            for b in range(a, k):
                c = k - a - b
                if c < b:
                    continue
                parts = len({a, b, c})
                out[{1: (20, "C3v"), 2: (60, "Cs"), 3: (120, "C1")}[parts]] += 1
    return out


def ase_icosahedron(n_shells: int):
    from ase.cluster import Icosahedron

    return Icosahedron("Cu", n_shells)


def test_mackay_55_orbits():
    # 1 (Ih), 12 (C5v), 12 (C5v), 30 (C2v): common practice, from the construction
    # (the centre, the first shell's vertices, the second shell's vertices and edge midpoints).
    an = gt.analyze(ase_icosahedron(3))
    sa = site_analysis(an)
    assert an.point_group == "Ih"
    assert sorted((s.size, s.site_group) for s in sa.sites) == sorted(
        [(1, "Ih"), (12, "C5v"), (12, "C5v"), (30, "C2v")]
    )


def test_mackay_147_orbits():
    # Worked out from the construction (see mackay_orbits; common practice): the 55-atom
    # core, then the third shell's 12 vertices (C5v), its 60 edge atoms two per edge off the
    # midpoints (Cs) and its 20 face centres (C3v).
    sa = site_analysis(gt.analyze(ase_icosahedron(4)))
    expected = Counter(
        {(1, "Ih"): 1, (12, "C5v"): 3, (30, "C2v"): 1, (60, "Cs"): 1, (20, "C3v"): 1}
    )
    assert Counter((s.size, s.site_group) for s in sa.sites) == expected
    assert expected == mackay_orbits(4)
    assert sum(s.size for s in sa.sites) == 147


@pytest.mark.parametrize("n_shells", [5, 6, 7])
def test_larger_mackay_orbits_follow_the_construction(n_shells):
    # 309, 561 and 923 atoms; the 923-atom cluster has general (C1) face atoms.
    an = gt.analyze(ase_icosahedron(n_shells))
    sa = site_analysis(an)
    assert Counter((s.size, s.site_group) for s in sa.sites) == mackay_orbits(n_shells)
    assert sum(s.size for s in sa.sites) == an.n_atoms


def test_mackay_sites_agree_with_analysis_orbits():
    an = gt.analyze(ase_icosahedron(4))
    sa = site_analysis(an)
    assert [s.atoms.tolist() for s in sa.sites] == [o.atoms for o in an.orbits]
    assert [s.site_group for s in sa.sites] == [o.site_group for o in an.orbits]
    assert sa.unique_sites.tolist() == [o.atoms[0] for o in an.orbits]


def test_site_frames_put_z_on_the_axis_through_the_atom():
    # An atom on a C_n axis (n ≥ 2) lies on its site group's principal axis, which the
    # standard frame takes as z (DEVELOPERS.md, standard orientation).
    an = gt.analyze(ase_icosahedron(4))
    for s in site_analysis(an).sites:
        assert np.allclose(s.frame @ s.frame.T, np.eye(3), atol=1e-9)
        if s.site_group in ("C5v", "C3v", "C2v"):
            r = an.structure.positions[s.representative] - an.center
            assert abs(abs(s.frame[2] @ r) / np.linalg.norm(r) - 1.0) < 1e-6
            order = int(s.site_group[1])
            assert f"z along a C{order} axis" in s.description


def test_mackay_site_analysis_from_generators_only(monkeypatch):
    # Above VERIFY_ALL_LIMIT only the generators are verified: stabilisers then come from
    # composing their permutations, and must be the same.
    import gammatrace.analysis as analysis_module

    atoms = ase_icosahedron(4)
    full_analysis = gt.analyze(atoms)
    assert full_analysis.all_verified
    full = site_analysis(full_analysis)
    monkeypatch.setattr(analysis_module, "VERIFY_ALL_LIMIT", 1000)
    an = gt.analyze(atoms)
    assert not an.all_verified  # only E and the generators were mapped
    sparse = site_analysis(an)
    assert "permutations" not in an.__dict__  # site analysis did not map the other operations
    assert [s.site_group for s in sparse.sites] == [s.site_group for s in full.sites]
    for a, b in zip(sparse.sites, full.sites):
        assert np.array_equal(a.stabiliser, b.stabiliser)
        assert np.array_equal(a.atoms, b.atoms)
    assert [o.site_group for o in an.orbits] == [o.site_group for o in full_analysis.orbits]
    # mapped on demand, the remaining permutations equal those of the full verification
    assert np.array_equal(an.permutations, full_analysis.permutations)


# --------------------------------------------------------------------------------------------
# Random symmetric structures in many groups
# --------------------------------------------------------------------------------------------

GROUPS = [
    "Cs", "Ci", "C2", "C3", "C2v", "C3v", "C4v", "C6v", "C2h", "C3h", "C4h", "D2", "D3", "D2h",
    "D3h", "D4h", "D5h", "D6h", "D2d", "D3d", "D4d", "D5d", "S4", "S6", "S8",
    "T", "Td", "Th", "O", "Oh", "I", "Ih",
]  # fmt: skip


def symmetric_structure(name: str, seed: int) -> Structure:
    """Orbits of random seeds under a group's canonical operations: three general seeds (one
    or two general orbits can have more symmetry than the group: two eclipsed pentagons of
    C5h are D5h) plus seeds on rotation axes and in mirror planes."""
    from gammatrace.tables._ops import describe

    rng = np.random.default_rng(seed)
    ops = get_table(name).operations
    proper, angle, axis = describe(ops)
    seeds = list(rng.uniform(-2.5, 2.5, (3, 3)))
    rot_axes = axis[proper & (angle > 1e-6)]
    mirror_normals = axis[~proper & (angle < 1e-6)]
    for _ in range(rng.integers(1, 4)):
        if len(rot_axes) and rng.random() < 0.5:
            seeds.append(rot_axes[rng.integers(len(rot_axes))] * rng.uniform(0.8, 3.0))
        elif len(mirror_normals):
            n = mirror_normals[rng.integers(len(mirror_normals))]
            p = rng.uniform(-2.5, 2.5, 3)
            seeds.append(p - (p @ n) * n)
    if rng.random() < 0.5:
        seeds.append(np.zeros(3))
    numbers = np.concatenate([[6, 6, 6], rng.choice([1, 7, 8, 9], size=len(seeds) - 3)])
    return builders.orbit_structure(ops, np.array(seeds), numbers)


def _min_distance(positions: np.ndarray) -> float:
    d = np.linalg.norm(positions[:, None] - positions[None], axis=-1)
    d[np.diag_indices(len(d))] = np.inf
    return float(d.min()) if len(d) > 1 else np.inf


@given(name=st.sampled_from(GROUPS), seed=st.integers(0, 2**32 - 1))
def test_random_structures_orbits_stabilisers_and_induction(name, seed):
    s = symmetric_structure(name, seed)
    assume(_min_distance(s.positions) > 0.2)
    an = gt.analyze(s)
    assert an.point_group == name
    sa = site_analysis(an)
    # Σ orbit sizes = N; |site group| · |orbit| = |group| (orbit–stabiliser theorem,
    # common practice).
    assert sum(site.size for site in sa.sites) == an.n_atoms
    for site in sa.sites:
        assert site.site_order * site.size == an.order
        assert get_table(site.site_group).order == site.site_order
        # every stabiliser operation fixes the representative atom
        r = an.structure.positions[site.representative] - an.center
        moved = an.operation_matrices[site.stabiliser] @ r
        assert np.abs(moved - r).max() < 1e-6
        # in the site frame the stabiliser is the site table's canonical set
        std = site.frame @ an.operation_matrices[site.stabiliser] @ site.frame.T
        canon = get_table(site.site_table).operations
        dist = np.linalg.norm((std[:, None] - canon[None]).reshape(len(std), len(canon), 9), axis=2)
        assert dist.min(axis=1).max() < 1e-6
    # Induced Γ_3N (site-symmetry route) equals the counted one; so does Γ_atoms.
    ind = check_induced(an, "cartesian")
    assert ind.irreps == an.representation("cartesian").irreps
    check_induced(an, "atoms")


@pytest.mark.parametrize("name", ["C7v", "D8h", "D6d", "C5h", "S10", "D9"])
def test_induction_for_larger_axial_groups(name):
    s = symmetric_structure(name, 7)
    an = gt.analyze(s)
    assert an.point_group == name
    ind = check_induced(an)
    assert sum(o.site.size for o in ind.orbits) == an.n_atoms


def test_induction_is_not_counting_by_another_name():
    # Source: Nakamoto, Infrared and Raman Spectra, part A (ammonia): Γ_vib = 2A1 + 2E. The
    # site route: N at C3v carries x, y, z as A1 + E, each H at Cs as 2A' + A''; inducing
    # A' of Cs into C3v gives A1 + E and A'' gives A2 + E (Frobenius reciprocity with the
    # C3v → Cs correlation, Cotton's correlation table, from memory).
    nh3 = gt.analyze(
        ["N", "H", "H", "H"],
        [[0, 0, 0.1], [0.94, 0, -0.27], [-0.47, 0.814, -0.27], [-0.47, -0.814, -0.27]],
    )
    ind = induced_representation(nh3)
    by_group = {o.site.site_group: o for o in ind.orbits}
    assert by_group["C3v"].site_irreps == {"A1": 1, "E": 1}
    assert by_group["Cs"].site_irreps == {"A'": 2, "A''": 1}
    assert by_group["Cs"].induced == {"A'": {"A1": 1, "E": 1}, "A''": {"A2": 1, "E": 1}}
    assert ind.vibrations == {"A1": 2, "E": 2}


def test_check_induced_raises_on_disagreement(monkeypatch):
    from gammatrace.descent import sites

    water = gt.analyze(
        ["O", "H", "H"], [[0, 0, 0.1173], [0, 0.7572, -0.4692], [0, -0.7572, -0.4692]]
    )
    check_induced(water)
    original = sites._induce

    def wrong(prod, inv, subgroup, site_chars):
        return original(prod, inv, subgroup, site_chars) * 2.0

    monkeypatch.setattr(sites, "_induce", wrong)
    with pytest.raises(SymmetryError, match="differ from counted"):
        check_induced(water)


def test_linear_and_single_atom_sites():
    co2 = gt.analyze(["O", "C", "O"], [[0, 0, -1.16], [0, 0, 0], [0, 0, 1.16]])
    sa = site_analysis(co2)
    assert sorted((s.size, s.site_group) for s in sa.sites) == [(1, "D∞h"), (2, "C∞v")]
    # Source: Herzberg, Infrared and Raman Spectra, CO2: Γ_vib = Σg+ + Σu+ + Πu.
    assert check_induced(co2).vibrations == {"Σg+": 1, "Σu+": 1, "Πu": 1}
    ar = gt.analyze(["Ar"], [[0, 0, 0]])
    assert [s.site_group for s in site_analysis(ar).sites] == ["K_h"]
    assert induced_representation(ar).irreps == {"Pu": 1}


def test_unsupported_basis_is_a_clear_error():
    water = gt.analyze(
        ["O", "H", "H"], [[0, 0, 0.1173], [0, 0.7572, -0.4692], [0, -0.7572, -0.4692]]
    )
    with pytest.raises(BasisError, match="cartesian"):
        induced_representation(water, "bonds")


# --------------------------------------------------------------------------------------------
# Distortion ladders
# --------------------------------------------------------------------------------------------

# Source: Wilson, Decius & Cross, Molecular Vibrations, Appendix X, Ih → D5d  # from memory
IH_TO_D5D = {
    "Ag": {"A1g": 1},
    "T1g": {"A2g": 1, "E1g": 1},
    "T2g": {"A2g": 1, "E2g": 1},
    "Gg": {"E1g": 1, "E2g": 1},
    "Hg": {"A1g": 1, "E1g": 1, "E2g": 1},
    "Au": {"A1u": 1},
    "T1u": {"A2u": 1, "E1u": 1},
    "T2u": {"A2u": 1, "E2u": 1},
    "Gu": {"E1u": 1, "E2u": 1},
    "Hu": {"A1u": 1, "E1u": 1, "E2u": 1},
}
# Source: Wilson, Decius & Cross, Molecular Vibrations, Appendix X, Ih → D3d  # from memory
IH_TO_D3D_G = {
    "Ag": {"A1g": 1},
    "T1g": {"A2g": 1, "Eg": 1},
    "T2g": {"A2g": 1, "Eg": 1},
    "Gg": {"A1g": 1, "A2g": 1, "Eg": 1},
    "Hg": {"A1g": 1, "Eg": 2},
}


def stretched(s: Structure, axis, factor: float) -> Structure:
    """Stretch along ``axis`` through the centre: x → x + factor (x·a) a."""
    a = np.asarray(axis, dtype=float)
    a = a / np.linalg.norm(a)
    x = s.positions - s.positions.mean(axis=0)
    pos = x + factor * np.outer(x @ a, a)
    return Structure(s.numbers.copy(), np.ascontiguousarray(pos), "<stretched>")


def restrict(irreps: dict, correlation: dict) -> dict:
    out: Counter = Counter()
    for label, n in irreps.items():
        for low, m in correlation[label].items():
            out[low] += n * m
    return dict(out)


def test_c60_stretched_along_c5_descends_from_ih_to_d5d():
    # A stretch along a C5 axis keeps that axis, the five C2 axes perpendicular to it, i and
    # the five mirrors containing it: D5d (common practice).
    s = stretched(builders.c60(), [0.0, 1.0, GOLDEN], 0.01)
    ladder = distortion_ladder(s, [1e-4, 1e-3, 0.2, 0.5])
    groups = [st.point_group for st in ladder.steps]
    assert groups == ["D5d", "D5d", "Ih", "Ih"]
    assert ladder.steps[0].max_deviation < 1e-6
    assert 0.001 < ladder.steps[-1].max_deviation < 0.2
    assert ladder.deviation_from("Ih") == ladder.steps[2].max_deviation
    (d,) = ladder.descents
    assert (d.higher, d.lower) == ("Ih", "D5d")
    assert d.correlation == IH_TO_D5D
    assert d.embedding in [e["description"] for e in correlate("Ih", "D5d")["embeddings"]]
    # Restricting the loose Γ_3N through the correlation gives the tight Γ_3N.
    loose, tight = ladder.steps[-1].analysis, ladder.steps[0].analysis
    assert restrict(loose.representation("cartesian").irreps, d.correlation) == (
        tight.representation("cartesian").irreps
    )
    text = ladder.to_text()
    assert "Ih -> D5d" in text and "T1u -> A2u + E1u" in text


def test_mackay_stretched_along_c3_descends_from_ih_to_d3d():
    ico = gt.io.as_structure(ase_icosahedron(3))
    an = gt.analyze(ico)
    # the C3 axis along (1, 1, 1) of the standard frame, in the input coordinates
    axis = an.frame.T @ np.array([1.0, 1.0, 1.0])
    s = stretched(ico, axis, 0.004)
    ladder = distortion_ladder(s, [1e-5, 0.3])
    assert [st.point_group for st in ladder.steps] == ["D3d", "Ih"]
    (d,) = ladder.descents
    assert {k: v for k, v in d.correlation.items() if k.endswith("g")} == IH_TO_D3D_G


def test_d6h_to_d3h_ladder_picks_the_embedding_of_the_actual_operations():
    # Benzene with alternating C-H lengths keeps the C2 axes through the atoms (C2' of D6h)
    # and loses those through bond midpoints: D3h with C2' → C2 (common practice).
    ang = np.radians(np.arange(6) * 60.0)
    ring = np.stack([np.cos(ang), np.sin(ang), np.zeros(6)], 1)
    ch = np.where(np.arange(6) % 2 == 0, 1.08, 1.085)
    pos = np.vstack([1.39 * ring, (1.39 + ch)[:, None] * ring])
    s = Structure(np.array([6] * 6 + [1] * 6), np.ascontiguousarray(pos), "<benzene>")
    ladder = distortion_ladder(s, [1e-4, 0.05])
    assert [st.point_group for st in ladder.steps] == ["D3h", "D6h"]
    (d,) = ladder.descents
    known = correlate("D6h", "D3h")["embeddings"]
    assert len(known) == 2
    assert d.embedding in [e["description"] for e in known]
    assert "3C2 from 3C2'" in d.embedding
    loose, tight = ladder.steps[1].analysis, ladder.steps[0].analysis
    for basis in ("cartesian", "atoms"):
        assert restrict(loose.representation(basis).irreps, d.correlation) == (
            tight.representation(basis).irreps
        )
    # the other embedding would not reproduce the tight Γ_3N
    other = next(e for e in known if e["description"] != d.embedding)
    assert restrict(loose.representation("cartesian").irreps, other["correlation"]) != (
        tight.representation("cartesian").irreps
    )


def test_ladder_finds_the_embedding_when_the_structure_names_c2_the_other_way():
    # A cube stretched along z keeps D4h. Its own frame takes C2' through the face diagonals
    # of the cube (the edges' midpoints carry no atoms), so its correlation from Oh is the
    # printed one (Cotton, Oh correlation table, D4h column: A2g -> B1g; from memory) with
    # B1 and B2 exchanged; the ladder names the one embedding and that other naming.
    cube = np.array([[x, y, 1.05 * z] for x in (-1, 1) for y in (-1, 1) for z in (-1, 1)])
    s = Structure(np.array([6] * 8), np.ascontiguousarray(cube, dtype=float), "<cube>")
    ladder = distortion_ladder(s, [1e-4, 0.2])
    assert [st.point_group for st in ladder.steps] == ["D4h", "Oh"]
    (d,) = ladder.descents
    (entry,) = correlate("Oh", "D4h")["embeddings"]
    (other,) = entry["other_namings"]
    assert d.embedding == entry["description"] and d.note == other["note"]
    assert d.correlation["A2g"] == {"B2g": 1} and d.correlation["Eg"] == {"A1g": 1, "B2g": 1}
    loose, tight = ladder.steps[1].analysis, ladder.steps[0].analysis
    assert restrict(loose.representation("cartesian").irreps, d.correlation) == (
        tight.representation("cartesian").irreps
    )


def test_ladder_keeps_going_past_a_failed_step():
    # Two atoms 0.3 Å apart overlap at tolerance 0.5 Å (an error), not at 0.01.
    s = Structure(np.array([1, 1]), np.array([[0.0, 0, 0], [0.3, 0, 0]]), "<H2>")
    ladder = distortion_ladder(s, [0.01, 0.5])
    assert ladder.steps[0].point_group == "D∞h"
    assert ladder.steps[1].point_group is None and ladder.steps[1].error
    assert ladder.descents == []


def test_ladder_rejects_bad_tolerances():
    with pytest.raises(gt.InputError):
        distortion_ladder(builders.c60(), [0.01, -1.0])


# --------------------------------------------------------------------------------------------
# CLI and doctests
# --------------------------------------------------------------------------------------------


def _write_xyz(path, s: Structure) -> None:
    from gammatrace.io import write_xyz

    write_xyz([s], path)


def test_cli_sites_json(tmp_path, capsys):
    from gammatrace.cli import main

    f = tmp_path / "ico.xyz"
    _write_xyz(f, gt.io.as_structure(ase_icosahedron(3)))
    assert main(["sites", str(f), "--format", "json", "--induced"]) == 0
    obj = json.loads(capsys.readouterr().out.strip())
    assert obj["point_group"] == "Ih"
    assert sorted((x["size"], x["site_group"]) for x in obj["sites"]) == sorted(
        [(1, "Ih"), (12, "C5v"), (12, "C5v"), (30, "C2v")]
    )
    assert obj["induced"]["irreps"] == gt.analyze(str(f)).representation("cartesian").irreps


def test_cli_ladder_json_and_errors(tmp_path, capsys):
    from gammatrace.cli import main

    f = tmp_path / "c60.xyz"
    _write_xyz(f, stretched(builders.c60(), [0.0, 1.0, GOLDEN], 0.01))
    assert main(["ladder", str(f), "--tolerances", "1e-4,0.3", "--format", "json"]) == 0
    obj = json.loads(capsys.readouterr().out.strip())
    assert [s["point_group"] for s in obj["steps"]] == ["D5d", "Ih"]
    assert obj["descents"][0]["correlation"] == IH_TO_D5D
    assert main(["ladder", str(tmp_path / "missing.xyz"), "--format", "json"]) == 1
    assert "error" in json.loads(capsys.readouterr().out.strip())
    assert main(["ladder", str(f), "--tolerances", "a,b"]) == 2
    assert main(["ladder"]) == 2


def test_cli_command_module_registers_into_a_parser():
    import argparse

    from gammatrace.cli import ladder as ladder_command

    p = argparse.ArgumentParser()
    p.add_argument("--traceback", action="store_true")
    ladder_command.register(p.add_subparsers(dest="command"))
    args = p.parse_args(["ladder", "x.xyz", "--tolerances", "0.1,0.2"])
    assert args.command == "ladder" and callable(args.func)


@pytest.mark.parametrize("name", ["gammatrace.descent.ladder", "gammatrace.descent.sites"])
def test_docstring_examples(name):
    module = importlib.import_module(name)
    result = doctest.testmod(module)
    assert result.failed == 0 and result.attempted > 0
