"""Charts: the distortion ladder (group order against tolerance), the mode spectrum from plain
arrays, and the batch's point-group counts."""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pytest
from gammatrace.descent import distortion_ladder
from gammatrace.errors import InputError
from gammatrace.io import Structure
from gammatrace.io.builders import c60
from gammatrace.pictures import draw_ladder, draw_mode_spectrum, plot_group_counts
from matplotlib.figure import Figure

GOLDEN = (1.0 + np.sqrt(5.0)) / 2.0


def _by_gid(ax, prefix):
    return [
        a for a in [*ax.lines, *ax.collections, *ax.texts] if (a.get_gid() or "").startswith(prefix)
    ]


def _exact(ax, gid):
    return [a for a in [*ax.lines, *ax.collections] if a.get_gid() == gid]


def test_ladder_of_c60_stretched_along_c5_shows_d5d_then_ih():
    # a stretch along a C5 axis keeps D5d (common practice); Ih returns once the tolerance
    # covers the stretch
    s = c60()
    x = s.positions - s.positions.mean(axis=0)
    a = np.array([0.0, 1.0, GOLDEN]) / np.linalg.norm([0.0, 1.0, GOLDEN])
    pos = x + 0.006 * np.outer(x @ a, a)
    ladder = distortion_ladder(Structure(s.numbers, pos, "<stretched>"), [1e-4, 1e-3, 0.1, 0.5])
    fig = draw_ladder(ladder)
    assert isinstance(fig, Figure)
    ax = fig.axes[0]
    (line,) = _by_gid(ax, "ladder")
    assert list(line.get_xdata()) == [1e-4, 1e-3, 0.1, 0.5]
    assert list(line.get_ydata()) == [20, 20, 120, 120]
    assert [t.get_text() for t in _by_gid(ax, "group:")] == ["D5d", "Ih"]
    assert ax.get_yscale() == "log" and ax.get_xscale() == "log"
    assert _by_gid(ax, "failed") == []


def test_ladder_marks_failed_steps_and_infinite_groups():
    # two H atoms 0.3 Å apart overlap at a tolerance of 0.5 Å: that step fails
    s = Structure(np.array([1, 1]), np.array([[0.0, 0, 0], [0.3, 0, 0]]), "<H2>")
    fig = draw_ladder(distortion_ladder(s, [0.01, 0.05, 0.5]))
    ax = fig.axes[0]
    (failed,) = _by_gid(ax, "failed")
    assert list(failed.get_xdata()) == [0.5]
    assert [t.get_text() for t in _by_gid(ax, "group:")] == ["D∞h"]
    assert "∞" in [t.get_text() for t in ax.get_yticklabels()]


def test_ladder_reads_any_object_with_steps_and_refuses_an_empty_one():
    step = SimpleNamespace
    ladder = SimpleNamespace(
        steps=[step(tolerance=0.1, point_group="C2v", order=4, error=None)], source="x"
    )
    assert isinstance(draw_ladder(ladder), Figure)
    with pytest.raises(InputError, match="no steps"):
        draw_ladder(SimpleNamespace(steps=[]))


# Benzene's modes: 20 fundamentals, IR active A2u + E1u, Raman active A1g + E1g + E2g
# (common practice; Wilson, Decius & Cross, Molecular Vibrations, from memory). The
# wavenumbers are illustrative round numbers, not measured values.
BENZENE = [
    ("A1g", 993), ("A1g", 3062), ("A2g", 1350), ("B2g", 707), ("B2g", 990),
    ("E1g", 846), ("E2g", 606), ("E2g", 1178), ("E2g", 1601), ("E2g", 3047),
    ("A2u", 673), ("B1u", 1010), ("B1u", 3068), ("B2u", 1150), ("B2u", 1309),
    ("E1u", 1038), ("E1u", 1484), ("E1u", 3063), ("E2u", 398), ("E2u", 967),
]  # fmt: skip


def _benzene_modes():
    irreps, nu = [], []
    for label, w in BENZENE:
        for _ in range(2 if label.startswith("E") else 1):  # an E set lists both partners
            irreps.append(label)
            nu.append(float(w))
    return np.array(nu), irreps


def test_mode_spectrum_from_the_table_marks_ir_and_raman():
    nu, irreps = _benzene_modes()
    assert len(nu) == 30  # 3N - 6 for N = 12
    fig = draw_mode_spectrum(nu, irreps, table="D6h")
    ax = fig.axes[0]
    sticks = {c.get_gid(): c for c in _by_gid(ax, "irrep:")}
    assert sorted(sticks) == sorted(f"irrep:{lab}" for lab in {lab for lab, _ in BENZENE})
    heights = {gid: sorted(seg[1, 1] for seg in c.get_segments()) for gid, c in sticks.items()}
    assert heights["irrep:E1u"] == [2, 2, 2] and heights["irrep:A1g"] == [1, 1]
    (ir,) = _exact(ax, "ir")
    (raman,) = _exact(ax, "raman")
    assert len(ir.get_offsets()) == 1 + 3  # A2u, 3 E1u
    assert len(raman.get_offsets()) == 2 + 1 + 4  # 2 A1g, E1g, 4 E2g
    legend = [t.get_text() for t in fig.legends[0].get_texts()]
    # irreps in the order of the D6h table, then the activity marks
    assert legend[:4] == ["A1g", "A2g", "B2g", "E1g"] and "IR active" in legend


def test_mode_spectrum_takes_given_flags_and_dots_silent_modes():
    fig = draw_mode_spectrum(
        [1595.0, 3657.0, 3756.0], ["A1", "A1", "B2"], [True, True, False], [True, False, False]
    )
    ax = fig.axes[0]
    assert len(_exact(ax, "ir")[0].get_offsets()) == 2
    assert len(_exact(ax, "raman")[0].get_offsets()) == 1
    (b2,) = _by_gid(ax, "irrep:B2")
    (a1,) = _by_gid(ax, "irrep:A1")
    assert b2.get_linestyles()[0][1] is not None  # dotted: active in neither
    assert all(dashes is None for _, dashes in a1.get_linestyles())  # solid


def test_mode_spectrum_refuses_bad_input():
    with pytest.raises(InputError, match="irreps"):
        draw_mode_spectrum([100.0, 200.0], ["A1"], [True], [True])
    with pytest.raises(InputError, match="ir_active"):
        draw_mode_spectrum([100.0], ["A1"], [True, False], [True])
    with pytest.raises(InputError, match="not irreps of C2v"):
        draw_mode_spectrum([100.0], ["Eg"], table="C2v")
    with pytest.raises(InputError, match="table"):
        draw_mode_spectrum([100.0], ["A1"])


def test_imaginary_frequencies_are_drawn_negative():
    fig = draw_mode_spectrum([-120.0, 800.0], ["B1", "A1"], table="C2v")
    ax = fig.axes[0]
    assert ax.get_xlim()[0] < -120.0
    assert "imaginary" in ax.get_xlabel()


def test_group_counts_chart_has_one_bar_per_group(tmp_path):
    fig = plot_group_counts({"C2v": 3, "C1": 10, "D6h": 1}, tmp_path / "groups.png")
    ax = fig.axes[0]
    assert [p.get_height() for p in ax.patches] == [10, 3, 1]
    assert [t.get_text() for t in ax.get_xticklabels()] == ["C1", "C2v", "D6h"]
    assert (tmp_path / "groups.png").stat().st_size > 5_000
