"""``analyze --near`` / ``--measure GROUP``: keys and lines (shared/INTERFACE.md, "Near
symmetry: gammatrace analyze --near")."""

from __future__ import annotations

import json
import re

import gammatrace as gt
import numpy as np
from gammatrace.cli import main

INTERFACE_KEYS = {"group", "tolerance", "measure"}


def noisy_benzene_xyz(noise: float = 0.01, seed: int = 3) -> str:
    # ring C–C 1.39 Å, C–H 1.08 Å (common practice; planar D6h), then Gaussian noise
    ang = np.arange(6) * np.pi / 3
    ring = np.c_[np.cos(ang), np.sin(ang), np.zeros(6)]
    pos = np.r_[1.39 * ring, 2.47 * ring] + np.random.default_rng(seed).normal(0, noise, (12, 3))
    lines = [f"{s} {x:.6f} {y:.6f} {z:.6f}" for s, (x, y, z) in zip("CCCCCCHHHHHH", pos)]
    return "12\nbenzene with noise\n" + "\n".join(lines) + "\n"


def run(capsys, argv):
    status = main(argv)
    out, err = capsys.readouterr()
    return status, out, err


def test_near_json_keys(tmp_path, capsys):
    path = tmp_path / "benzene.xyz"
    path.write_text(noisy_benzene_xyz())
    status, out, err = run(
        capsys, ["analyze", str(path), "--near", "--measure", "Oh", "--format", "json"]
    )
    assert status == 0, err
    row = json.loads(out)
    entries = row["near_symmetry"]
    assert all(set(e) >= INTERFACE_KEYS for e in entries)
    groups = [e["group"] for e in entries]
    assert len(groups) == len(set(groups))
    d6h = next(e for e in entries if e["group"] == "D6h")
    assert row["tolerance"] < d6h["tolerance"] <= 10 * row["tolerance"]
    assert 0.0 < d6h["measure"] < 0.05
    # every near group is of larger order than the one found at the tolerance
    orders = {e["group"]: gt.tables.get_table(e["group"]).order for e in entries}
    assert all(o is None or o > row["order"] for g, o in orders.items() if g != "Oh")
    # a named group that benzene never reaches: null tolerance and measure, listed last
    assert entries[-1] == {"group": "Oh", "tolerance": None, "measure": None, "found_at": None}
    cm = row["chirality_measure"]
    assert cm is not None and cm["group"] in ("Cs", "Ci", "S4") and cm["measure"] > 0.0


def test_measure_without_near_and_plain_rows(tmp_path, capsys):
    path = tmp_path / "benzene.xyz"
    path.write_text(noisy_benzene_xyz())
    _, out, _ = run(capsys, ["analyze", str(path), "--measure", "d6h", "--format", "json"])
    row = json.loads(out)
    assert [e["group"] for e in row["near_symmetry"]] == ["D6h"]
    assert "chirality_measure" not in row
    _, out, _ = run(capsys, ["analyze", str(path), "--format", "json"])
    row = json.loads(out)
    assert "near_symmetry" not in row and "chirality_measure" not in row


def test_near_text_lines(tmp_path, capsys):
    path = tmp_path / "benzene.xyz"
    path.write_text(noisy_benzene_xyz())
    status, out, err = run(
        capsys, ["analyze", str(path), "--brief", "--near", "--measure", "C2v", "--measure", "Oh"]
    )
    assert status == 0, err
    line = next(x for x in out.splitlines() if "near D6h" in x)
    assert re.fullmatch(r"  near D6h at [0-9.e-]+ Å, measure [0-9.e-]+", line)
    assert re.search(r"^  measure against C2v: [0-9.e-]+ \(found at [0-9.e-]+ Å\)$", out, re.M)
    assert "  measure against Oh: not found within 0.5 Å" in out
    assert re.search(r"^  chirality measure [0-9.e-]+ \(against (Cs|Ci|S4), ", out, re.M)


def test_exact_structure_says_nothing_higher(tmp_path, capsys):
    path = tmp_path / "water.xyz"
    path.write_text("3\nwater\nO 0 0 0.1193\nH 0 0.7632 -0.4770\nH 0 -0.7632 -0.4770\n")
    _, out, _ = run(capsys, ["analyze", str(path), "--brief", "--near"])
    assert "  no higher group within 0.1 Å" in out
    assert "  chirality measure 0 (against Cs, found at 0.01 Å)" in out


def test_bad_group_name_is_a_bad_command_line(tmp_path, capsys):
    path = tmp_path / "water.xyz"
    path.write_text("3\nwater\nO 0 0 0.1193\nH 0 0.7632 -0.4770\nH 0 -0.7632 -0.4770\n")
    status, out, err = run(capsys, ["analyze", str(path), "--measure", "Q7"])
    assert status == 2 and out == "" and "Q7" in err


def test_to_dict_matches_the_api():
    a = gt.analyze(gt.io.as_structure(*_symbols_positions(noisy_benzene_xyz())))
    row = a.to_dict(near=True, measure=("D6h", "C2v"))
    api = [r.to_dict() for r in a.near_symmetry()]
    assert row["near_symmetry"][: len(api)] == api
    assert [e["group"] for e in row["near_symmetry"]].count("D6h") == 1
    assert row["near_symmetry"][-1] == a.symmetry_measure("C2v").to_dict()
    assert json.loads(json.dumps(row)) == row


def _symbols_positions(text: str):
    lines = text.splitlines()[2:]
    return [x.split()[0] for x in lines], np.array(
        [[float(v) for v in x.split()[1:]] for x in lines]
    )
