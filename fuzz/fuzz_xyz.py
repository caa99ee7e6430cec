"""Fuzz the XYZ reader and the analysis of every frame it returns (atheris / libFuzzer).

Run from the repository root::

    python fuzz/fuzz_xyz.py fuzz/corpus/xyz tests/data/malformed -max_total_time=600

The first directory receives new interesting inputs; crashes are written as ``crash-*`` files
in the current directory (move them to tests/data/fuzz_regressions/, where
tests/test_fuzz.py replays them). ``-runs=N`` bounds the number of inputs instead of the time.
Only the Python layer is coverage-instrumented: the Rust core is fuzzed by mutation of the
seed corpus (see fuzz/RESULTS.md).
"""

from __future__ import annotations

import os
import sys

import atheris

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

with atheris.instrument_imports():
    from checks import check_xyz_input


def main() -> None:
    atheris.Setup(sys.argv, check_xyz_input)
    atheris.Fuzz()


if __name__ == "__main__":
    main()
