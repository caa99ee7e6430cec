"""The pruned search against the plain one (hypothesis), on structures built to defeat it.

Detection first tries a pruned search (few candidate operations, screened on a short probe,
early exits for small structures without symmetry) and falls back on the plain search, which
tries every candidate pair of images of two reference atoms. A shortcut of the pruned search
must never change the answer: wherever it answers, it answers as the plain search does (name,
order, class sizes), and the default path answers as both.

The structures are orbits of random seed points under a group's canonical operations
(``_core.canonical_group``), for every family, in adversarial styles: every orbit at one
radius (each window holds every atom of an element, distances repeat), radii a fraction of
the tolerance apart (shells that nearly merge), every atom moved by up to 0.45·tol (images
near the tolerance edge), often one element for all orbits; then rotated at random. The
profile is chosen by GAMMATRACE_HYPOTHESIS (conftest.py).
"""

from __future__ import annotations

import gammatrace as gt
import numpy as np
import pytest
from conftest import random_rotation
from gammatrace import _core
from gammatrace.io.builders import orbit_structure
from hypothesis import HealthCheck, assume, given, note, settings
from hypothesis import strategies as st

TOL = _core.DEFAULT_TOLERANCE
LINEAR_N = _core.LINEAR_SUBGROUP_N
LIMIT = _core.VERIFY_ALL_LIMIT

# Every family, with n drawn where it has one (core spelling of the names).
AXIAL = ("Cn", "Cnv", "Cnh", "Dn", "Dnh", "Dnd")
FAMILIES = ("C1", "Cs", "Ci", "S2n", *AXIAL, "T", "Td", "Th", "O", "Oh", "I", "Ih")
STYLES = ("one radius", "near shells", "jittered", "all three", "random radii")

suppress = settings(suppress_health_check=[HealthCheck.filter_too_much, HealthCheck.too_slow])


def group_name(family: str, n: int) -> str:
    if family == "S2n":
        return f"S{2 * n}"
    return family.replace("n", str(n)) if "n" in family else family


def min_distance(pos: np.ndarray) -> float:
    d = np.linalg.norm(pos[:, None, :] - pos[None, :, :], axis=-1)
    d[np.diag_indices(len(pos))] = np.inf
    return float(d.min()) if len(pos) > 1 else np.inf


def adversarial(ops: np.ndarray, style: str, one_element: bool, rng: np.random.Generator):
    """(numbers, positions) of orbits of random seeds under `ops`, in the given style."""
    h = len(ops)
    k = (4 if h <= 2 else 2) + int(rng.integers(0, 3))
    scale = 2.0 * np.sqrt(max(h / 12.0, 1.0))
    directions = rng.normal(size=(k, 3))
    directions /= np.linalg.norm(directions, axis=1, keepdims=True)
    steps = np.arange(k)
    if style in ("one radius", "jittered"):
        radii = np.full(k, scale)
    elif style in ("near shells", "all three"):
        # neighbouring orbits 0.6·tol apart: within one window, never one shell
        radii = scale + 0.6 * steps * TOL
    else:
        radii = scale * (0.6 + 0.8 * rng.random(k))
    numbers = np.full(k, 6) if one_element else 6 + steps
    s = orbit_structure(ops, directions * radii[:, None], numbers)
    pos = s.positions
    if style in ("jittered", "all three"):
        # every atom within 0.45·tol of its ideal place
        pos = pos + rng.uniform(-1.0, 1.0, size=pos.shape) * (0.45 * TOL / np.sqrt(3.0))
    assume(min_distance(pos) > 0.3)
    order = rng.permutation(len(pos))
    rotated = pos[order] @ random_rotation(rng).T + rng.uniform(-5.0, 5.0, size=3)
    return np.ascontiguousarray(s.numbers[order]), np.ascontiguousarray(rotated)


def detect(numbers, positions, search: str, tol: float = TOL):
    """(name, order, class sizes) by the given search, or the error's class."""
    try:
        det = _core.find_point_group(positions, numbers, tol, LINEAR_N, LIMIT, search=search)
    except gt.GammatraceError as e:
        return type(e)
    sizes = np.bincount(det.class_of)
    return det.point_group, len(det.operations), tuple(sizes[sizes > 0].tolist())


