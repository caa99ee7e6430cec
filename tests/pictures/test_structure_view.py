"""The 3D view: one labelled element per class, the element and atom legends, C2'/C2'' and
σv/σd told apart, the central atom over the inversion mark, and all elements on request."""

from __future__ import annotations

import gammatrace as gt
import numpy as np
import pytest
from _picture_structures import (
    benzene,
    carbon_dioxide,
    group_structure,
    one_atom,
    sulfur_hexafluoride,
    water,
)
from gammatrace.errors import InputError
from gammatrace.io.builders import c60
from gammatrace.pictures import draw_symmetry, representative_elements
from matplotlib.figure import Figure


def _labels(fig):
    ax = fig.axes[0]
    return [t for t in ax.texts if (t.get_gid() or "").startswith("element:")]


def _legend(fig, gid):
    (leg,) = [lg for lg in fig.legends if lg.get_gid() == gid]
    return [t.get_text() for t in leg.get_texts()]


def _gids(fig, prefix):
    ax = fig.axes[0]
    return [a for a in [*ax.lines, *ax.collections] if (a.get_gid() or "").startswith(prefix)]


@pytest.mark.parametrize("group", ["C2v", "C3v", "D6h", "D2d", "Td", "Oh", "Ih", "S6", "Ci"])
def test_one_label_per_representative_covers_every_class(group):
    res = group_structure(group)
    fig = draw_symmetry(res)
    assert isinstance(fig, Figure)
    labels = _labels(fig)
    reps = representative_elements(res)
    assert len(labels) == len(reps)
    printed = sorted(lab for t in labels for lab in t.get_text().split(", "))
    assert printed == sorted(c.label for c in res.symmetry.classes if c.label != "E")
    assert len(_legend(fig, "element-legend")) == len(reps)


def test_c60_view_draws_three_axes_and_one_plane():
    fig = draw_symmetry(gt.analyze(c60()))
    assert len(_gids(fig, "axis:")) == 3
    assert len(_gids(fig, "plane:")) == 1
    assert [t.get_text() for t in _labels(fig)] == [
        "12C5, 12C5^2, 12S10, 12S10^3",
        "20C3, 20S6",
        "15C2",
        "15σ",
        "i",
    ]
    assert _legend(fig, "atom-legend") == ["C × 60"]


def test_c60_all_elements_draws_31_axes_and_15_planes():
    # Ih: 6 + 10 + 15 rotation axes and 15 mirror planes (common practice)
    fig = draw_symmetry(gt.analyze(c60()), elements="all")
    assert len(_gids(fig, "axis:")) + len(_gids(fig, "other-axis:")) == 31
    assert len(_gids(fig, "plane:")) + len(_gids(fig, "other-plane:")) == 15
    assert len(_labels(fig)) == 5  # still one label per representative


def test_benzene_tells_c2_prime_from_double_prime_and_sigma_v_from_sigma_d():
    fig = draw_symmetry(benzene())
    (c2p,) = [a for a in _gids(fig, "axis:") if a.get_gid() == "axis:3C2'"]
    (c2pp,) = [a for a in _gids(fig, "axis:") if a.get_gid() == "axis:3C2''"]
    assert c2p.get_color() != c2pp.get_color()
    assert c2p.get_linestyle() != c2pp.get_linestyle()
    (sv,) = _gids(fig, "plane:3σv")
    (sd,) = _gids(fig, "plane:3σd")
    assert not np.allclose(sv.get_edgecolor(), sd.get_edgecolor())
    assert sorted(_legend(fig, "atom-legend")) == ["C × 6", "H × 6"]


def test_central_atom_is_drawn_over_the_inversion_mark_and_the_elements():
    fig = draw_symmetry(sulfur_hexafluoride())
    ax = fig.axes[0]
    assert ax.computed_zorder is False  # the zorder below decides, not the depth
    (atoms,) = _gids(fig, "atoms")
    elements = _gids(fig, "axis:") + _gids(fig, "plane:")
    assert all(atoms.get_zorder() > e.get_zorder() for e in elements)
    (mark,) = _gids(fig, "inversion")
    assert mark.get_zorder() > atoms.get_zorder()
    centre = int(np.argmin(np.linalg.norm(sulfur_hexafluoride().symmetry.positions, axis=1)))
    assert mark.get_sizes()[0] < 0.25 * atoms.get_sizes()[centre]  # a ring inside the atom
    assert _legend(fig, "atom-legend") == ["F × 6", "S × 1"]


def test_linear_molecule_view_shows_no_finite_stand_in():
    fig = draw_symmetry(carbon_dioxide())
    texts = [t.get_text() for t in fig.texts] + [t.get_text() for t in fig.axes[0].texts]
    texts += _legend(fig, "element-legend")
    assert "C∞, S∞" in texts
    assert not any("13" in t or "C13" in t or "D13" in t for t in texts)
    assert any("infinitely many" in t for t in _legend(fig, "element-legend"))


def test_single_atom_is_drawn_with_its_centre():
    fig = draw_symmetry(one_atom())
    assert [t.get_text() for t in _labels(fig)] == ["i"]
    (title,) = fig.findobj(lambda a: a.get_gid() == "title")
    assert title.get_text().startswith("K_h")


def test_water_picture_is_written(tmp_path):
    path = tmp_path / "water.png"
    fig = draw_symmetry(water(), path)
    assert isinstance(fig, Figure)
    data = path.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 10_000


def test_unknown_element_choice_is_refused():
    with pytest.raises(InputError, match="elements"):
        draw_symmetry(water(), elements="some")
