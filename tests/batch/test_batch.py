"""Batches, screening, Dask and pictures: bad structures mixed in, order kept, outputs valid."""

from __future__ import annotations

import json
import os

import gammatrace as gt
import numpy as np
import pytest
from conftest import ase_molecule
from gammatrace.batch import analyze_batch, ragged_from_file
from gammatrace.demo import ethane
from gammatrace.io import Structure, atomic_numbers, write_xyz


def torsion_scan(n: int = 25) -> list[Structure]:
    """Ethane rotamers: 0° eclipsed (D3h), 60° staggered (D3d), others D3 (common practice)."""
    out = []
    for k in range(n):
        tors = (k * 15) % 120
        symbols, pos = ethane(float(tors))
        out.append(Structure(atomic_numbers(symbols), pos, comment=f"torsion={tors}", index=k))
    return out


def expected_group(tors: int) -> str:
    return {0: "D3h", 60: "D3d"}.get(tors % 120, "D3")


def test_batch_matches_single_analyses():
    structures = torsion_scan(16)
    table = analyze_batch(structures, output="dict", n_threads=2)
    for k, s in enumerate(structures):
        single = gt.analyze(s)
        assert table["point_group"][k] == single.point_group
        assert table["point_group"][k] == expected_group((k * 15) % 120)
        vib = single.vibrations()
        assert table["n_ir"][k] == vib.n_ir and table["n_raman"][k] == vib.n_raman
        assert table["symmetry_number"][k] == single.symmetry_number
        assert table["n_fundamentals"][k] == vib.n_fundamentals


def test_bad_structures_in_a_batch_keep_their_place(tmp_path):
    structures: list = torsion_scan(4)
    structures.insert(1, Structure(np.array([6, 1]), np.array([[0.0, 0, 0], [np.nan, 0, 0]])))
    structures.insert(3, (["H", "H"], [[0, 0, 0], [0, 0, 0.001]]))  # overlapping atoms
    table = analyze_batch(structures, output="dict")
    assert list(table["error_type"]) == ["", "StructureError", "", "StructureError", "", ""]
    assert "atom 1" in table["error"][1]
    assert [g for g in table["point_group"] if g] == ["D3h", "D3", "D3", "D3"]  # 0-45°


def test_batch_from_file_with_linear_atom_and_groups(tmp_path):
    path = tmp_path / "mix.xyz"
    mols = [ase_molecule(n) for n in ("H2O", "CO2", "HCN", "CH4", "C6H6")]
    structures = [Structure(atomic_numbers(s), p) for s, p in mols]
    structures.append(Structure(np.array([18]), np.zeros((1, 3))))
    write_xyz(structures, path)
    df = analyze_batch(str(path))
    assert list(df["point_group"]) == ["C2v", "D∞h", "C∞v", "Td", "D6h", "K_h"]
    # Herzberg (1945): CO2 3 fundamentals, 2 IR-active; HCN 3 fundamentals, all active
    assert df["n_fundamentals"].tolist()[:3] == [3, 3, 3]
    assert df["n_ir"].tolist()[:2] == [3, 2]
    assert df["order"].isna().tolist() == [False, True, True, False, False, True]


def test_serial_and_parallel_batches_agree():
    structures = torsion_scan(40)
    a = analyze_batch(structures, output="dict", n_threads=1, chunk_size=7)
    b = analyze_batch(structures, output="dict", n_threads=2, chunk_size=64)
    for key in ("point_group", "n_ir", "n_raman", "gamma_vib", "symmetry_number"):
        assert list(a[key]) == list(b[key])
    np.testing.assert_array_equal(a["max_deviation"], b["max_deviation"])


def test_screen_cli_writes_tables_and_resumes(tmp_path, capsys):
    from gammatrace.cli import main

    path = tmp_path / "scan.xyz"
    write_xyz(torsion_scan(20), path)
    out = tmp_path / "rows.jsonl"
    assert main(["screen", str(path), "--out", str(out), "--no-progress", "--chunk", "6"]) == 0
    rows = [json.loads(line) for line in out.read_text().splitlines()]
    assert [r["index"] for r in rows] == list(range(20))
    summary = capsys.readouterr().out
    assert "D3d" in summary and "screened 20" in summary
    # simulate an interrupted run: keep 7 complete rows and half a line, then resume
    lines = out.read_text().splitlines(keepends=True)
    out.write_text("".join(lines[:7]) + lines[7][:20])
    assert main(["screen", str(path), "--out", str(out), "--no-progress", "--resume"]) == 0
    rows2 = [json.loads(line) for line in out.read_text().splitlines()]
    assert [r["index"] for r in rows2] == list(range(20))
    assert rows2 == rows
    # CSV and Parquet outputs
    csv_out = tmp_path / "rows.csv"
    assert main(["screen", str(path), "--out", str(csv_out), "--no-progress"]) == 0
    import pandas as pd

    assert len(pd.read_csv(csv_out)) == 20
    pq_out = tmp_path / "rows.parquet"
    chart = tmp_path / "chart.png"
    assert (
        main(["screen", str(path), "--out", str(pq_out), "--no-progress", "--chart", str(chart)])
        == 0
    )
    frame = pd.read_parquet(pq_out)
    assert frame["point_group"].tolist() == [expected_group((k * 15) % 120) for k in range(20)]
    assert chart.stat().st_size > 1000


