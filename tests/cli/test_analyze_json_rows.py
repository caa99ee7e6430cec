"""``gammatrace analyze FILE --format json`` writes the frames of an XYZ file through the batch
path (gammatrace.batch.rows): every row must be the object the one-structure path gives,
``analyze(frame).to_dict()``, or its error row, in order — whatever the frame holds.

The geometries are idealised shapes built here (water, ammonia, CO2, a xenon atom, CH2D2 from
methane's tetrahedron) plus broken frames; the values they must give are checked elsewhere
against published tables. This file checks that the two paths agree."""

from __future__ import annotations

import json

import numpy as np
import pytest
from gammatrace.analysis import analyze_many
from gammatrace.cli import main


def _frame(symbols, pos, comment="frame"):
    lines = [str(len(symbols)), comment]
    lines += [f"{s} {x:.10f} {y:.10f} {z:.10f}" for s, (x, y, z) in zip(symbols, pos)]
    return "\n".join(lines) + "\n"


WATER = (["O", "H", "H"], [[0, 0, 0.1173], [0, 0.7572, -0.4692], [0, -0.7572, -0.4692]])
AMMONIA = (
    ["N", "H", "H", "H"],
    [[0, 0, 0.1], [0.94, 0, -0.27], [-0.47, 0.814, -0.27], [-0.47, -0.814, -0.27]],
)
CO2 = (["C", "O", "O"], [[0, 0, 0], [0, 0, 1.16], [0, 0, -1.16]])
TETRA = np.array([[0, 0, 0], [1, 1, 1], [-1, -1, 1], [-1, 1, -1], [1, -1, -1]]) * 0.629
CH2D2 = (["C", "H", "H", "D", "D"], TETRA)
XENON = (["Xe"], [[0.0, 0.0, 0.0]])


def _mixed_file(tmp_path):
    rng = np.random.default_rng(11)
    frames = [
        _frame(*WATER),
        _frame(*AMMONIA),
        _frame(CO2[0], np.asarray(CO2[1]) + rng.normal(0, 0.001, (3, 3))),
        _frame(*XENON),
        _frame(*CH2D2),
        "2\nbroken: not a number\nH 0 0 zero\nH 0 0 0.74\n",
        "2\ntwo atoms in one place\nH 0 0 0\nH 0 0 0\n",
        _frame(AMMONIA[0], np.asarray(AMMONIA[1]) + rng.normal(0, 0.05, (4, 3))),  # C1
        _frame(WATER[0], np.asarray(WATER[1]) + rng.normal(0, 0.004, (3, 3))),
    ]
    path = tmp_path / "mixed.xyz"
    path.write_text("".join(frames))
    return str(path)


def _expected(path, cell=None):
    out = []
    for r in analyze_many([path], cell=cell):
        out.append(r.to_dict())  # an Analysis or a FrameError
    return out


def _rows(capsys, argv):
    status = main(argv)
    captured = capsys.readouterr()
    return status, [json.loads(line) for line in captured.out.splitlines()], captured.err


def test_every_row_is_the_one_structure_object(tmp_path, capsys):
    path = _mixed_file(tmp_path)
    status, rows, err = _rows(capsys, ["analyze", path, "--format", "json"])
    expected = json.loads(json.dumps(_expected(path)))  # through JSON, as written
    assert rows == expected
    assert status == 1  # two frames failed, the others were written
    assert [r.get("point_group") for r in rows] == [
        "C2v", "C3v", "D∞h", "K_h", "C2v", None, None, "C1", "C2v"
    ]  # fmt: skip
    assert "frame 5" in err and "frame 6" in err
    # CH2D2 (the isotopes apart) has the C2v of its masses, two H and two D environments
    assert rows[4]["environments"] == {"C": 1, "H": 1, "D": 1}


def test_a_batch_of_many_frames_agrees_with_one_at_a_time(tmp_path, capsys):
    # more frames than fit in one call into the core are written in order
    rng = np.random.default_rng(3)
    frames = []
    for k in range(40):
        sym, pos = (WATER, AMMONIA, CH2D2)[k % 3]
        noise = 0.05 if k % 4 == 0 else 1e-4
        frames.append(_frame(sym, np.asarray(pos) + rng.normal(0, noise, np.shape(pos))))
    path = str(tmp_path / "many.xyz")
    with open(path, "w") as f:
        f.write("".join(frames))
    import gammatrace.cli.analyze as command

    old = command.CHUNK
    command.CHUNK = 7
    try:
        status, rows, _ = _rows(capsys, ["analyze", path, "--format", "json"])
    finally:
        command.CHUNK = old
    assert status == 0
    assert rows == json.loads(json.dumps(_expected(path)))
    assert [r["index"] for r in rows] == list(range(40))


@pytest.mark.parametrize("cell", [None, "ignore", "unwrap"])
def test_periodic_frames_follow_the_cell_choice_as_one_at_a_time(tmp_path, capsys, cell):
    box = (
        "3\n"
        'Lattice="10 0 0 0 10 0 0 0 10" Properties=species:S:1:pos:R:3 pbc="T T T"\n'
        "O 5.0 5.0 5.1173\nH 5.0 5.7572 4.5308\nH 5.0 4.2428 4.5308\n"
    )
    path = tmp_path / "box.xyz"
    path.write_text(box + _frame(*WATER))
    argv = ["analyze", str(path), "--format", "json"] + (["--cell", cell] if cell else [])
    status, rows, _ = _rows(capsys, argv)
    assert rows == json.loads(json.dumps(_expected(str(path), cell)))
    assert status == (1 if cell is None else 0)


def test_options_that_need_the_objects_take_the_one_structure_path(tmp_path, capsys):
    path = _mixed_file(tmp_path)
    _, rows, _ = _rows(capsys, ["analyze", path, "--format", "json", "--orbits"])
    expected = json.loads(json.dumps(_expected(path)))
    assert len(rows) == len(expected)
    for row, plain in zip(rows, expected):
        if "error" in row:
            assert row == plain
            continue
        assert isinstance(row.pop("orbits"), list)
        assert row == plain


def test_a_frame_the_group_pass_leaves_out_goes_through_the_one_structure_path(
    tmp_path, capsys, monkeypatch
):
    # when the group pass cannot build a row (None), the frame is analysed on its own: the
    # row is then that path's object (or its error), in its place
    import gammatrace.batch.rows as rows_module

    real = rows_module.summary_rows

    def without_first(table, unshifted, n_atoms):
        out = real(table, unshifted, n_atoms)
        return [None, *out[1:]]

    monkeypatch.setattr(rows_module, "summary_rows", without_first)
    path = _mixed_file(tmp_path)
    _, rows, _ = _rows(capsys, ["analyze", path, "--format", "json"])
    assert rows == json.loads(json.dumps(_expected(path)))
