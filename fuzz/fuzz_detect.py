"""Fuzz point-group detection with structures made from fuzz bytes (atheris / libFuzzer).

Each input becomes a structure: either orbits of a few seed points under a group's canonical
operations (a symmetric structure, optionally shaken by noise) or free atoms; the tolerance
comes from the input too. Run from the repository root::

    python fuzz/fuzz_detect.py fuzz/corpus/detect -max_total_time=600
"""

from __future__ import annotations

import os
import sys

import atheris

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

with atheris.instrument_imports():
    from checks import check_analysis
    from structures import structure_from_bytes


def one_input(data: bytes) -> None:
    made = structure_from_bytes(data)
    if made is not None:
        numbers, positions, tol = made
        check_analysis(numbers, positions, tol)


def main() -> None:
    atheris.Setup(sys.argv, one_input)
    atheris.Fuzz()


if __name__ == "__main__":
    main()
