"""Malformed input: every bad file or array gives a typed error in its place, never a crash.

The corpus lives in tests/data/malformed/ and is written by make_corpus.py there. For each file,
EXPECTED lists what each frame must become: a point group (the frame is fine), or an error type
with the 1-based line the message must name. Every path is checked: ``read_xyz``,
``analyze_many``, the CLI's JSON Lines and the batch table. Good frames next to bad ones come
through intact; bad ones leave no partial values behind.

Reference groups: water is C2v and ammonia C3v (Cotton, "Chemical Applications of Group
Theory", 3rd ed., ch. 3 worked examples).
"""

from __future__ import annotations

import importlib.util
import json
import os
import unicodedata

import gammatrace as gt
import numpy as np
import pytest
from gammatrace.batch import analyze_batch
from gammatrace.cli import main

CORPUS = os.path.join(os.path.dirname(os.path.dirname(__file__)), "data", "malformed")

R, S = "ReadError", "StructureError"

# file -> one entry per frame: a point group, or (error type, line named by the message or None)
EXPECTED: dict[str, list] = {
    "only_count.xyz": [(R, 2)],
    "zero_atoms.xyz": [(S, None)],
    "truncated_atoms.xyz": [(R, 5)],
    "truncated_mid_line.xyz": [(R, 5)],
    "truncated_second_frame.xyz": ["C2v", (R, 9)],
    "count_too_small.xyz": [(R, 1), "C3v"],
    "count_too_large_then_frame.xyz": [(R, 1), "C3v"],
    "count_negative.xyz": [(R, 1)],
    "count_not_integer.xyz": [(R, 1)],
    "count_word.xyz": [(R, 1)],
    "count_overflow.xyz": [(R, 1)],
    "count_huge_small_file.xyz": [(R, 5)],
    "non_numeric_coordinate.xyz": [(R, 4)],
    "missing_coordinate.xyz": [(R, 4)],
    "missing_symbol.xyz": [(R, 3)],
    "comma_decimal.xyz": [(R, 3)],
    "nan_coordinate.xyz": [(R, 3)],
    "inf_coordinate.xyz": [(R, 4)],
    "neg_inf_coordinate.xyz": [(R, 5)],
    "overflow_coordinate.xyz": [(R, 3)],
    "huge_coordinate.xyz": [(S, None)],
    "huge_fortran_coordinate.xyz": [(S, None)],
    "crlf_bad_coordinate.xyz": [(R, 4)],
    "control_chars_in_count.xyz": [(R, 1)],
    "extxyz_short_properties.xyz": [(R, 2)],
    "extxyz_no_species.xyz": [(R, 2)],
    "unknown_element.xyz": [(R, 3)],
    "atomic_number_zero.xyz": [(R, 3)],
    "atomic_number_too_large.xyz": [(R, 3)],
    "non_ascii_symbol.xyz": [(R, 3)],
    "latin1_symbol.xyz": [(R, 3)],
    "nul_in_atom_line.xyz": [(R, 3)],
    "blank_line_between_atoms.xyz": [(R, 4), (R, 6)],
    "blank_line_between_frames.xyz": ["C2v", (R, 6), "C3v"],
    "leading_blank_line.xyz": [(R, 1), "C2v"],
    "binary_garbage.xyz": [(R, 1)],
    "binary_after_frame.xyz": ["C2v", (R, 6)],
    "gzip_header.xyz": [(R, 1)],
    "overlapping_atoms.xyz": [(S, None)],
    "coordinate_too_large.xyz": [(S, None)],
    "mixed_good_bad.xyz": ["C2v", (R, 9), "C3v"],
    # awkward but valid
    "crlf.xyz": ["C2v"],
    "tabs.xyz": ["C2v"],
    "utf8_comment.xyz": ["C2v"],
    "trailing_blank_lines.xyz": ["C2v"],
    "no_final_newline.xyz": ["C2v"],
    "extra_columns.xyz": ["C2v"],
    "lowercase_symbols.xyz": ["C2v"],
    "very_long_number.xyz": ["C2v"],
    "utf8_bom.xyz": ["C2v"],  # a byte-order mark before the count line is skipped
    "extxyz_unterminated_quote.xyz": ["C2v"],
}
EMPTY = ["empty.xyz", "only_whitespace.xyz"]


def _path(name: str) -> str:
    return os.path.join(CORPUS, name)


def _is_error(entry) -> bool:
    return isinstance(entry, tuple)