def test_screen_exit_1_when_a_frame_is_bad(tmp_path, capsys):
    from gammatrace.cli import main

    path = tmp_path / "bad.xyz"
    write_xyz(torsion_scan(3), path)
    text = path.read_text().splitlines()
    text[3] = "C 0.0 zero 0.7675"
    path.write_text("\n".join(text) + "\n")
    out = tmp_path / "rows.jsonl"
    assert main(["screen", str(path), "--out", str(out), "--no-progress"]) == 1
    rows = [json.loads(line) for line in out.read_text().splitlines()]
    assert rows[0]["error_type"] == "ReadError" and "line 4" in rows[0]["error"]
    assert rows[1]["point_group"] and rows[2]["point_group"]


def test_ragged_reader_round_trip(tmp_path):
    path = tmp_path / "scan.xyz"
    structures = torsion_scan(5)
    write_xyz(structures, path)
    data = ragged_from_file(path)
    assert len(data) == 5
    for k, s in enumerate(structures):
        a, b = data.offsets[k], data.offsets[k + 1]
        np.testing.assert_allclose(data.positions[a:b], s.positions, atol=1e-9)
        np.testing.assert_array_equal(data.numbers[a:b], s.numbers)


@pytest.mark.slow
def test_distributed_equals_local(tmp_path):
    distributed = pytest.importorskip("distributed")
    from gammatrace.batch.distributed import analyze_distributed

    paths = []
    for k in range(3):
        p = tmp_path / f"part{k}.xyz"
        write_xyz(torsion_scan(10 + k), p)
        paths.append(str(p))
    import pandas as pd

    # files keep their frame numbers (a list would be numbered by position instead)
    local = pd.concat([analyze_batch(p, output="pandas") for p in paths], ignore_index=True)
    with (
        distributed.LocalCluster(
            n_workers=2,
            threads_per_worker=1,
            processes=True,
            host="127.0.0.1",
            dashboard_address=None,
        ) as cluster,
        distributed.Client(cluster) as client,
    ):
        remote = analyze_distributed(paths, client, frames_per_partition=4)
    cols = ["source", "index", "point_group", "gamma_vib", "n_ir", "n_raman", "symmetry_number"]
    assert remote[cols].to_dict("list") == local[cols].to_dict("list")


def test_pictures(tmp_path):
    from gammatrace.io.builders import c60
    from gammatrace.pictures import draw_symmetry, symmetry_elements

    res = gt.analyze(c60())
    el = symmetry_elements(res)
    # Ih: 6 C5 + 10 C3 + 15 C2 axes, 15 mirror planes, inversion centre (common practice)
    orders = sorted(o for _, o in el["axes"])
    assert orders.count(5) == 6 and orders.count(3) == 10 and orders.count(2) == 15
    assert len(el["planes"]) == 15 and el["inversion"]
    draw_symmetry(res, str(tmp_path / "c60.png"))
    assert os.path.getsize(tmp_path / "c60.png") > 10_000


def test_demo_runs(tmp_path, capsys):
    from gammatrace.demo import run_demo

    assert run_demo(out=str(tmp_path)) == 0
    out = capsys.readouterr().out
    assert "INVENTED" in out and "D3d" in out and "Ih" in out and "ERROR" in out
    # benzene's π SALCs as printed: A2u is the in-phase sum (Cotton, benzene π MOs; from memory)
    assert "A2u" in out and "(1/√6)(p⊥(C1) + p⊥(C2) + p⊥(C3) + p⊥(C4) + p⊥(C5) + p⊥(C6))" in out
    for name in ("d6h_table.md", "d6h_table.tex", "benzene_analysis.md", "benzene_table.html"):
        assert (tmp_path / name).stat().st_size > 200
    tex = (tmp_path / "d6h_table.tex").read_text()
    assert tex.count("\\begin{") == tex.count("\\end{") and "\\documentclass" in tex
    for png in ("c60_symmetry.png", "benzene_stereogram.png", "scan_point_groups.png"):
        assert (tmp_path / png).read_bytes()[:4] == b"\x89PNG"


@pytest.mark.parametrize("group", ["C3", "C5", "S6", "C3h", "C4h", "T", "Th", "D3d", "Oh"])
def test_batch_equals_single_analysis_for_complex_pair_groups(group):
    # groups whose E irreps are real forms of complex-conjugate pairs (norm 2 in the
    # reduction formula) must reduce the same way in batches as one at a time
    from gammatrace.io.builders import orbit_structure

    rng = np.random.default_rng(11)
    s = orbit_structure(gt.get_table(group).operations, rng.normal(size=(3, 3)) * 2, [6, 1, 8])
    single = gt.analyze(s).vibrations()
    table = analyze_batch([s], output="dict")
    assert table["error"][0] == ""
    assert table["point_group"][0] == group
    assert table["n_fundamentals"][0] == single.n_fundamentals
    assert table["n_ir"][0] == single.n_ir and table["n_raman"][0] == single.n_raman
    from gammatrace.spectroscopy import format_irreps

    assert table["gamma_vib"][0] == format_irreps(single.irreps)


def test_batch_index_is_the_position_in_a_list():
    # rows of a list carry their position, even when every Structure says index 0
    # (shared/INTERFACE.md, "Batches"); the source is kept
    symbols, pos = ethane(0.0)
    same = [Structure(atomic_numbers(symbols), pos + k, source="scan.xyz") for k in range(5)]
    table = analyze_batch(same, output="dict")
    assert table["index"].tolist() == [0, 1, 2, 3, 4]
    assert list(table["source"]) == ["scan.xyz"] * 5
    mixed = [same[0], Structure(np.array([1, 1]), np.zeros((2, 3))), same[1]]
    rows = analyze_batch(mixed, output="dict")
    assert rows["index"].tolist() == [0, 1, 2]
    assert rows["error_type"][1] and not rows["error_type"][0] and not rows["error_type"][2]
