"""Differential test of the XYZ reader against ASE's (``ase.io.read``) on generated files.

Hypothesis writes valid multi-frame XYZ files with random elements, atom counts and
coordinates spelled in every notation that programs write (common practice): plain
decimals, a leading ``+``, no leading zero (``.5``), a trailing point (``5.``), ``e``/``E``
exponents, Fortran ``D``/``d`` exponents, integers and long digit strings. gammatrace's
reader must give bit-identical positions and the same atomic numbers as ASE. ASE cannot
read Fortran exponents, so ASE reads a twin file whose ``D``/``d`` markers are written as
``E``/``e`` (the same number, as ``float`` reads it); every value is also checked against
``float`` of its own text.
"""

from __future__ import annotations

import numpy as np
import pytest
from gammatrace.io import read_structures
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

ase_io = pytest.importorskip("ase.io")
ase_data = pytest.importorskip("ase.data")

# Elements 1..118 by symbol, as ASE spells them.
SYMBOLS = ase_data.chemical_symbols[1:119]

NOTATIONS = (
    "repr",
    "fixed",
    "plus",
    "no_leading_zero",
    "trailing_dot",
    "exp_lower",
    "exp_upper",
    "fortran_upper",
    "fortran_lower",
    "integer",
    "many_digits",
)


def spell(x: float, notation: str, digits: int) -> str:
    """``x`` written in one notation (common practice); the text is what the file holds."""
    if notation == "repr":
        return repr(x)
    if notation == "fixed":
        return f"{x:.{digits}f}"
    if notation == "plus":
        return f"{x:+.{digits}f}"
    if notation == "no_leading_zero":
        text = f"{x:.{max(digits, 1)}f}"
        return text.replace("0.", ".", 1) if text.lstrip("-").startswith("0.") else text
    if notation == "trailing_dot":
        return f"{round(x):d}."
    if notation == "exp_lower":
        return f"{x:.{digits}e}"
    if notation == "exp_upper":
        return f"{x:.{digits}E}"
    if notation == "fortran_upper":
        return f"{x:.{digits}E}".replace("E", "D")
    if notation == "fortran_lower":
        return f"{x:.{digits}e}".replace("e", "d")
    if notation == "integer":
        return f"{round(x):d}"
    # many_digits: more digits than a double holds, so the last ones must round correctly.
    return f"{x:.{digits + 20}f}"


def as_e(text: str) -> str:
    """The same number with a Fortran exponent marker written as an ``e``."""
    return text.replace("D", "E").replace("d", "e")


coordinate = st.tuples(
    st.floats(min_value=-1e5, max_value=1e5, allow_nan=False, allow_infinity=False)
    | st.floats(min_value=-1e-3, max_value=1e-3, allow_nan=False),
    st.sampled_from(NOTATIONS),
    st.integers(min_value=0, max_value=17),
)
atom = st.tuples(st.sampled_from(SYMBOLS), st.tuples(coordinate, coordinate, coordinate))
frame = st.tuples(st.lists(atom, min_size=1, max_size=8), st.sampled_from(["", "generated"]))
separator = st.sampled_from([" ", "  ", "\t", " \t "])


@settings(suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(frames=st.lists(frame, min_size=1, max_size=4), sep=separator)
def test_reader_matches_ase_bit_for_bit_in_every_notation(tmp_path, frames, sep):
    lines, twin, want_numbers, want_positions = [], [], [], []
    for atoms, comment in frames:
        lines += [str(len(atoms)), comment]
        twin += [str(len(atoms)), comment]
        for symbol, coords in atoms:
            texts = [spell(x, notation, digits) for x, notation, digits in coords]
            lines.append(sep.join([symbol, *texts]))
            twin.append(sep.join([symbol, *map(as_e, texts)]))
            want_numbers.append(SYMBOLS.index(symbol) + 1)
            want_positions.append([float(as_e(t)) for t in texts])
    ours_path = tmp_path / "ours.xyz"
    ase_path = tmp_path / "twin.xyz"
    ours_path.write_text("\n".join(lines) + "\n")
    ase_path.write_text("\n".join(twin) + "\n")

    ours = read_structures(ours_path)
    theirs = ase_io.read(ase_path, index=":")
    assert len(ours) == len(theirs) == len(frames)
    got_positions = np.concatenate([s.positions for s in ours])
    got_numbers = np.concatenate([s.numbers for s in ours])
    ase_positions = np.concatenate([a.get_positions() for a in theirs])
    ase_numbers = np.concatenate([a.numbers for a in theirs])
    # Bit-identical: compare the float64 bit patterns, not values within a tolerance.
    assert np.array_equal(got_positions.view(np.int64), ase_positions.view(np.int64))
    assert np.array_equal(
        got_positions.view(np.int64), np.array(want_positions, dtype=np.float64).view(np.int64)
    )
    assert got_numbers.tolist() == ase_numbers.tolist() == want_numbers


@pytest.mark.parametrize(
    ("text", "value"),
    [
        # Fortran exponents as quantum-chemistry programs print them (common practice).
        ("1.5D-03", 1.5e-03),
        ("-2.25d+01", -22.5),
        ("+.5D0", 0.5),
        ("5.D1", 50.0),
    ],
)
def test_reader_reads_fortran_exponents_as_float_reads_e(tmp_path, text, value):
    path = tmp_path / "fortran.xyz"
    path.write_text(f"1\n\nC {text} 0 0\n")
    (structure,) = read_structures(path)
    assert structure.positions[0, 0] == value
    assert structure.positions[0, 0] == float(as_e(text))
