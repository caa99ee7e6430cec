#!/usr/bin/env bash
# Run the benchmark suite (Python workloads + baselines, Rust lookup kernel) and write
# BENCHMARKS.md, benches/results/<stamp>*.json and benches/results/scaling.png.
# Needs a release build of the package: pip install -e ".[bench]"
# Extra arguments go to pytest, e.g.: bash scripts/bench.sh -- -k "1e3 or 1e4"
set -euo pipefail
cd "$(dirname "$0")/.."
exec python -m benches.report "$@"
