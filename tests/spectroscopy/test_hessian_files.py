"""Hessians from files (.npy, plain text, ASE vibration data), force-constant units, and the
``modes`` command: numbering, imaginary frequencies, the one-line symmetry warning."""

from __future__ import annotations

import json
import warnings
from functools import cache

import gammatrace as gt
import numpy as np
import pytest
from _fd_hessians import fd_hessian, planar_ammonia, sf6, symmetric_noise
from _force_field import water
from conftest import random_rotation
from gammatrace.cli import main
from gammatrace.errors import InputError, ReadError, SymmetryBreakingWarning
from gammatrace.io import Structure, write_xyz
from gammatrace.modes import HESSIAN_UNITS, hessian_unit, read_hessian


@cache
def sf6_case():
    pos, num, energy = sf6()
    p = pos @ random_rotation(np.random.default_rng(9)).T
    return p, num, fd_hessian(energy, p, h=0.005)


def _num(x):
    return repr(float(x))


def _lower_rows(h):
    return [h[i, : i + 1] for i in range(h.shape[0])]


# ----------------------------------------------------------------------------- readers
def test_npy_in_every_layout(tmp_path):
    _, _, h = sf6_case()
    n = h.shape[0] // 3
    layouts = {
        "square": h,
        "four_index": h.reshape(n, 3, n, 3),
        "flat_full": h.ravel(),
        "flat_lower": np.concatenate(_lower_rows(h)),
    }
    for name, arr in layouts.items():
        path = tmp_path / f"{name}.npy"
        np.save(path, arr)
        got = read_hessian(path, n_atoms=n)
        assert got.format == "npy" and got.unit is None
        assert np.array_equal(got.matrix, h), name
    # without the number of atoms the size is inferred
    assert np.array_equal(read_hessian(tmp_path / "flat_lower.npy").matrix, h)


def test_text_in_every_layout(tmp_path):
    _, _, h = sf6_case()
    n = h.shape[0] // 3
    lower = _lower_rows(h)
    flat = np.concatenate(lower)
    texts = {
        "full.txt": "\n".join(" ".join(_num(x) for x in row) for row in h),
        "full.csv": "\n".join(",".join(_num(x) for x in row) for row in h),
        "ragged.txt": "# lower triangle, by rows\n"
        + "\n".join("  ".join(_num(x) for x in row) for row in lower),
        "packed.txt": "\n".join(_num(x) for x in flat),  # one number a line
        "wrapped.dat": "\n".join(
            " ".join(_num(x) for x in flat[k : k + 5]) for k in range(0, flat.size, 5)
        ),
        "fortran.txt": "\n".join(
            " ".join(f"{float(x):.17E}".replace("E", "D") for x in row) for row in h
        ),
    }
    for name, text in texts.items():
        path = tmp_path / name
        path.write_text(text + "\n")
        got = read_hessian(path, n_atoms=n)
        assert got.format == "text"
        assert np.allclose(got.matrix, h, rtol=1e-15, atol=0), name


def test_ase_vibrations_data_json(tmp_path):
    # The file VibrationsData.write produces (ASE 3.23+: JSON with "__ase_objtype__").
    pytest.importorskip("ase")
    from ase import Atoms
    from ase.vibrations import VibrationsData

    pos, num, h = sf6_case()
    h_ev = h / HESSIAN_UNITS["eV/angstrom2"]  # ASE keeps eV/Å²
    path = tmp_path / "vib.json"
    VibrationsData.from_2d(Atoms(numbers=num, positions=pos), h_ev).write(str(path))
    got = read_hessian(path)
    assert got.format == "ase-json" and got.unit == "eV/angstrom2"
    assert np.allclose(got.matrix, h_ev, rtol=1e-14)
    assert np.array_equal(got.numbers, num) and np.allclose(got.positions, pos)
    assert got.masses is None
    # a Hessian over some of the atoms only is refused, naming them
    part = tmp_path / "part.json"
    VibrationsData(
        Atoms(numbers=num, positions=pos), h_ev[:6, :6].reshape(2, 3, 2, 3), [0, 1]
    ).write(str(part))
    with pytest.raises(ReadError, match=r"part\.json: the Hessian covers atoms \[0, 1\] of 7"):
        read_hessian(part)
    other = tmp_path / "other.json"
    other.write_text('{"hessian": [[1]]}')
    with pytest.raises(ReadError, match="not ASE vibration data"):
        read_hessian(other)


