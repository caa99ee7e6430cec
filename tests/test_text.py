"""Readable text: counted nouns agree with their number, and lengths read as a person writes
them (common practice: ``1 mode``, ``2 modes``; ``1.524 Å`` rather than ``1.524e0 Å``; an
exponent only for tiny values)."""

from __future__ import annotations

import re

import gammatrace as gt
import pytest
from gammatrace.descent import site_analysis
from gammatrace.text import format_length, plural

N2 = (["N", "N"], [[0.0, 0.0, 0.0], [0.0, 0.0, 1.0977]])


def test_plural_follows_the_count():
    assert [plural(n, "mode") for n in (0, 1, 2)] == ["0 modes", "1 mode", "2 modes"]
    assert plural(1, "class", "classes") == "1 class"
    assert plural(3, "class", "classes") == "3 classes"


@pytest.mark.parametrize(
    ("value", "text"),
    [
        (1.524, "1.524"),
        (1.5240000001, "1.524"),
        (2.0, "2"),
        (0.0152, "0.0152"),
        (0.001, "0.001"),
        (1250.0, "1250"),
        (3.2e-5, "3.2e-05"),
        (1e-4, "1e-04"),
        (5e7, "5e+07"),
        (0.0, "0"),
    ],
)
def test_lengths_read_naturally(value, text):
    assert format_length(value) == text


def test_one_of_a_kind_is_singular_in_reports():
    res = gt.analyze(*N2)
    report = res.report(worked=False)
    assert "(1 mode)" in report and "2 atoms" in report
    assert not re.search(r"\b1 (modes|atoms|orbits)\b", report)
    # an exact structure: its largest deviation is a plain number, no "0.00e+00"
    assert re.search(r"largest deviation (0|\d\.?\d*e-\d\d) Å", report), report
    assert "e+00" not in report and "e0 " not in report
    atom = gt.analyze(["Ne"], [[0.0, 0.0, 0.0]])
    assert "1 atom\n" in atom.report(worked=False) + "\n"
    assert "(0 modes)" in atom.report(worked=False)
    assert site_analysis(atom).to_text().startswith("K_h: 1 atom in 1 orbit")
    assert ", 1 atom," in repr(atom)
    assert "2 atoms in 1 orbit\n" in site_analysis(res).to_text()


def test_core_messages_write_distances_plainly():
    # rust/error.rs writes its distances by the same rule as format_length
    with pytest.raises(gt.StructureError) as err:
        gt.analyze(["O", "O"], [[0.0, 0.0, 0.0], [0.0, 0.0, 0.005]])
    assert "are 0.005 Å apart, within the tolerance 0.01 Å" in str(err.value)
    with pytest.raises(gt.StructureError) as err:
        gt.analyze(["O", "O"], [[0.0, 0.0, 0.0], [0.0, 0.0, 1.524]], tol=2.0)
    assert "are 1.524 Å apart" in str(err.value) and "e0" not in str(err.value)
