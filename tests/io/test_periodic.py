"""Periodic input: a frame that declares a cell is refused unless the caller says what to do
with it (``cell="ignore"`` analyses the coordinates as given, ``cell="unwrap"`` makes its
molecules whole first), in the Python API, batches and the command line."""

from __future__ import annotations

import json

import gammatrace as gt
import numpy as np
import pytest
from gammatrace.cli import main
from gammatrace.io import read_xyz

# Water with r(OH) = 0.9572 Å and HOH = 104.52° (common practice), in the plane z = 5 of a
# 10 Å cubic cell, its O atom 0.1 Å from the face x = 10 Å: one H lies beyond that face and
# is written wrapped back into the cell (x = 0.657), as periodic codes store it.
R_OH, HALF = 0.9572, np.radians(104.52 / 2)
O_POS = np.array([9.9, 5.0, 5.0])
H1 = O_POS + R_OH * np.array([np.sin(HALF), np.cos(HALF), 0.0])
H2 = O_POS + R_OH * np.array([-np.sin(HALF), np.cos(HALF), 0.0])
WHOLE = np.array([O_POS, H1, H2])
WRAPPED = WHOLE.copy()
WRAPPED[1, 0] -= 10.0


def _frame(symbols, pos, header):
    return f"{len(symbols)}\n{header}\n" + "".join(
        f"{s} {x:.10f} {y:.10f} {z:.10f}\n" for s, (x, y, z) in zip(symbols, pos)
    )


WATER_CELL = _frame(
    ["O", "H", "H"],
    WRAPPED,
    'Lattice="10 0 0 0 10 0 0 0 10" Properties=species:S:1:pos:R:3 pbc="T T T"',
)
WATER_PLAIN = _frame(["O", "H", "H"], WHOLE, "plain water")

# Rock salt, conventional cubic cell a = 5.64 Å (common practice): Na at the fcc sites,
# Cl shifted by a/2 along x.
A_NACL = 5.64
FCC = np.array([[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]])
NACL_POS = np.vstack([FCC, (FCC + np.array([0.5, 0.0, 0.0])) % 1.0]) * A_NACL
NACL_SYMBOLS = ["Na"] * 4 + ["Cl"] * 4
NACL = _frame(
    NACL_SYMBOLS,
    NACL_POS,
    f'Lattice="{A_NACL} 0 0 0 {A_NACL} 0 0 0 {A_NACL}" pbc="T T T"',
)


def _oh_distances(pos):
    return np.linalg.norm(pos[1:] - pos[0], axis=1)


def test_a_periodic_frame_is_refused_naming_the_frame(tmp_path):
    path = tmp_path / "cells.xyz"
    path.write_text(WATER_PLAIN + WATER_CELL)
    with pytest.raises(gt.CellError) as info:
        gt.analyze(path, frame=1)
    message = str(info.value)
    assert f"{path} [frame 1]" in message
    assert "space group" in message and "cell='ignore'" in message and "--cell" in message
    # the plain frame of the same file is analysed as before
    assert gt.analyze(path, frame=0).point_group == "C2v"
    # a bad option is an input error
    with pytest.raises(gt.InputError, match="cell"):
        gt.analyze(path, frame=0, cell="wrap")


def test_ignore_analyses_the_coordinates_as_given(tmp_path):
    path = tmp_path / "water.xyz"
    path.write_text(WATER_CELL)
    as_given = gt.analyze(path, cell="ignore")
    plain = gt.analyze(["O", "H", "H"], WRAPPED)  # the same coordinates, no cell
    assert as_given.point_group == plain.point_group
    np.testing.assert_array_equal(as_given.structure.positions, WRAPPED.round(10))
    # three atoms always share a plane: the split molecule is only Cs as given (common
    # practice), which is why the cell must not be ignored silently
    assert as_given.point_group == "Cs"


def test_unwrap_makes_the_split_molecule_whole(tmp_path):
    path = tmp_path / "water.xyz"
    path.write_text(WATER_CELL)
    res = gt.analyze(path, cell="unwrap")
    # Source for water's group and Γ_vib: Herzberg (1945), C2v, 2A1 + B2 (from memory)
    assert res.point_group == "C2v"
    assert res.vibrations().irreps == {"A1": 2, "B2": 1}
    pos = res.structure.positions
    np.testing.assert_allclose(_oh_distances(pos), [R_OH, R_OH], atol=1e-9)
    np.testing.assert_allclose(pos[0], O_POS, atol=1e-9)  # the first atom keeps its place


def test_rock_salt_cell_as_given_and_unwrapped(tmp_path):
    path = tmp_path / "nacl.xyz"
    path.write_text(NACL)
    with pytest.raises(gt.CellError, match=r"\[frame 0\]"):
        gt.analyze(path)
    # cell="ignore" promises the analysis of the coordinates as a finite cluster as given
    as_given = gt.analyze(path, cell="ignore")
    cluster = gt.analyze(NACL_SYMBOLS, NACL_POS)
    assert as_given.point_group == cluster.point_group
    assert as_given.vibrations().irreps == cluster.vibrations().irreps
    # every ion is bonded to its own images through the cell: no finite molecule to unwrap
    with pytest.raises(gt.CellError, match="periodic image"):
        gt.analyze(path, cell="unwrap")


