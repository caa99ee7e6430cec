#!/usr/bin/env bash
# The test command of README.md: install the package with its test extras, then run the
# Rust core's tests and the Python suite. Fails when any test fails.
set -euo pipefail
cd "$(dirname "$0")/.."
python3 -m pip install --quiet ".[test]"
cargo test --quiet
python3 -m pytest -q
