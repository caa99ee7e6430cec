"""The per-structure path of ``gammatrace.analyze`` above the core's detection (issue 14, part 2).

Each group ``"analyze 30 atoms <group>"`` holds, from the same run, for one 30-atom molecule
(the Td, D3h and C2v parents of ``benches/workloads.py`` in a random orientation, and a C1
conformer):

- ``ours-analyze-to-dict``: ``gammatrace.analyze(symbols, positions).to_dict()`` from a list
  of element symbols and a float64 array (what a script or the command line does per
  structure: input checks, detection, table, representations, vibrations, the JSON object);
- ``ours-detection``: ``_core.find_point_group`` with the arguments ``analyze_structure``
  (python/gammatrace/analysis.py) passes, on the same structure.

The report shows the difference of the two medians (target: ≤ 60 µs).
"""

from __future__ import annotations

import gammatrace as gt
import pytest
from gammatrace import _core
from gammatrace.group import DEFAULT_TOL, VERIFY_ALL_LIMIT
from gammatrace.io import as_structure
from gammatrace.tables import LINEAR_SUBGROUP_N

from .conftest import note
from .workloads import TOL, molecule30

GROUPS = ("Td", "D3h", "C2v", "C1")


def _inputs(name: str):
    s = molecule30(name)
    return list(s.symbols), s.positions


@pytest.mark.parametrize("name", GROUPS)
def test_analyze_to_dict(benchmark, name):
    symbols, positions = _inputs(name)
    assert DEFAULT_TOL == TOL  # analyze is called with its default tolerance
    benchmark.group = f"analyze 30 atoms {name}"
    benchmark.name = "ours-analyze-to-dict"
    row = benchmark(lambda: gt.analyze(symbols, positions).to_dict())
    note(benchmark, kind="ours-analyze-to-dict", n_atoms=len(symbols), point_group=name)
    assert row["point_group"] == name
    assert row["n_atoms"] == 30
    assert row["vibrations"]["modes"] == 84


@pytest.mark.parametrize("name", GROUPS)
def test_detection(benchmark, name):
    symbols, positions = _inputs(name)
    s = as_structure(symbols, positions)  # as analyze does, outside the timed call
    benchmark.group = f"analyze 30 atoms {name}"
    benchmark.name = "ours-detection"

    def run():
        return _core.find_point_group(
            s.positions, s.numbers, TOL, LINEAR_SUBGROUP_N, VERIFY_ALL_LIMIT, s.masses
        )

    d = benchmark(run)
    note(benchmark, kind="ours-detection", n_atoms=s.n_atoms, point_group=name)
    assert d.point_group == name
