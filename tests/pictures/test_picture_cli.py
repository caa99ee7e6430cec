"""``--draw DIR`` of ``analyze`` (3D view and stereogram) and ``ladder`` (the ladder chart)."""

from __future__ import annotations

from gammatrace.cli import main

WATER = """3
water
O 0.000000 0.000000 0.119262
H 0.000000 0.763239 -0.477047
H 0.000000 -0.763239 -0.477047
"""
CO2 = """3
carbon dioxide
C 0.0 0.0 0.0
O 0.0 0.0 1.16
O 0.0 0.0 -1.16
"""


def _png(path):
    data = path.read_bytes()
    return data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 5_000


def test_analyze_draw_writes_the_view_and_the_stereogram(tmp_path, capsys):
    xyz = tmp_path / "mols.xyz"
    xyz.write_text(WATER + CO2)
    out = tmp_path / "pictures"
    assert main(["analyze", str(xyz), "--brief", "--draw", str(out)]) == 0
    capsys.readouterr()
    # a finite group gets both pictures; the linear molecule only the view (its group has
    # infinitely many elements, no stereogram)
    assert sorted(p.name for p in out.iterdir()) == [
        "mols_0.png",
        "mols_0_stereogram.png",
        "mols_1.png",
    ]
    assert all(_png(p) for p in out.iterdir())


def test_ladder_draw_writes_one_chart_per_frame(tmp_path, capsys):
    xyz = tmp_path / "water.xyz"
    xyz.write_text(WATER + WATER)
    out = tmp_path / "ladders"
    status = main(["ladder", str(xyz), "--tolerances", "0.001,0.1", "--draw", str(out)])
    assert status == 0, capsys.readouterr().err
    assert sorted(p.name for p in out.iterdir()) == ["water_0_ladder.png", "water_1_ladder.png"]
    assert all(_png(p) for p in out.iterdir())
    assert "C2v" in capsys.readouterr().out
