"""Shared set-up of the benchmark suite: dependency check, markers, machine information.

Run with ``pytest benches/ --benchmark-json=FILE`` (or ``bash scripts/bench.sh``, which also
writes BENCHMARKS.md). Plain ``pytest`` never collects this directory (testpaths = tests).
"""

from __future__ import annotations

import importlib
import os
import platform
import subprocess
from pathlib import Path

import pytest

_NEEDED = {
    "pytest_benchmark": "pytest-benchmark",
    "scipy": "scipy",
    "pandas": "pandas",
}
_missing = []
for _module, _package in _NEEDED.items():
    try:
        importlib.import_module(_module)
    except ImportError:
        _missing.append(_package)
if _missing:
    raise pytest.UsageError(
        f"the benchmark suite needs {', '.join(_missing)}: pip install -e '.[bench]'"
    )


def load_average() -> list:
    """1-, 5- and 15-minute load averages (the machine is shared: recorded with every run)."""
    try:
        return [round(x, 2) for x in os.getloadavg()]
    except OSError:
        return []


def note(benchmark, **info) -> None:
    """Attach facts (sizes, throughput, load average) to a benchmark's JSON record."""
    benchmark.extra_info.update(info)
    benchmark.extra_info["loadavg"] = load_average()


_LOAD_AT_START: list = []


def pytest_sessionstart(session):
    _LOAD_AT_START[:] = load_average()


def pytest_configure(config):
    config.addinivalue_line(
        "markers", "headline: the workloads re-run when the machine was busy (scripts/bench.sh)"
    )
    config.addinivalue_line(
        "markers", "big: the 10⁶-atom workloads (-m 'not big' for a quick run without them)"
    )


def _git(path: Path, *args: str) -> str:
    try:
        out = subprocess.run(
            ["git", "-C", str(path), *args], check=False, capture_output=True, text=True, timeout=10
        )
        return out.stdout.strip()
    except (OSError, subprocess.SubprocessError):
        return ""


def _cpu_model() -> str:
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return platform.processor()


def _mem_total_kb() -> int:
    try:
        for line in Path("/proc/meminfo").read_text().splitlines():
            if line.startswith("MemTotal:"):
                return int(line.split()[1])
    except OSError:
        pass
    return 0


def pytest_benchmark_update_machine_info(config, machine_info):
    import gammatrace
    import numpy
    import pandas
    import scipy

    pkg = Path(gammatrace.__file__).resolve().parent
    machine_info.update(
        {
            "cpu_model": _cpu_model(),
            "n_cores": os.cpu_count(),
            "mem_total_kb": _mem_total_kb(),
            "loadavg_at_start": list(_LOAD_AT_START),
            "versions": {
                "gammatrace": gammatrace.__version__,
                "numpy": numpy.__version__,
                "scipy": scipy.__version__,
                "pandas": pandas.__version__,
            },
            "gammatrace_path": str(pkg),
            # a build from an exported tree has no git: its commit is given in the environment
            "gammatrace_commit": _git(pkg, "rev-parse", "HEAD")
            or os.environ.get("GAMMATRACE_COMMIT", "unknown"),
            "gammatrace_dirty": bool(_git(pkg, "status", "--porcelain", "--", ".")),
        }
    )


def pytest_benchmark_update_json(config, benchmarks, output_json):
    output_json["loadavg_at_end"] = load_average()
    # --benchmark-json always writes every round's time (stats.data): megabytes for the
    # microbenchmarks, and the report reads only the summary statistics
    for b in output_json.get("benchmarks", []):
        b.get("stats", {}).pop("data", None)
