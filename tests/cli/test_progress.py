"""The one progress helper: shown only when someone watches, silent otherwise."""

from __future__ import annotations

import sys

import numpy as np
from gammatrace._progress import progress
from gammatrace.batch import analyze_batch


def test_no_bar_unless_standard_error_is_a_terminal(capsys):
    # under pytest standard error is captured, not a terminal: no bar, nothing written
    with progress(10) as bar:
        bar.update(10)
        assert not bar.shown
    assert capsys.readouterr().err == ""


def test_bar_when_asked_and_tqdm_is_there(capsys):
    with progress(4, unit="frame", enabled=True) as bar:
        assert bar.shown
        bar.update(4)
    err = capsys.readouterr().err
    assert "4/4" in err and "frame" in err


def test_no_tqdm_means_no_bar(monkeypatch):
    monkeypatch.setitem(sys.modules, "tqdm", None)  # import tqdm now raises ImportError
    with progress(3, enabled=True) as bar:
        assert not bar.shown
        bar.update(3)  # still fine to call


def test_batch_progress_callback_counts_every_structure():
    seen = []
    rows = [(["O", "H", "H"], np.array([[0, 0, 0.12], [0, 0.76, -0.47], [0, -0.76, -0.47]]))] * 7
    analyze_batch(rows, chunk_size=3, progress=seen.append, output="dict")
    assert seen == [3, 3, 1]