def _load_generator():
    spec = importlib.util.spec_from_file_location("make_corpus", _path("make_corpus.py"))
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def test_corpus_on_disk_is_what_the_generator_writes():
    mod = _load_generator()
    listed = set(mod.CORPUS) | set(mod.VALID)
    on_disk = {f for f in os.listdir(CORPUS) if f.endswith(".xyz")}
    assert listed == on_disk
    assert listed == set(EXPECTED) | set(EMPTY)
    for name, data in {**mod.CORPUS, **mod.VALID}.items():
        with open(_path(name), "rb") as fh:
            assert fh.read() == data, name


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_reader_reports_each_bad_frame_in_place(name):
    frames = gt.read_xyz(_path(name))
    expected = EXPECTED[name]
    assert len(frames) == len(expected)
    for k, (frame, exp) in enumerate(zip(frames, expected)):
        if _is_error(exp) and exp[0] == R:
            assert isinstance(frame, gt.FrameError), (k, frame)
            assert (frame.source, frame.index, frame.type) == (_path(name), k, R)
            # the message names file, frame and line
            assert name in frame.message
            assert f"frame {k}" in frame.message
            assert f"line {exp[1]} " in frame.message
        else:
            assert isinstance(frame, gt.Structure), (k, frame)
            assert frame.index == k
            assert np.isfinite(frame.positions).all() or frame.n_atoms == 0


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_reader_bytes_and_path_agree(name):
    from gammatrace import _core

    with open(_path(name), "rb") as fh:
        data = fh.read()
    a = _core.read_xyz_bytes(data, name)
    b = _core.read_xyz_path(_path(name), name)
    assert a.errors == b.errors
    np.testing.assert_array_equal(a.offsets, b.offsets)
    np.testing.assert_array_equal(a.positions, b.positions)


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_analyze_many_keeps_bad_frames_in_place(name):
    results = list(gt.analyze_many([_path(name)]))
    expected = EXPECTED[name]
    assert len(results) == len(expected)
    for k, (res, exp) in enumerate(zip(results, expected)):
        if _is_error(exp):
            assert isinstance(res, gt.FrameError), (k, res)
            assert res.type == exp[0]
            assert res.index == k and res.source == _path(name)
            assert issubclass(getattr(gt, res.type), gt.InputError)
            assert res.message
        else:
            assert isinstance(res, gt.Analysis), (k, res)
            assert res.point_group == exp


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_analyze_many_without_catch_raises_a_typed_error(name):
    expected = EXPECTED[name]
    if not any(_is_error(e) for e in expected):
        assert len(list(gt.analyze_many([_path(name)], catch=False))) == len(expected)
        return
    with pytest.raises(gt.InputError):
        list(gt.analyze_many([_path(name)], catch=False))


def _cli(capsys, name):
    status = main(["analyze", _path(name), "--format", "json"])
    out, err = capsys.readouterr()
    return status, out, err


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_cli_writes_error_objects_in_place_and_exits_1(name, capsys):
    status, out, err = _cli(capsys, name)
    expected = EXPECTED[name]
    n_bad = sum(_is_error(e) for e in expected)
    assert status == (1 if n_bad else 0), err
    assert out.endswith("\n")
    rows = [json.loads(line) for line in out.splitlines()]
    assert len(rows) == len(expected)
    for k, (row, exp) in enumerate(zip(rows, expected)):
        assert (row["source"], row["index"]) == (_path(name), k)
        if _is_error(exp):
            # an error object and nothing else: no partial results
            assert set(row) == {"source", "index", "error"}
            assert row["error"]["type"] == exp[0]
            assert row["error"]["message"]
        else:
            assert "error" not in row
            assert row["point_group"] == exp
            assert row["n_atoms"] > 0
    # one stderr line per failed frame, naming the file and the frame
    lines = err.rstrip("\n").split("\n") if err else []
    assert len(lines) == n_bad
    for line in lines:
        assert line.startswith("gammatrace: ")
        assert _path(name) in line and "[frame " in line


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_batch_rows_of_bad_frames_carry_only_the_error(name):
    cols = analyze_batch(_path(name), output="dict", n_threads=1)
    expected = EXPECTED[name]
    assert list(cols["index"]) == list(range(len(expected)))
    for k, exp in enumerate(expected):
        if _is_error(exp):
            assert cols["error_type"][k] == exp[0]
            assert cols["error"][k]
            assert cols["point_group"][k] == ""
            assert cols["gamma_vib"][k] == ""
            assert cols["order"][k] == -1
            assert np.isnan(cols["max_deviation"][k])
        else:
            assert cols["error"][k] == ""
            assert cols["point_group"][k] == exp


def _control_characters(text: str) -> list[str]:
    return [c for c in text if unicodedata.category(c) in ("Cc", "Cf")]


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_error_messages_hold_no_control_characters(name, capsys):
    _, _, err = _cli(capsys, name)
    assert not _control_characters(err.replace("\n", "")), repr(err)
    messages = [f.message for f in gt.read_xyz(_path(name)) if isinstance(f, gt.FrameError)]
    messages += [r.message for r in gt.analyze_many([_path(name)]) if isinstance(r, gt.FrameError)]
    for m in messages:
        assert not _control_characters(m), repr(m)


def test_byte_order_mark_is_read_or_named():
    (frame,) = gt.read_xyz(_path("utf8_bom.xyz"))
    if isinstance(frame, gt.FrameError):
        assert "byte-order mark" in frame.message or "BOM" in frame.message
    else:
        assert gt.analyze(frame).point_group == "C2v"


def test_missing_symbol_message_names_the_symbol():
    (frame,) = gt.read_xyz(_path("missing_symbol.xyz"))
    reason = frame.message.split("(frame 0):", 1)[1]  # the file name holds "symbol" too
    assert "symbol" in reason or "element" in reason


