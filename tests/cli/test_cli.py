"""The command line: JSON Lines keys, exit codes 0/1/2, per-frame errors, tables."""

from __future__ import annotations

import json

from gammatrace.cli import main

WATER = """3
water (geometry from ASE's G2 collection)
O 0.000000 0.000000 0.119262
H 0.000000 0.763239 -0.477047
H 0.000000 -0.763239 -0.477047
"""
AMMONIA = """4
ammonia
N 0.000000 0.000000 0.116489
H 0.000000 0.939731 -0.271808
H 0.813831 -0.469865 -0.271808
H -0.813831 -0.469865 -0.271808
"""
BROKEN = """3
a frame with a bad coordinate line
O 0.0 0.0 0.1
H 0.0 0.76
H 0.0 -0.76 -0.47
"""


def run(capsys, argv):
    status = main(argv)
    out, err = capsys.readouterr()
    return status, out, err


def test_analyze_json_lines(tmp_path, capsys):
    path = tmp_path / "two.xyz"
    path.write_text(WATER + AMMONIA)
    status, out, err = run(capsys, ["analyze", str(path), "--format", "json"])
    assert status == 0, err
    rows = [json.loads(line) for line in out.splitlines()]
    assert [r["index"] for r in rows] == [0, 1]
    assert [r["point_group"] for r in rows] == ["C2v", "C3v"]
    for r in rows:
        for key in (
            "source",
            "index",
            "n_atoms",
            "point_group",
            "order",
            "tolerance",
            "max_deviation",
            "classes",
            "representations",
            "vibrations",
            "symmetry_number",
            "chiral",
        ):
            assert key in r
        assert r["source"] == str(path)
    assert rows[1]["representations"]["cartesian"]["irreps"] == {"A1": 3, "A2": 1, "E": 4}


def test_bad_frame_is_reported_in_place_and_exit_1(tmp_path, capsys):
    path = tmp_path / "mixed.xyz"
    path.write_text(WATER + BROKEN + AMMONIA)
    status, out, err = run(capsys, ["analyze", str(path), "--format", "json"])
    assert status == 1
    rows = [json.loads(line) for line in out.splitlines()]
    assert [r["index"] for r in rows] == [0, 1, 2]
    assert rows[0]["point_group"] == "C2v" and rows[2]["point_group"] == "C3v"
    assert rows[1]["error"]["type"] == "ReadError"
    assert "line 9" in rows[1]["error"]["message"]  # 5 lines of water, then line 4 of it
    assert "gammatrace: ReadError" in err


def test_missing_file_exit_1(tmp_path, capsys):
    status, out, _err = run(capsys, ["analyze", str(tmp_path / "nope.xyz"), "--format", "json"])
    assert status == 1
    assert json.loads(out)["error"]["type"] == "ReadError"


def test_bad_command_line_exit_2(capsys):
    assert run(capsys, ["analyze"])[0] == 2
    assert run(capsys, ["analyze", "x.xyz", "--tol", "abc"])[0] == 2
    assert run(capsys, ["analyze", "x.xyz", "--tol", "-1"])[0] == 2
    assert run(capsys, ["frobnicate"])[0] == 2


def test_text_report_has_worked_table(tmp_path, capsys):
    path = tmp_path / "w.xyz"
    path.write_text(WATER)
    status, out, _ = run(capsys, ["analyze", str(path)])
    assert status == 0
    assert "C2v" in out and "unshifted atoms" in out and "2A1 + B2" in out


def test_extra_bases_from_cli(tmp_path, capsys):
    path = tmp_path / "w.xyz"
    path.write_text(WATER)
    status, out, err = run(
        capsys,
        [
            "analyze",
            str(path),
            "--format",
            "json",
            "--basis",
            "bonds",
            "--basis",
            "orbitals:O=sp,H=s",
        ],
    )
    assert status == 0, err
    reps = json.loads(out)["representations"]
    assert reps["bonds"]["irreps"] == {"A1": 1, "B2": 1}  # common practice: O-H stretches
    # O s -> A1, O p -> A1 + B1 + B2, H s pair -> A1 + B2 (Cotton ch. 8, yz-plane labels)
    assert reps["orbitals"]["irreps"] == {"A1": 3, "B1": 1, "B2": 2}


def test_stdin(monkeypatch, capsys):
    import io
    import sys

    class FakeStdin:
        buffer = io.BytesIO(WATER.encode())

    monkeypatch.setattr(sys, "stdin", FakeStdin())
    status, out, _ = run(capsys, ["analyze", "-", "--format", "json"])
    assert status == 0
    assert json.loads(out)["source"] == "-"


def test_table_json(capsys):
    status, out, _ = run(capsys, ["table", "C3v", "--format", "json"])
    assert status == 0
    t = json.loads(out)
    assert t["group"] == "C3v" and t["order"] == 6
    assert [i["label"] for i in t["irreps"]] == ["A1", "A2", "E"]
    # Source: Cotton, Appendix IIA, C3v: E row 2, -1, 0
    assert t["irreps"][2]["characters"] == [2, -1, 0]


def test_table_unknown_group_exit_1(capsys):
    status, _, err = run(capsys, ["table", "Q7x"])
    assert status == 1
    assert "TableError" in err
