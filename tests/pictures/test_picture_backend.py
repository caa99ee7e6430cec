"""Pictures without a display and without matplotlib: figures never go through pyplot, and a
missing matplotlib is a clear InputError from every drawing function."""

from __future__ import annotations

import os
import subprocess
import sys
import textwrap
from types import SimpleNamespace

import pytest
from _picture_structures import water
from gammatrace.errors import InputError
from gammatrace.pictures import (
    draw_ladder,
    draw_mode_spectrum,
    draw_stereogram,
    draw_symmetry,
    plot_group_counts,
)

STEP = SimpleNamespace(tolerance=0.1, point_group="C2v", order=4, error=None)
DRAWINGS = {
    "draw_symmetry": lambda: draw_symmetry(water()),
    "draw_stereogram": lambda: draw_stereogram(water()),
    "draw_ladder": lambda: draw_ladder(SimpleNamespace(steps=[STEP])),
    "draw_mode_spectrum": lambda: draw_mode_spectrum([1600.0], ["A1"], table="C2v"),
    "plot_group_counts": lambda: plot_group_counts({"C2v": 1}),
}


@pytest.mark.parametrize("name", sorted(DRAWINGS))
def test_missing_matplotlib_is_an_input_error(name, monkeypatch):
    # an entry of None in sys.modules makes `import matplotlib.figure` raise ImportError,
    # as when matplotlib is not installed
    monkeypatch.setitem(sys.modules, "matplotlib.figure", None)
    with pytest.raises(InputError, match=r"pip install 'gammatrace\[plot\]'"):
        DRAWINGS[name]()


def test_pictures_need_no_display_and_never_load_pyplot(tmp_path):
    # an interactive backend asked for and no display: drawing and saving must not care
    script = textwrap.dedent(
        f"""
        import sys
        from types import SimpleNamespace
        import gammatrace as gt
        from gammatrace.pictures import draw_ladder, draw_stereogram, draw_symmetry
        res = gt.analyze(["O", "H", "H"], [[0, 0, 0.12], [0, 0.76, -0.47], [0, -0.76, -0.47]])
        draw_symmetry(res, {str(tmp_path / "a.png")!r})
        draw_stereogram(res, {str(tmp_path / "b.png")!r})
        step = SimpleNamespace(tolerance=0.1, point_group="C2v", order=4, error=None)
        draw_ladder(SimpleNamespace(steps=[step]), {str(tmp_path / "c.png")!r})
        assert "matplotlib.pyplot" not in sys.modules
        """
    )
    env = {k: v for k, v in os.environ.items() if k not in ("DISPLAY", "WAYLAND_DISPLAY")}
    env["MPLBACKEND"] = "TkAgg"
    done = subprocess.run(
        [sys.executable, "-c", script], env=env, capture_output=True, text=True, timeout=120
    )
    assert done.returncode == 0, done.stderr
    for name in "abc":
        data = (tmp_path / f"{name}.png").read_bytes()
        assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 5_000


def test_unwritable_path_is_an_input_error(tmp_path):
    with pytest.raises(InputError, match="cannot write"):
        draw_stereogram(water(), tmp_path / "no such folder" / "x.png")
