"""Fuzzing in the test suite: replayed regressions, seed corpora, and short random runs.

The long runs use atheris (fuzz/fuzz_xyz.py, fuzz/fuzz_detect.py; how to run them and what they
found: fuzz/RESULTS.md). Here every crashing input kept under tests/data/fuzz_regressions/ and
every seed of fuzz/corpus/ is replayed through the same checks (fuzz/checks.py), hypothesis
throws random and grammar-built XYZ text at the reader, and a slow test runs atheris briefly.
"""

from __future__ import annotations

import glob
import os
import subprocess
import sys
from types import SimpleNamespace

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
FUZZ = os.path.join(ROOT, "fuzz")
sys.path.insert(0, FUZZ)

from checks import check_analysis, check_reader, check_xyz_input  # noqa: E402
from structures import structure_from_bytes  # noqa: E402

REGRESSIONS = os.path.join(ROOT, "tests", "data", "fuzz_regressions")
# seconds per atheris target in the slow test; set GAMMATRACE_FUZZ_SECONDS for longer runs
FUZZ_SECONDS = int(os.environ.get("GAMMATRACE_FUZZ_SECONDS", "10"))


def _files(pattern: str) -> list[str]:
    return sorted(glob.glob(pattern))


def _read(path: str) -> bytes:
    with open(path, "rb") as fh:
        return fh.read()


XYZ_INPUTS = _files(os.path.join(REGRESSIONS, "xyz", "*")) + _files(
    os.path.join(FUZZ, "corpus", "xyz", "*")
)
DETECT_INPUTS = _files(os.path.join(REGRESSIONS, "detect", "*")) + _files(
    os.path.join(FUZZ, "corpus", "detect", "*")
)


def test_there_are_inputs_to_replay():
    assert len(XYZ_INPUTS) >= 5 and len(DETECT_INPUTS) >= 5


@pytest.mark.parametrize("path", XYZ_INPUTS, ids=os.path.basename)
def test_replay_xyz_input(path):
    check_xyz_input(_read(path))


@pytest.mark.parametrize("path", DETECT_INPUTS, ids=os.path.basename)
def test_replay_detect_input(path):
    made = structure_from_bytes(_read(path))
    assert made is not None
    check_analysis(*made)


fuzz_settings = settings(suppress_health_check=[HealthCheck.too_slow], deadline=None)


@fuzz_settings
@given(st.binary(max_size=2048))
def test_random_bytes_never_crash_the_reader(data):
    check_xyz_input(data)


ELEMENTS = ["H", "C", "N", "O", "F", "Cl", "Fe", "Xe", "Qq", "6", "0", "", "Ö"]
NUMBERS = [
    "0.0",
    "1.5",
    "-2.25",
    "1e-3",
    "1.0D+02",
    "nan",
    "inf",
    "-Infinity",
    "1e400",
    "1e300",
    "x",
    "",
    "0,5",
    "3.",
    ".5",
    "+7",
    "1e",
]


@st.composite
def xyz_documents(draw):
    """XYZ-like text: frames whose count, comment and atom lines may each be wrong."""
    out = []
    for _ in range(draw(st.integers(0, 4))):
        n = draw(st.integers(0, 5))
        count = draw(st.sampled_from([str(n), str(n + 1), str(max(n - 1, 0)), "-1", "x", ""]))
        out.append(count)
        out.append(draw(st.sampled_from(["", "comment", "Properties=species:S:1:pos:R:3", 'a="b'])))
        for _ in range(n):
            parts = [draw(st.sampled_from(ELEMENTS))]
            parts += [draw(st.sampled_from(NUMBERS)) for _ in range(draw(st.integers(2, 4)))]
            out.append(draw(st.sampled_from([" ", "\t", "  "])).join(parts))
        if draw(st.booleans()):
            out.append("")
    end = draw(st.sampled_from(["\n", "\r\n"]))
    text = end.join(out) + draw(st.sampled_from(["", end]))
    return text.encode("utf-8")


@fuzz_settings
@given(xyz_documents())
def test_grammar_built_documents_never_crash(data):
    check_xyz_input(data)


@fuzz_settings
@given(st.binary(min_size=4, max_size=256))
def test_structures_from_random_bytes_never_crash_detection(data):
    made = structure_from_bytes(data)
    if made is None:
        assert len(data) < 10
        return
    check_analysis(*made)


def test_reader_check_rejects_a_bad_frame_that_kept_atoms(monkeypatch):
    # the check itself must be able to fail: a frame marked bad must hold no atoms
    import checks

    good = checks._core.read_xyz_bytes(b"1\nx\nH 0 0 0\n", "<fuzz>")
    assert good.errors == [None]
    fields = ("positions", "numbers", "masses", "offsets", "comments", "info")
    broken = SimpleNamespace(
        **{k: getattr(good, k) for k in fields},
        errors=[("ReadError", "line 3 of <fuzz> (frame 0): made up")],
    )
    monkeypatch.setattr(checks._core, "read_xyz_bytes", lambda data, source: broken)
    with pytest.raises(AssertionError, match="no atoms"):
        check_reader(b"1\nx\nH 0 0 0\n")


@pytest.mark.slow
@pytest.mark.parametrize(
    "target, corpus",
    [
        ("fuzz_xyz.py", ["corpus/xyz", "../tests/data/malformed"]),
        ("fuzz_detect.py", ["corpus/detect"]),
    ],
)
def test_short_atheris_run_finds_no_crash(target, corpus, tmp_path):
    pytest.importorskip("atheris")
    work = tmp_path / "corpus"
    work.mkdir()
    env = dict(os.environ)
    proc = subprocess.run(
        [
            sys.executable,
            os.path.join(FUZZ, target),
            str(work),
            *[os.path.join(FUZZ, c) for c in corpus],
            f"-max_total_time={FUZZ_SECONDS}",
            "-max_len=4096",
            f"-artifact_prefix={tmp_path}/",
        ],
        cwd=FUZZ,
        env=env,
        capture_output=True,
        text=True,
        timeout=FUZZ_SECONDS + 120,
    )
    crashes = list(tmp_path.glob("crash-*")) + list(tmp_path.glob("oom-*"))
    assert proc.returncode == 0 and not crashes, proc.stderr[-3000:]
