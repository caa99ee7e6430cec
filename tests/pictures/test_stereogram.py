"""The stereogram: h general positions split between the hemispheres, the axis symbols and
mirror great circles where the crystallographic stereograms have them, the primitive circle
solid only with a horizontal mirror, and a clear refusal for the infinite groups."""

from __future__ import annotations

from collections import Counter

import numpy as np
import pytest
from _picture_structures import (
    carbon_dioxide,
    group_structure,
    hydrogen_cyanide,
    one_atom,
    water,
)
from gammatrace.errors import InputError
from gammatrace.pictures import draw_stereogram, general_position
from gammatrace.pictures.stereogram import project
from matplotlib.figure import Figure


def _by_gid(fig, prefix):
    ax = fig.axes[0]
    artists = [*ax.patches, *ax.lines, *ax.collections]
    return [a for a in artists if (a.get_gid() or "").startswith(prefix)]


def _points(fig, which):
    (coll,) = _by_gid(fig, f"general:{which}")
    return np.asarray(coll.get_offsets())


def _mirror_lines(fig):
    return Counter(a.get_gid() for a in _by_gid(fig, "mirror:"))


# Dots (upper) and open circles (lower) of the general position. Cs in the standard frame
# has its mirror horizontal (z = normal); C2v has z along C2 with vertical mirrors; Oh holds
# the inversion, which sends every upper point below (common practice of stereograms).
SPLITS = {"Cs": (1, 1), "C2v": (4, 0), "Oh": (24, 24), "C1": (1, 0), "Ci": (1, 1), "S4": (2, 2)}


@pytest.mark.parametrize("group", sorted(SPLITS))
def test_general_positions_split_between_hemispheres(group):
    fig = draw_stereogram(group_structure(group))
    assert isinstance(fig, Figure)
    upper, lower = _points(fig, "upper"), _points(fig, "lower")
    assert (len(upper), len(lower)) == SPLITS[group]
    assert np.all(np.hypot(*np.vstack([upper, lower]).T) < 1.0)


@pytest.mark.parametrize("group", ["C3", "C5v", "D4h", "D3d", "S8", "T", "Th", "I", "Ih"])
def test_general_position_has_h_distinct_points(group):
    res = group_structure(group)
    images = general_position(res)
    assert images.shape == (res.symmetry.order, 3)
    gaps = np.linalg.norm(images[:, None] - images[None], axis=2) + 10 * np.eye(len(images))
    assert gaps.min() > 0.05  # no two operations send the point to the same place
    fig = draw_stereogram(res)
    assert len(_points(fig, "upper")) + len(_points(fig, "lower")) == res.symmetry.order


def test_projection_sends_poles_to_centre_and_equator_to_primitive():
    xy, upper = project([[0, 0, 1], [0, 0, -1], [0, 1, 0], [1, 0, 1]])
    assert np.allclose(xy[:3], [[0, 0], [0, 0], [0, 1]])
    assert np.isclose(xy[3, 0], np.tan(np.radians(45.0) / 2))  # r = tan(θ/2), θ from z
    assert upper.tolist() == [True, False, False, True]


def test_oh_symbols_and_mirrors():
    # m-3m (International Tables Vol. A, stereogram of m-3m, from memory): 4/m at the centre
    # and at 4 points of the primitive; 3̄ at the 4 (111) poles; 2/m at the 4 inclined
    # (110) poles and 4 points of the primitive; 9 mirrors: the primitive, 4 diameters and
    # 4 arcs
    fig = draw_stereogram(group_structure("Oh"))
    symbols = Counter(a.get_gid() for a in _by_gid(fig, "axis:"))
    assert symbols == {"axis:4/m": 5, "axis:3̄": 4, "axis:2/m": 8}
    (primitive,) = _by_gid(fig, "primitive")
    assert primitive.get_linestyle() == "-"
    mirrors = _mirror_lines(fig)
    assert mirrors == {"mirror:3σh": 2, "mirror:6σd": 6}
    # a vertical plane's great circle passes through the centre (a diameter), an inclined
    # one's does not (an arc)
    through_centre = [
        line
        for line in _by_gid(fig, "mirror:")
        if np.min(np.hypot(*np.asarray(line.get_xydata()).T)) < 1e-9
    ]
    assert len(through_centre) == 4  # σ(xz), σ(yz) and the two vertical σd


def test_td_primitive_is_dashed_and_rotoinversion_is_drawn_in_an_open_square():
    # -43m: no horizontal mirror; 4̄ on x, y, z (International Tables Vol. A, from memory)
    fig = draw_stereogram(group_structure("Td"))
    (primitive,) = _by_gid(fig, "primitive")
    assert primitive.get_linestyle() != "-"
    assert _mirror_lines(fig) == {"mirror:6σd": 6}
    white_squares = [
        p
        for p in fig.axes[0].patches
        if len(getattr(p, "get_xy", lambda: [])()) == 5 and p.get_facecolor()[:3] == (1, 1, 1)
    ]
    assert len(white_squares) == 5  # the centre and four points of the primitive


def test_water_c2v_has_a_lens_and_two_mirror_diameters():
    fig = draw_stereogram(water())
    assert Counter(a.get_gid() for a in _by_gid(fig, "axis:")) == {"axis:2": 1}
    assert _mirror_lines(fig) == {"mirror:σv(xz)": 1, "mirror:σv'(yz)": 1}
    xz = next(a for a in _by_gid(fig, "mirror:σv(xz)"))
    assert np.allclose(np.asarray(xz.get_xydata())[:, 1], 0, atol=1e-9)  # the xz plane is y = 0


def test_legend_names_each_mirror_class_and_axis_kind():
    fig = draw_stereogram(group_structure("D6h"))
    texts = [t.get_text() for t in fig.legends[0].get_texts()]
    assert any(t.startswith("3σv") for t in texts) and any(t.startswith("3σd") for t in texts)
    assert any(t.startswith("2/m: 3C2'") for t in texts)
    assert any(t.startswith("2/m: 3C2''") for t in texts)
    assert any(t.startswith("6/m: 2C6") for t in texts)


@pytest.mark.parametrize(
    "make, name", [(carbon_dioxide, "D∞h"), (hydrogen_cyanide, "C∞v"), (one_atom, "K_h")]
)
def test_infinite_groups_are_refused_by_name(make, name):
    with pytest.raises(InputError, match=name):
        draw_stereogram(make())
