"""The linear groups are tables like any other: C∞v and D∞h with Σ/Π labels and ∞ class labels
in `analyze`, `table`, `correlate`, `sites` and `ladder`; their finite stand-in (C13v, D13d,
D16h, …) is never shown."""

from __future__ import annotations

import json
import re

import numpy as np
import pytest
from gammatrace import analyze
from gammatrace.cli import main
from gammatrace.descent import distortion_ladder, site_analysis
from gammatrace.io import as_structure
from gammatrace.tables import correlate

# A name of a finite stand-in: C13v, D13d, D16h, S26, 2C13^2, 13σd, … (any number ≥ 10 after
# a group or operation letter).
STAND_IN = re.compile(r"(?<![A-Za-z])[CDS]\d{2,}")

# CO2 (D∞h), C=O 1.16 Å; HCN (C∞v), C–H 1.07 Å, C≡N 1.16 Å (from memory)
CO2 = (["O", "C", "O"], np.array([[0.0, 0.0, -1.16], [0.0, 0.0, 0.0], [0.0, 0.0, 1.16]]))
HCN = (["H", "C", "N"], np.array([[0.0, 0.0, -1.07], [0.0, 0.0, 0.0], [0.0, 0.0, 1.16]]))


def _run(capsys, argv) -> str:
    capsys.readouterr()
    assert main(argv) == 0
    return capsys.readouterr().out


def _write(tmp_path, name, symbols, pos) -> str:
    path = tmp_path / name
    rows = [f"{s} {x:.6f} {y:.6f} {z:.6f}" for s, (x, y, z) in zip(symbols, pos)]
    path.write_text(f"{len(symbols)}\n{name}\n" + "\n".join(rows) + "\n", encoding="utf-8")
    return str(path)


def test_co2_vibrations_and_classes_in_linear_labels():
    # Γ_vib(CO2) = Σg+ + Σu+ + Πu. Source: Herzberg, Infrared and Raman Spectra (1945),
    # CO2 normal modes  # from memory
    a = analyze(*CO2)
    d = a.to_dict()
    assert d["point_group"] == "D∞h" and d["order"] is None
    assert d["vibrations"]["irreps"] == {"Σg+": 1, "Σu+": 1, "Πu": 1}
    labels = [c["label"] for c in d["classes"]]
    assert "∞σv" in labels and "∞C2" in labels and "i" in labels
    assert any(lab.startswith("2C∞(") for lab in labels)
    assert not STAND_IN.search(json.dumps(d, ensure_ascii=False))
    assert not STAND_IN.search(a.report())


def test_hcn_is_c_inf_v_with_sigma_and_pi():
    # Γ_vib(HCN) = 2Σ+ + Π (common practice)
    a = analyze(*HCN)
    assert a.point_group == "C∞v"
    assert a.vibrations().irreps == {"Σ+": 2, "Π": 1}
    assert not STAND_IN.search(a.report())


@pytest.mark.parametrize("group", ["C∞v", "D∞h"])
def test_table_text_and_json_show_no_stand_in(group, capsys):
    text = _run(capsys, ["table", group])
    data = json.loads(_run(capsys, ["table", group, "--format", "json"]))
    assert data["group"] == group and data["order"] is None
    assert not STAND_IN.search(text)
    assert not STAND_IN.search(json.dumps(data, ensure_ascii=False))
    labels = [ir["label"] for ir in data["irreps"]]
    assert {"Π", "Δ"} <= set(labels) if group == "C∞v" else {"Πu", "Δg"} <= set(labels)


def test_correlate_names_the_linear_group_not_its_stand_in(capsys):
    # D∞h -> C2v: Σg+ -> A1, Πu -> B1 + B2 (common practice: correlation tables)
    data = json.loads(_run(capsys, ["correlate", "D∞h", "C2v", "--format", "json"]))
    emb = data["embeddings"][0]
    assert emb["correlation"]["Σg+"] == {"A1": 1}
    assert emb["correlation"]["Πu"] == {"B1": 1, "B2": 1}
    for e in data["embeddings"]:
        assert not STAND_IN.search(e["description"]), e["description"]
    assert "standing for" not in json.dumps(data, ensure_ascii=False)
    corr = correlate("C∞v", "C2v")["embeddings"][0]
    assert not STAND_IN.search(corr["description"])


def test_sites_of_co2_are_linear_site_groups_with_linear_labels(tmp_path, capsys):
    a = analyze(*CO2)
    sites = site_analysis(a)
    assert sorted(s.site_group for s in sites.sites) == ["C∞v", "D∞h"]
    assert sorted(s.site_table for s in sites.sites) == ["C∞v", "D∞h"]
    text = _run(capsys, ["sites", _write(tmp_path, "co2.xyz", *CO2), "--induced"])
    assert not STAND_IN.search(text), text
    # the carbon at the D∞h site carries x, y, z as Σu+ + Πu (common practice)
    assert "Σu+ + Πu" in text
    assert "A2u" not in text and "E1u" not in text


def test_ladder_of_a_bent_triatomic_reaches_d_inf_h_without_stand_in():
    # an invented, nearly linear O–C–O bent by 0.02 Å: C2v at tight tolerances, D∞h at loose
    symbols, pos = CO2
    bent = pos.copy()
    bent[1, 0] = 0.02
    ladder = distortion_ladder(as_structure(symbols, bent), tolerances=[0.001, 0.1])
    groups = [step.point_group for step in ladder.steps]
    assert groups[0] == "C2v" and groups[-1] == "D∞h"
    assert not STAND_IN.search(ladder.to_text())
