"""Every command that reads structures says what to do with a periodic cell (``--cell``).

A water molecule in a periodic box (extended XYZ with ``Lattice`` and ``pbc``, the format's
own convention): refused by default, naming the frame; analysed as the finite molecule it is
with ``--cell ignore`` (C2v, common practice)."""

from __future__ import annotations

import json

import pytest
from gammatrace.cli import main

BOX = (
    "3\n"
    'Lattice="10 0 0 0 10 0 0 0 10" Properties=species:S:1:pos:R:3 pbc="T T T"\n'
    "O 5.0 5.0 5.1173\n"
    "H 5.0 5.7572 4.5308\n"
    "H 5.0 4.2428 4.5308\n"
)


@pytest.fixture
def boxed(tmp_path):
    p = tmp_path / "boxed_water.xyz"
    p.write_text(BOX)
    return str(p)


@pytest.mark.parametrize("command", ["sites", "ladder"])
def test_many_frame_commands_refuse_then_accept_a_cell(command, boxed, capsys):
    assert main([command, boxed, "--format", "json"]) == 1
    captured = capsys.readouterr()
    row = json.loads(captured.out.strip().splitlines()[0])
    assert row["error"]["type"] == "CellError" and "periodic" in row["error"]["message"]
    assert main([command, boxed, "--format", "json", "--cell", "ignore"]) == 0
    assert "C2v" in capsys.readouterr().out


@pytest.mark.parametrize("command", ["symmetrize", "salc"])
def test_one_structure_commands_refuse_then_accept_a_cell(command, boxed, capsys):
    assert main([command, boxed]) == 1
    assert "CellError" in capsys.readouterr().err
    assert main([command, boxed, "--cell", "ignore", "--format", "json"]) == 0
    assert "C2v" in capsys.readouterr().out