def test_malformed_files_name_file_and_shape(tmp_path):
    _, _, h = sf6_case()
    bad = tmp_path / "short.txt"
    bad.write_text("\n".join(" ".join(map(_num, row)) for row in h[:20, :20]))
    with pytest.raises(
        InputError, match=r"short\.txt: a 20 x 20 matrix; a Hessian of 7 atoms is 21 x 21"
    ):
        read_hessian(bad, n_atoms=7)
    odd = tmp_path / "odd.txt"
    odd.write_text("1 2 3\n4 5\n")
    with pytest.raises(ReadError, match=r"odd\.txt: 5 numbers .* needs 81 .* or 45"):
        read_hessian(odd, n_atoms=3)
    word = tmp_path / "word.csv"
    word.write_text("1,0,0\n0,one,0\n0,0,1\n")
    with pytest.raises(ReadError, match=r"word\.csv, line 2: 'one' is not a number"):
        read_hessian(word)
    nan = h.copy()
    nan[4, 7] = nan[7, 4] = np.nan
    np.save(tmp_path / "nan.npy", nan)
    with pytest.raises(
        InputError, match=r"nan\.npy: contains NaN .* row 4, column 7 of the 21 x 21"
    ):
        read_hessian(tmp_path / "nan.npy")
    skew = h.copy()
    skew[0, 5] += 0.5 * np.abs(h).max()
    np.save(tmp_path / "skew.npy", skew)
    with pytest.raises(
        InputError, match=r"skew\.npy: expected a symmetric matrix.*row 0, column 5"
    ):
        read_hessian(tmp_path / "skew.npy")
    np.save(tmp_path / "cube.npy", np.zeros((3, 3, 3)))
    with pytest.raises(ReadError, match=r"cube\.npy: expected an array of shape .*\(3, 3, 3\)"):
        read_hessian(tmp_path / "cube.npy")
    with pytest.raises(ReadError, match="no such file"):
        read_hessian(tmp_path / "missing.npy")


def test_gradient_finite_differences_are_accepted_and_symmetrised(tmp_path):
    # A Hessian from one-sided gradient differences is slightly asymmetric; within the
    # tolerance it is read, and its symmetric part used.
    _, _, h = sf6_case()
    rng = np.random.default_rng(1)
    asym = h + 1e-4 * np.abs(h).max() * rng.standard_normal(h.shape)
    np.save(tmp_path / "a.npy", asym)
    got = read_hessian(tmp_path / "a.npy")
    assert np.allclose(got.matrix, 0.5 * (asym + asym.T))
    assert 0 < got.asymmetry < 1e-2


# ----------------------------------------------------------------------------- units
def test_units_give_the_same_frequencies():
    # One mdyn/Å in each unit (CODATA 2018: E_h = 4.3597447222071e-18 J, a0 = 0.529177210903 Å,
    # e = 1.602176634e-19 C, N_A = 6.02214076e23 /mol; 1 kcal = 4.184 kJ): 1 mdyn/Å = 100 N/m.
    per_mdyn = {
        "mdyn/angstrom": 1.0,
        "N/m": 100.0,
        "hartree/bohr2": 1.0 / 15.568931,
        "eV/angstrom2": 6.2415091,
        "kcal/mol/angstrom2": 143.93263,
        "kJ/mol/angstrom2": 602.21408,
    }
    pos, num, h = sf6_case()
    res = gt.analyze(num, pos)
    ref = res.label_modes(h).frequencies
    for unit, factor in per_mdyn.items():
        assert np.isclose(HESSIAN_UNITS[unit] * factor, 1.0, rtol=1e-7), unit
        got = res.label_modes(h * factor, unit=unit).frequencies
        assert np.allclose(got, ref, rtol=1e-6, atol=1e-6), unit
    assert hessian_unit("eV/Å²") == "eV/angstrom2" and hessian_unit("n/m") == "N/m"
    with pytest.raises(InputError, match="unit: expected one of mdyn/angstrom"):
        hessian_unit("kcal")


# ----------------------------------------------------------------------------- the command
def _write(tmp_path, name, pos, num, hess):
    xyz = tmp_path / f"{name}.xyz"
    write_xyz([Structure(np.asarray(num), pos)], xyz)
    path = tmp_path / f"{name}.npy"
    np.save(path, hess)
    return str(xyz), str(path)


def test_cli_summary_in_table_order_numbered_from_one(tmp_path, capsys):
    pos, num, h = sf6_case()
    xyz, hp = _write(tmp_path, "sf6", pos, num, h)
    assert main(["modes", xyz, "--hessian", hp]) == 0
    cap = capsys.readouterr()
    assert cap.err == ""
    # Nakamoto (octahedral XY6): A1g + Eg + T2g + 2T1u + T2u, here in the Oh table's order
    assert "Γ_vib   = A1g + Eg + T2g + 2T1u + T2u" in cap.out
    assert "Γ_trans = T1u;  Γ_rot = T1g" in cap.out
    rows = [line.split() for line in cap.out.splitlines() if line[:6].strip().isdigit()]
    assert [int(r[0]) for r in rows] == list(range(1, 16))
    assert not any("i" in r[2] for r in rows)


