"""The symmetry record of an analysis: permutations made on first use, and pickling.

Detection's arrays are made from the core's result when first read; the permutations, the
largest of them, only when something asks for them. What is checked here is that deferring
them changes nothing a user sees: the same permutations, the same answers after a pickle
round trip (as a Dask worker sends results back), and each permutation the atom map of its
operation (atom i goes to the atom at R(x_i − c) + c: the definition, common practice).
"""

from __future__ import annotations

import pickle

import gammatrace as gt
import numpy as np
import pytest
from conftest import octahedral, random_rotation
from gammatrace.io.builders import c60


def _sf6():
    # S–F 1.56 Å (from memory); an ideal octahedron, Oh
    return octahedral("S", "F", 1.56)


def _c60():
    s = c60()
    return list(s.symbols), s.positions


@pytest.mark.parametrize(("build", "group"), [(_sf6, "Oh"), (_c60, "Ih")])
def test_permutations_are_the_atom_maps_of_the_operations(build, group):
    symbols, pos = build()
    pos = pos @ random_rotation(np.random.default_rng(11)).T
    sym = gt.analyze(symbols, pos).symmetry
    assert sym.point_group == group
    # counting needs no permutation: the characters come first
    counts = sym.unshifted_atoms
    perms = sym.permutations
    assert perms.shape == (len(sym.operations), len(symbols))
    x = pos - sym.center
    images = np.einsum("kij,nj->kni", sym.operations, x)
    assert np.abs(images - x[perms]).max() < sym.tol
    # an atom left unshifted is one its permutation fixes
    assert np.array_equal((perms == np.arange(len(symbols))).sum(axis=1), counts)


def test_a_pickled_analysis_keeps_every_answer():
    symbols, pos = _sf6()
    a = gt.analyze(symbols, pos @ random_rotation(np.random.default_rng(5)).T)
    b = pickle.loads(pickle.dumps(a))
    assert b.point_group == "Oh"
    assert np.array_equal(b.symmetry.permutations, a.symmetry.permutations)
    assert b.to_dict() == a.to_dict()
    # the same when the permutations were never read before pickling
    c = gt.analyze(symbols, pos)
    d = pickle.loads(pickle.dumps(c))
    assert np.array_equal(d.symmetry.generator_permutations, c.symmetry.generator_permutations)
    assert str(d.vibrations()) == str(c.vibrations())