def test_cell_conventions_of_extended_xyz(tmp_path):
    # extended-XYZ convention: a Lattice without pbc is periodic in all three directions;
    # pbc "F F F" with a Lattice is a molecule in a box
    lattice_only = _frame(["O", "H", "H"], WHOLE, 'Lattice="10 0 0 0 10 0 0 0 10"')
    boxed = _frame(["O", "H", "H"], WHOLE, 'Lattice="10 0 0 0 10 0 0 0 10" pbc="F F F"')
    bad = _frame(["O", "H", "H"], WHOLE, 'pbc="yes"')
    path = tmp_path / "conv.xyz"
    path.write_text(lattice_only + boxed + bad)
    a, b, c = read_xyz(path)
    assert a.pbc == (True, True, True) and a.periodic
    np.testing.assert_array_equal(a.cell, 10 * np.eye(3))
    assert b.pbc == (False, False, False) and not b.periodic
    assert gt.analyze(b).point_group == "C2v"
    assert isinstance(c, gt.FrameError) and c.type == "ReadError"
    assert "[frame 2]" in c.message and "pbc" in c.message


def test_unwrap_only_along_periodic_directions(tmp_path):
    # periodic along a only: the molecule split across x is made whole; a wrapped copy along
    # y would not be (no periodicity there), so a frame split across y stays as given
    split_x = _frame(["O", "H", "H"], WRAPPED, 'Lattice="10 0 0 0 10 0 0 0 10" pbc="T F F"')
    path = tmp_path / "slab.xyz"
    path.write_text(split_x)
    assert gt.analyze(path, cell="unwrap").point_group == "C2v"
    only_y = _frame(["O", "H", "H"], WRAPPED, 'Lattice="10 0 0 0 10 0 0 0 10" pbc="F T F"')
    path.write_text(only_y)
    res = gt.analyze(path, cell="unwrap")
    np.testing.assert_allclose(res.structure.positions, WRAPPED, atol=1e-9)


def test_ase_atoms_with_pbc():
    from ase import Atoms

    periodic = Atoms("OH2", positions=WRAPPED, cell=10 * np.eye(3), pbc=True)
    with pytest.raises(gt.CellError, match="periodic cell"):
        gt.analyze(periodic)
    assert gt.analyze(periodic, cell="ignore").point_group == "Cs"
    assert gt.analyze(periodic, cell="unwrap").point_group == "C2v"
    # a cell without periodic flags is a molecule in a box
    boxed = Atoms("OH2", positions=WHOLE, cell=10 * np.eye(3), pbc=False)
    assert gt.analyze(boxed).point_group == "C2v"
    # in analyze_many and analyze_batch the refused structure keeps its place
    results = list(gt.analyze_many([boxed, periodic, boxed]))
    assert [type(r).__name__ for r in results] == ["Analysis", "FrameError", "Analysis"]
    assert results[1].type == "CellError"
    table = gt.analyze_batch([boxed, periodic, boxed], output="dict")
    assert list(table["point_group"]) == ["C2v", "", "C2v"]
    assert list(table["error_type"]) == ["", "CellError", ""]
    table = gt.analyze_batch([boxed, periodic], output="dict", cell="unwrap")
    assert list(table["point_group"]) == ["C2v", "C2v"]


def test_batches_carry_on_past_refused_frames(tmp_path):
    path = tmp_path / "mixed.xyz"
    path.write_text(WATER_PLAIN + WATER_CELL + NACL + WATER_PLAIN)
    table = gt.analyze_batch(path, output="dict")
    assert list(table["point_group"]) == ["C2v", "", "", "C2v"]
    assert list(table["error_type"]) == ["", "CellError", "CellError", ""]
    assert "[frame 1]" in table["error"][1] and "[frame 2]" in table["error"][2]
    assert list(table["n_atoms"]) == [3, 0, 0, 3]
    table = gt.analyze_batch(path, output="dict", cell="unwrap")
    assert list(table["point_group"]) == ["C2v", "C2v", "", "C2v"]
    assert table["error_type"][2] == "CellError"
    table = gt.analyze_batch(path, output="dict", cell="ignore")
    assert list(table["point_group"])[:2] == ["C2v", "Cs"]
    assert not any(table["error"])
    assert list(table["n_atoms"]) == [3, 3, 8, 3]
    results = list(gt.analyze_many([path]))
    assert [getattr(r, "type", None) for r in results] == [None, "CellError", "CellError", None]


def test_command_line_analyze_and_screen(tmp_path, capsys):
    path = tmp_path / "mixed.xyz"
    path.write_text(WATER_PLAIN + WATER_CELL)
    status = main(["analyze", str(path), "--format", "json"])
    out, err = capsys.readouterr()
    rows = [json.loads(line) for line in out.splitlines()]
    assert status == 1
    assert rows[0]["point_group"] == "C2v"
    assert rows[1]["error"]["type"] == "CellError" and "[frame 1]" in err
    status = main(["analyze", str(path), "--format", "json", "--cell", "unwrap"])
    out, _ = capsys.readouterr()
    assert status == 0
    assert [json.loads(line)["point_group"] for line in out.splitlines()] == ["C2v", "C2v"]
    table = tmp_path / "rows.jsonl"
    status = main(["screen", str(path), "--out", str(table), "--no-progress"])
    capsys.readouterr()
    rows = [json.loads(line) for line in table.read_text().splitlines()]
    assert status == 1 and rows[1]["error_type"] == "CellError"
    status = main(["screen", str(path), "--out", str(table), "--no-progress", "--cell", "ignore"])
    capsys.readouterr()
    rows = [json.loads(line) for line in table.read_text().splitlines()]
    assert status == 0 and [r["point_group"] for r in rows] == ["C2v", "Cs"]


@pytest.mark.parametrize("command", ["analyze", "screen"])
def test_help_documents_the_cell_option(command, capsys):
    assert main([command, "--help"]) == 0
    out = capsys.readouterr().out
    assert "--cell" in out and "unwrap" in out and "ignore" in out