@pytest.mark.parametrize("name", EMPTY)
def test_empty_file_reads_as_no_frames(name):
    assert gt.read_xyz(_path(name)) == []


@pytest.mark.parametrize("name", EMPTY)
def test_empty_file_is_reported_by_the_cli(name, capsys):
    status, _out, err = _cli(capsys, name)
    assert status == 1
    assert err.strip()


def test_missing_file_is_a_read_error(tmp_path, capsys):
    path = str(tmp_path / "absent.xyz")
    with pytest.raises(gt.ReadError, match=r"absent\.xyz"):
        gt.read_xyz(path)
    (res,) = gt.analyze_many([path])
    assert isinstance(res, gt.FrameError) and res.type == R
    status = main(["analyze", path, "--format", "json"])
    out, _ = capsys.readouterr()
    assert status == 1
    assert json.loads(out)["error"]["type"] == R


def test_directory_is_a_read_error(tmp_path):
    with pytest.raises(gt.ReadError):
        gt.read_xyz(str(tmp_path))


def test_one_bad_file_among_good_ones_keeps_the_others(capsys):
    names = ["crlf.xyz", "binary_garbage.xyz", "mixed_good_bad.xyz"]
    status = main(["analyze", *[_path(n) for n in names], "--format", "json"])
    out, _ = capsys.readouterr()
    rows = [json.loads(line) for line in out.splitlines()]
    assert status == 1
    got = [(r["source"], r["index"], r.get("point_group") or r["error"]["type"]) for r in rows]
    want = [
        (_path(n), k, e if isinstance(e, str) else e[0])
        for n in names
        for k, e in enumerate(EXPECTED[n])
    ]
    assert got == want


# ---------- arrays handed to the Python API ----------

WATER_POS = [[0.0, 0.0, 0.1173], [0.0, 0.7572, -0.4692], [0.0, -0.7572, -0.4692]]

BAD_ARRAYS = {
    "no atoms": ([], np.zeros((0, 3)), gt.StructureError),
    "nan": (["O", "H", "H"], [[0, 0, np.nan], *WATER_POS[1:]], gt.StructureError),
    "inf": (["O", "H", "H"], [[0, 0, np.inf], *WATER_POS[1:]], gt.StructureError),
    "huge": (["O", "H", "H"], [[0, 0, 1e300], *WATER_POS[1:]], gt.StructureError),
    "negative Z": ([-8, 1, 1], WATER_POS, gt.StructureError),
    "zero Z": ([0, 1, 1], WATER_POS, gt.StructureError),
    "Z 119": ([119, 1, 1], WATER_POS, gt.StructureError),
    "float Z": ([8.0, 1.0, 1.0], WATER_POS, gt.InputError),
    "unknown symbol": (["Oo", "H", "H"], WATER_POS, gt.StructureError),
    "empty symbol": (["", "H", "H"], WATER_POS, gt.StructureError),
    "length mismatch": (["O", "H"], WATER_POS, gt.StructureError),
    "four columns": (["O", "H", "H"], [[*p, 0.0] for p in WATER_POS], gt.InputError),
    "1-D positions": (["O"], [0.0, 0.0, 0.0], gt.InputError),
    "text positions": (["O", "H", "H"], [["a", "b", "c"], *WATER_POS[1:]], gt.InputError),
    "coincident atoms": (["O", "H", "H"], [WATER_POS[0]] * 3, gt.StructureError),
}


@pytest.mark.parametrize("case", sorted(BAD_ARRAYS))
def test_bad_arrays_raise_typed_errors(case):
    symbols, positions, exc = BAD_ARRAYS[case]
    with pytest.raises(exc) as info:
        gt.analyze(symbols, positions)
    assert isinstance(info.value, ValueError)
    assert str(info.value)


def test_uint64_atomic_number_is_reported_as_given():
    with pytest.raises(gt.StructureError, match="18446744073709551615"):
        gt.analyze(np.array([2**64 - 1, 1, 1], dtype=np.uint64), WATER_POS)


def test_complex_positions_are_refused():
    pos = np.array(WATER_POS, dtype=complex)
    pos[0, 0] = 1j
    with pytest.raises(gt.InputError, match="positions"):
        gt.analyze(["O", "H", "H"], pos)


@pytest.mark.parametrize("tol", [0.0, -0.01, float("nan"), float("inf"), "x", None])
def test_bad_tolerance_is_an_input_error(tol):
    with pytest.raises(gt.InputError, match="tol"):
        gt.analyze(["O", "H", "H"], WATER_POS, tol=tol)


def test_tiny_tolerance_gives_a_group_or_a_clear_refusal():
    try:
        res = gt.analyze(["O", "H", "H"], WATER_POS, tol=1e-300)
    except gt.InputError as exc:
        assert "tol" in str(exc)
    else:
        assert res.point_group in ("C1", "Cs", "C2v")


def test_absurd_tolerance_message_is_short():
    with pytest.raises(gt.GammatraceError) as info:
        gt.analyze(["O", "H", "H"], WATER_POS, tol=1e300)
    assert len(str(info.value)) < 200