def test_cli_json_keeps_its_keys_and_flags_imaginary_modes(tmp_path, capsys):
    pos, num, energy = planar_ammonia()
    xyz, hp = _write(tmp_path, "nh3", pos, num, fd_hessian(energy, pos))
    assert main(["modes", xyz, "--hessian", hp, "--format", "json"]) == 0
    out = json.loads(capsys.readouterr().out)
    for key in ("source", "point_group", "modes", "counts", "symmetry_breaking"):
        assert key in out
    for key in ("mode", "irrep", "purity", "set", "external", "frequency_cm1"):
        assert all(key in row for row in out["modes"])
    assert list(out["counts"]) == ["A1'", "E'", "A2''"]  # the D3h table's order
    assert out["gamma_trans"] == {"E'": 1, "A2''": 1} and out["gamma_rot"] == {"A2'": 1, "E''": 1}
    first = out["modes"][0]
    assert first["mode"] == 0 and first["number"] == 1
    assert first["irrep"] == "A2''" and first["imaginary"] and first["frequency_cm1"] < 0
    assert out["n_imaginary"] == 1
    assert [r["number"] for r in out["modes"]] == [1, 2, 3, 4, 5, 6] + [None] * 6
    assert out["unit"] == "mdyn/angstrom" and not out["symmetry_broken"]
    # and the text shows it as an imaginary number
    assert main(["modes", xyz, "--hessian", hp]) == 0
    text = capsys.readouterr().out
    (row,) = [line for line in text.splitlines() if line.split()[:2] == ["1", "A2''"]]
    assert row.split()[2].endswith("i") and float(row.split()[2][:-1]) > 0


def test_cli_symmetry_warning_is_one_clean_line(tmp_path, capsys):
    pos, num, h = sf6_case()
    xyz, hp = _write(tmp_path, "sf6", pos, num, symmetric_noise(h, 0.02, seed=3))
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # a raw interpreter warning would raise here
        assert main(["modes", xyz, "--hessian", hp]) == 0
    err = capsys.readouterr().err
    lines = err.strip().splitlines()
    assert len(lines) == 1
    assert lines[0].startswith(f"gammatrace: warning: {hp}: the Hessian breaks the Oh symmetry")
    assert ".py" not in err and "Warning" not in err


def test_cli_units_help_and_ase_files(tmp_path, capsys):
    pytest.importorskip("ase")
    from ase import Atoms
    from ase.vibrations import VibrationsData

    assert main(["modes", "--help"]) == 0
    helptext = " ".join(capsys.readouterr().out.split())
    assert "default mdyn/angstrom" in helptext
    for unit in HESSIAN_UNITS:
        assert unit in helptext
    pos, num, h = sf6_case()
    xyz, hp = _write(tmp_path, "sf6", pos, num, h)
    assert main(["modes", xyz, "--hessian", hp, "--format", "json"]) == 0
    ref = json.loads(capsys.readouterr().out)
    hart = tmp_path / "h_hartree.txt"
    hart.write_text(
        "\n".join(" ".join(map(_num, row)) for row in h / HESSIAN_UNITS["hartree/bohr2"])
    )
    assert (
        main(["modes", xyz, "--hessian", str(hart), "--unit", "hartree/bohr2", "--format", "json"])
        == 0
    )
    got = json.loads(capsys.readouterr().out)
    assert got["unit"] == "hartree/bohr2" and got["hessian_format"] == "text"
    assert np.allclose(
        [r["frequency_cm1"] for r in got["modes"]],
        [r["frequency_cm1"] for r in ref["modes"]],
        atol=1e-6,
    )
    # ASE data carry their unit (eV/Å²) and their atoms
    vib = tmp_path / "vib.json"
    atoms = Atoms(numbers=num, positions=pos)
    VibrationsData.from_2d(atoms, h / HESSIAN_UNITS["eV/angstrom2"]).write(str(vib))
    assert main(["modes", xyz, "--hessian", str(vib), "--format", "json"]) == 0
    got = json.loads(capsys.readouterr().out)
    assert got["unit"] == "eV/angstrom2" and got["counts"] == ref["counts"]
    assert np.allclose(
        [r["frequency_cm1"] for r in got["modes"]],
        [r["frequency_cm1"] for r in ref["modes"]],
        atol=1e-6,
    )
    assert main(["modes", xyz, "--hessian", str(vib), "--unit", "mdyn/angstrom"]) == 1
    assert "always in eV/angstrom2" in capsys.readouterr().err
    moved = Atoms(numbers=num, positions=pos + np.array([0.3, 0.0, 0.0]))
    VibrationsData.from_2d(moved, h).write(str(vib))
    assert main(["modes", xyz, "--hessian", str(vib)]) == 1
    assert "positions differ from the structure's by up to 0.3 Å" in capsys.readouterr().err


def test_cli_bad_files_exit_1_naming_the_file(tmp_path, capsys):
    pos, num, _, _ = water()
    xyz, hp = _write(tmp_path, "water", pos, num, np.zeros((4, 4)))
    assert main(["modes", xyz, "--hessian", hp]) == 1
    err = capsys.readouterr().err
    assert "water.npy" in err and "(9, 9) for 3 atoms, received (4, 4)" in err
    _, good = _write(tmp_path, "good", pos, num, water()[2])
    assert main(["modes", xyz, "--hessian", good, "--unit", "furlong"]) == 1
    assert "unit: expected one of" in capsys.readouterr().err


def test_python_warning_keeps_its_class():
    pos, num, h = sf6_case()
    res = gt.analyze(num, pos)
    with pytest.warns(SymmetryBreakingWarning) as rec:
        res.label_modes(symmetric_noise(h, 0.02, seed=3))
    assert len(rec) == 1