@suppress
@pytest.mark.parametrize("family", FAMILIES)
@given(
    n=st.integers(2, 6),
    style=st.sampled_from(STYLES),
    one_element=st.booleans(),
    rng=st.integers(0, 2**32 - 1).map(np.random.default_rng),
)
def test_pruned_search_finds_the_group_of_the_plain_search(family, n, style, one_element, rng):
    ops = _core.canonical_group(group_name(family, n), LINEAR_N).operations
    numbers, positions = adversarial(ops, style, one_element, rng)
    note(f"{group_name(family, n)}, {style}, {len(numbers)} atoms")
    plain = detect(numbers, positions, "plain")
    pruned = detect(numbers, positions, "pruned")
    auto = detect(numbers, positions, "auto")
    note(f"plain {plain}, pruned {pruned}, auto {auto}")
    if pruned is gt.ToleranceError:
        # the pruned search gave up: the default path is the plain search
        assert auto == plain
    else:
        assert isinstance(pruned, tuple), pruned
        assert pruned == plain
        assert auto == pruned


LOOSE_TOL = 10 * TOL


@suppress
@pytest.mark.parametrize("family", FAMILIES)
@given(
    n=st.integers(2, 6),
    atoms=st.integers(12, 80),
    noise=st.floats(0.3, 2.5),
    one_element=st.booleans(),
    rng=st.integers(0, 2**32 - 1).map(np.random.default_rng),
)
def test_pruned_search_at_a_loose_tolerance(family, n, atoms, noise, one_element, rng):
    # Noisy orbits detected at 10 × the tolerance (as improper_within detects a chiral
    # structure), every atom moved by up to noise × that tolerance: many candidates pass the
    # pruned search's 3·tol screen and fail at tol. The pruned search drops them; it answers
    # as the plain search does, or with a larger group verified on every atom where the plain
    # search's fit to its probe lost an operation; never with a smaller one.
    ops = _core.canonical_group(group_name(family, n), LINEAR_N).operations
    k = max(1, atoms // len(ops))
    directions = rng.normal(size=(k, 3))
    directions /= np.linalg.norm(directions, axis=1, keepdims=True)
    radii = 2.0 * np.sqrt(max(len(ops) / 12.0, 1.0)) * (0.6 + 0.8 * rng.random(k))
    numbers = np.full(k, 6) if one_element else 6 + np.arange(k) % 2
    s = orbit_structure(ops, directions * radii[:, None], numbers)
    jitter = rng.uniform(-1.0, 1.0, size=s.positions.shape) * (noise * LOOSE_TOL / np.sqrt(3.0))
    pos = s.positions + jitter
    assume(min_distance(pos) > 0.3)
    positions = np.ascontiguousarray(pos @ random_rotation(rng).T)
    note(f"{group_name(family, n)}, {len(pos)} atoms, noise {noise:.2f} x tol")
    plain = detect(s.numbers, positions, "plain", LOOSE_TOL)
    pruned = detect(s.numbers, positions, "pruned", LOOSE_TOL)
    auto = detect(s.numbers, positions, "auto", LOOSE_TOL)
    note(f"plain {plain}, pruned {pruned}, auto {auto}")
    if pruned is gt.ToleranceError:
        assert auto == plain
        return
    assert isinstance(pruned, tuple), pruned
    assert auto == pruned
    if pruned != plain:
        assert isinstance(plain, tuple), plain
        assert pruned[1] > plain[1] and pruned[1] % plain[1] == 0, (pruned, plain)
        det = _core.find_point_group(positions, s.numbers, LOOSE_TOL, LINEAR_N, LIMIT)
        assert len(det.verified) == len(det.operations)
        assert det.max_deviation <= LOOSE_TOL


def test_the_pruned_search_answers_for_exact_orbits_and_says_when_it_gives_up():
    # Exact orbits (no noise) of well separated shells: the pruned search answers, with the
    # group the structure was built in (the comparison above is then not vacuous).
    rng = np.random.default_rng(20261202)
    for name in ("C2v", "S6", "D4d", "C5h", "Td", "Oh", "Ih"):
        ops = _core.canonical_group(name, LINEAR_N).operations
        while True:  # seeds off every symmetry element: no two atoms within 0.5 Å
            seeds = rng.normal(size=(3, 3))
            seeds *= np.array([[2.0], [3.0], [4.0]]) / np.linalg.norm(seeds, axis=1)[:, None]
            seeds *= np.sqrt(max(len(ops) / 12.0, 1.0))
            s = orbit_structure(ops, seeds, np.array([6, 7, 8]))
            if s.n_atoms == 3 * len(ops) and min_distance(s.positions) > 0.5:
                break
        got = detect(s.numbers, s.positions @ random_rotation(rng).T, "pruned")
        assert isinstance(got, tuple) and got[0] == name, (name, got)
    # An unknown choice is refused.
    with pytest.raises(ValueError, match="search"):
        _core.find_point_group(s.positions, s.numbers, TOL, LINEAR_N, LIMIT, search="fast")
