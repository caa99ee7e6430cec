"""The reader's ragged result: comments, info and errors as per-frame columns made on access."""

from __future__ import annotations

import numpy as np
import pytest
from gammatrace import _core
from gammatrace.io import read_xyz_raw

WATER = b"3\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\nH 0.0 -0.7572 -0.4692\n"
EXTENDED = b'1\nProperties=species:S:1:pos:R:3 energy=-1.5 name="a b" flag\nXe 0 0 0\n'
BAD_ATOM = b"2\nbroken\nO 0 0 0\nH 0 zz 1\n"


def _raw(data: bytes):
    return _core.read_xyz_bytes(data, "five.xyz")


@pytest.fixture
def raw():
    # frames: water, extended, a bad coordinate (lines 9-12), water, extended
    return _raw(WATER + EXTENDED + BAD_ATOM + WATER + EXTENDED)


def test_columns_have_one_item_per_frame(raw):
    assert len(raw.offsets) - 1 == 5
    assert len(raw.comments) == len(raw.info) == len(raw.errors) == 5
    assert isinstance(raw.errors, _core.FrameColumn)


def test_comments_are_the_comment_lines(raw):
    assert raw.comments[0] == "water"
    assert raw.comments[2] == "broken"
    assert raw.comments[-1].startswith("Properties=")
    assert list(raw.comments) == [
        "water",
        EXTENDED.split(b"\n")[1].decode(),
        "broken",
        "water",
        EXTENDED.split(b"\n")[1].decode(),
    ]


def test_info_is_parsed_from_the_comment_line(raw):
    assert raw.info[0] == []
    assert raw.info[1] == [
        ("Properties", "species:S:1:pos:R:3"),
        ("energy", "-1.5"),
        ("name", "a b"),
        ("flag", "T"),
    ]
    assert raw.info[4] == raw.info[1]
    assert dict(raw.info[-1])["energy"] == "-1.5"


def test_errors_name_the_file_and_the_line_of_bad_frames_only(raw):
    kind, message = raw.errors[2]
    assert kind == "ReadError"
    assert message.startswith("line 12 of five.xyz (frame 2): ")
    assert "zz" in message
    assert [k for k, e in enumerate(raw.errors) if e is not None] == [2]
    # a bad frame holds no atoms; the frames after it are read
    assert list(raw.offsets) == [0, 3, 4, 4, 7, 8]


def test_columns_index_like_lists(raw):
    errors = list(raw.errors)
    for k in range(-5, 5):
        assert raw.errors[k] == errors[k]
        assert raw.comments[k] == list(raw.comments)[k]
    for bad in (5, -6, 10**20):
        with pytest.raises(IndexError, match="out of range for 5 frames"):
            raw.errors[bad]
    with pytest.raises(TypeError):
        raw.comments["0"]
    assert raw.comments[np.int64(-5)] == "water"


@pytest.mark.parametrize(
    "key", [slice(None), slice(1, None), slice(None, -1), slice(None, None, 2), slice(4, 0, -3)]
)
def test_slices_are_lists(raw, key):
    for column in (raw.comments, raw.info, raw.errors):
        assert column[key] == list(column)[key]
        assert type(column[key]) is list


def test_columns_compare_equal_to_lists_tuples_and_columns(raw):
    expected = [None, None, raw.errors[2], None, None]
    assert raw.errors == expected
    assert raw.errors == tuple(expected)
    assert raw.errors != expected[:4]
    assert raw.errors != [None] * 5
    assert raw.errors[1:2] == [None]
    assert raw.errors != "abcde"
    assert raw.errors.__eq__("abcde") is NotImplemented
    same = _raw(WATER + EXTENDED + BAD_ATOM + WATER + EXTENDED)
    assert raw.errors == same.errors and raw.info == same.info
    assert raw.comments != _raw(WATER * 5).comments
    with pytest.raises(TypeError):
        hash(raw.errors)


def test_iteration_restarts_and_ends(raw):
    it = iter(raw.comments)
    assert next(it) == "water"
    assert len(list(it)) == 4
    assert list(it) == []
    assert next(iter(raw.comments)) == "water"  # a new iterator starts over
    assert "broken" in raw.comments


def test_repr_names_the_column_and_its_length(raw):
    assert repr(raw.errors) == f"<errors of 5 frames: [None, None, {raw.errors[2]!r}, ...]>"
    assert repr(raw.comments[:1]) == "['water']"
    assert repr(_raw(b"").comments) == "<comments of 0 frames: []>"


def test_a_comment_line_that_is_not_utf8_is_read_with_replacement_characters():
    raw = _raw(b"1\nk=\xff\xfe v\nH 0 0 0\n")
    assert raw.errors == [None]
    assert raw.comments[0] == "k=\ufffd\ufffd v"
    assert raw.info[0] == [("k", "\ufffd\ufffd"), ("v", "T")]


def test_empty_input_has_empty_columns():
    raw = _raw(b"")
    assert len(raw.errors) == 0 and raw.errors == [] and list(raw.info) == []
    assert list(raw.offsets) == [0]


def test_files_read_by_path_give_the_same_columns(tmp_path, raw):
    path = tmp_path / "five.xyz"
    path.write_bytes(WATER + EXTENDED + BAD_ATOM + WATER + EXTENDED)
    by_path = read_xyz_raw(path)
    assert by_path.comments == raw.comments and by_path.info == raw.info
    assert [e is None for e in by_path.errors] == [e is None for e in raw.errors]
    assert str(path) in by_path.errors[2][1]
