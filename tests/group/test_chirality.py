"""The margin of a chiral verdict: ``improper_within`` (shared/INTERFACE.md, "More keys")."""

from __future__ import annotations

import json

import gammatrace as gt
import numpy as np
import pytest
from conftest import random_rotation


def benzene(noise: float = 0.0, seed: int = 7):
    # ring C–C 1.39 Å, C–H 1.08 Å (common practice; planar D6h)
    ang = np.arange(6) * np.pi / 3
    ring = np.c_[np.cos(ang), np.sin(ang), np.zeros(6)]
    pos = np.r_[1.39 * ring, 2.47 * ring]
    if noise:
        pos = pos + np.random.default_rng(seed).normal(0.0, noise, pos.shape)
    return ["C"] * 6 + ["H"] * 6, pos


def test_exact_achiral_structures_have_zero_margin():
    for symbols, pos in [
        benzene(),
        (["O", "H", "H"], [[0, 0, 0.12], [0, 0.76, -0.47], [0, -0.76, -0.47]]),
    ]:
        a = gt.analyze(symbols, pos)
        assert not a.chiral
        assert a.improper_within is not None and a.improper_within < 1e-9


def test_noisy_benzene_is_chiral_only_by_a_small_margin():
    # 0.02 Å noise breaks every mirror at 0.01 Å, but a mirror returns within a few noise
    # amplitudes (issue: "improper_within ≤ 0.1")
    for seed in range(5):
        a = gt.analyze(*benzene(0.02, seed))
        if a.chiral:
            assert a.improper_within is not None
            assert a.tol < a.improper_within <= 0.1
            line = a.report(worked=False).splitlines()[2]
            assert f"chiral at {a.tol:g} Å; achiral within" in line
        else:
            assert a.improper_within <= a.tol


def test_achiral_at_the_tolerance_means_margin_within_it():
    a = gt.analyze(*benzene(0.004, seed=3))
    assert not a.chiral
    assert 0.0 < a.improper_within <= a.tol


def test_a_truly_chiral_molecule_has_no_margin_in_range():
    # CHFClBr: a stereocentre, no improper operation at any small tolerance (common practice)
    pos = [[0, 0, 0], [0.63, 0.63, 0.63], [-0.8, -0.8, 0.8], [-1.0, 1.0, -1.0], [1.1, -1.1, -1.1]]
    a = gt.analyze(["C", "H", "F", "Cl", "Br"], pos)
    assert a.chiral and a.improper_within is None
    assert "no mirror, inversion or S_n within 0.1 Å" in a.report(worked=False)
    row = a.to_dict()
    assert row["improper_within"] is None and json.loads(json.dumps(row))["chiral"] is True


@pytest.mark.parametrize("seed", [1, 2])
def test_margin_does_not_depend_on_orientation(seed):
    symbols, pos = benzene(0.02, seed=11)
    q = random_rotation(np.random.default_rng(seed))
    a, b = gt.analyze(symbols, pos), gt.analyze(symbols, pos @ q.T + 3.0)
    assert a.chiral == b.chiral
    assert (a.improper_within is None) == (b.improper_within is None)
    if a.improper_within is not None:
        assert abs(a.improper_within - b.improper_within) < 1e-6


def test_margin_is_the_best_improper_deviation_and_bounded_when_only_generators_are_verified(
    monkeypatch,
):
    # The margin of an achiral structure is the deviation of its best improper operation,
    # measured atom by atom (map every improper operation again here: the reference). A
    # huge structure, where detection verifies E and the generators only, reports its best
    # verified improper generator: never below the exact value, never above the tolerance.
    from gammatrace import _core
    from gammatrace import analysis as analysis_module

    symbols, pos = benzene(0.0005, seed=3)
    exact = gt.analyze(symbols, pos)
    assert exact.point_group == "D6h" and exact.symmetry.all_verified
    s = exact.structure
    improper = ~np.asarray(exact.symmetry.proper)
    _, devs = _core.map_operations(
        s.positions,
        s.numbers,
        tuple(exact.symmetry.center),
        np.ascontiguousarray(exact.symmetry.operations[improper]),
        exact.tol,
        None,
    )
    assert exact.improper_within == pytest.approx(devs.min(), abs=1e-12)
    monkeypatch.setattr(analysis_module, "VERIFY_ALL_LIMIT", 0)
    few = gt.analyze(symbols, pos)
    assert few.point_group == "D6h" and not few.symmetry.all_verified
    assert devs.min() - 1e-12 <= few.improper_within <= few.tol
