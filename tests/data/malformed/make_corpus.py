"""Writes the malformed-XYZ corpus next to this script: ``python make_corpus.py``.

Each file exercises one way an XYZ file can be wrong (or awkward but valid). The expected
outcome of every file is listed in tests/test_malformed.py; rerun this script only together
with that list. Bytes are written verbatim (no newline translation), so CRLF, NUL bytes,
invalid UTF-8 and binary garbage survive.
"""

from __future__ import annotations

import os
import random

HERE = os.path.dirname(os.path.abspath(__file__))

WATER = b"3\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\nH 0.0 -0.7572 -0.4692\n"
NH3 = (
    b"4\nammonia\nN 0.0 0.0 0.1162\nH 0.0 0.9397 -0.2711\n"
    b"H 0.8138 -0.4699 -0.2711\nH -0.8138 -0.4699 -0.2711\n"
)


def _garbage(seed: int, n: int) -> bytes:
    rnd = random.Random(seed)
    return bytes(rnd.randrange(256) for _ in range(n))


CORPUS: dict[str, bytes] = {
    # -- nothing to read
    "empty.xyz": b"",
    "only_whitespace.xyz": b"   \n\t\n\n",
    "only_count.xyz": b"3\n",
    "zero_atoms.xyz": b"0\nnothing here\n",
    # -- truncation
    "truncated_atoms.xyz": b"3\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\n",
    "truncated_mid_line.xyz": b"3\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\nH 0.0 -0.75",
    "truncated_second_frame.xyz": WATER + b"3\nwater again\nO 0.0 0.0 0.1173\n",
    # -- wrong counts
    "count_too_small.xyz": b"2\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n" + NH3,
    "count_too_large_then_frame.xyz": b"5\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n" + NH3,
    "count_negative.xyz": b"-3\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n",
    "count_not_integer.xyz": b"3.0\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n",
    "count_word.xyz": b"three\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n",
    "count_overflow.xyz": b"999999999999999999999999999999\nx\nO 0 0 0\n",
    "count_huge_small_file.xyz": b"1000000000000\nclaims 10^12 atoms\nO 0 0 0\nH 0 0 1\n",
    # -- bad atom lines
    "non_numeric_coordinate.xyz": b"3\nwater\nO 0.0 0.0 0.1173\nH 0.0 zero -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n",
    "missing_coordinate.xyz": b"3\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572\nH 0.0 -0.7572 -0.4692\n",
    "missing_symbol.xyz": (
        b"3\nwater\n0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\nH 0.0 -0.7572 -0.4692\n"
    ),
    "comma_decimal.xyz": b"3\nwater\nO 0,0 0,0 0,1173\nH 0,0 0,7572 -0,4692\n"
    b"H 0,0 -0,7572 -0,4692\n",
    "nan_coordinate.xyz": b"3\nwater\nO 0.0 0.0 nan\nH 0.0 0.7572 -0.4692\nH 0.0 -0.7572 -0.4692\n",
    "inf_coordinate.xyz": b"3\nwater\nO 0.0 0.0 0.1173\nH 0.0 inf -0.4692\nH 0.0 -0.7572 -0.4692\n",
    "neg_inf_coordinate.xyz": b"3\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\n"
    b"H -Infinity -0.7572 -0.4692\n",
    "overflow_coordinate.xyz": b"3\nwater\nO 0.0 0.0 1e400\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n",
    "huge_coordinate.xyz": b"3\nwater\nO 0.0 0.0 1e300\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n",
    "huge_fortran_coordinate.xyz": b"3\nwater\nO 0.0 0.0 1.0D+200\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n",
    "very_long_number.xyz": b"3\nwater\nO 0.0 0.0 0." + b"1" * 5000 + b"\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n",
    "crlf_bad_coordinate.xyz": b"3\r\nwater\r\nO 0.0 0.0 0.1173\r\nH 0.0 y -0.4692\r\n"
    b"H 0.0 -0.7572 -0.4692\r\n",
    "utf8_bom.xyz": b"\xef\xbb\xbf" + WATER,
    "control_chars_in_count.xyz": b"3\x1b[2J\rX\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n",
    "extxyz_short_properties.xyz": b"3\nProperties=species:S:1:pos:R:2\nO 0.0 0.0\nH 0.0 0.7572\n"
    b"H 0.0 -0.7572\n",
    "extxyz_unterminated_quote.xyz": b'3\nname="water Properties=species:S:1:pos:R:3\n'
    b"O 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\nH 0.0 -0.7572 -0.4692\n",
    "extxyz_no_species.xyz": b"3\nProperties=pos:R:3:mass:R:1\nO 0.0 0.0 0.1173 16\n"
    b"H 0.0 0.7572 -0.4692 1\nH 0.0 -0.7572 -0.4692 1\n",
    # -- elements
    "unknown_element.xyz": b"3\nwater\nQq 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n",
    "atomic_number_zero.xyz": b"3\nwater\n0 0.0 0.0 0.1173\n1 0.0 0.7572 -0.4692\n"
    b"1 0.0 -0.7572 -0.4692\n",
    "atomic_number_too_large.xyz": b"3\nwater\n119 0.0 0.0 0.1173\n1 0.0 0.7572 -0.4692\n"
    b"1 0.0 -0.7572 -0.4692\n",
    "non_ascii_symbol.xyz": "3\nwater\nÖ 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\n"
    "H 0.0 -0.7572 -0.4692\n".encode(),
    "latin1_symbol.xyz": b"3\nwater\nO\xe9 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n",
    "nul_in_atom_line.xyz": b"3\nwater\nO 0.0\x00 0.0 0.1173\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n",
    # -- blank lines in the wrong places
    "blank_line_between_atoms.xyz": b"3\nwater\nO 0.0 0.0 0.1173\n\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n",
    "blank_line_between_frames.xyz": WATER + b"\n" + NH3,
    "leading_blank_line.xyz": b"\n" + WATER,
    # -- binary garbage
    "binary_garbage.xyz": _garbage(1, 4096),
    "binary_after_frame.xyz": WATER + _garbage(2, 512),
    "gzip_header.xyz": b"\x1f\x8b\x08\x00\x00\x00\x00\x00\x00\x03" + _garbage(3, 200),
    # -- structures that read but cannot be analysed
    "overlapping_atoms.xyz": b"3\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\n"
    b"H 0.0 0.7572 -0.4692\n",
    "coordinate_too_large.xyz": b"2\nfar apart\nO 0.0 0.0 0.0\nO 0.0 0.0 5e7\n",
    # -- mixed: good frames around bad ones must come through intact
    "mixed_good_bad.xyz": WATER + b"3\nbad\nO 0.0 0.0 0.1173\nH 0.0 x -0.4692\n"
    b"H 0.0 -0.7572 -0.4692\n" + NH3,
}

# Awkward but valid: each must read as the molecule it holds.
VALID: dict[str, bytes] = {
    "crlf.xyz": WATER.replace(b"\n", b"\r\n"),
    "tabs.xyz": WATER.replace(b" ", b"\t"),
    "utf8_comment.xyz": WATER.replace(b"water", "Wasser — H₂O, 25 °C".encode()),
    "trailing_blank_lines.xyz": WATER + b"\n\n  \n",
    "no_final_newline.xyz": WATER.rstrip(b"\n"),
    "extra_columns.xyz": b"3\nwater\nO 0.0 0.0 0.1173 " + b"x" * 100_000 + b" 1 2\n"
    b"H 0.0 0.7572 -0.4692 q\nH 0.0 -0.7572 -0.4692 7\n",
    "lowercase_symbols.xyz": WATER.replace(b"O ", b"o ").replace(b"H ", b"h "),
}


def main() -> None:
    for name, data in {**CORPUS, **VALID}.items():
        with open(os.path.join(HERE, name), "wb") as fh:
            fh.write(data)


if __name__ == "__main__":
    main()
