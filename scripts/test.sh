#!/usr/bin/env bash
# The test command of README.md: install the package with its test extras, check the lint
# gates, then run the Rust core's tests and the Python suite. Fails when any of them fails.
set -euo pipefail
cd "$(dirname "$0")/.."
python3 -m pip install --quiet ".[test]"
# lint gates (DEVELOPERS.md)
cargo fmt --check
cargo clippy --quiet --all-targets -- -D warnings
cargo clippy --quiet --features python -- -D warnings
python3 -m ruff check python tests benches fuzz
python3 -m ruff format --check python tests benches fuzz
# the Rust core's tests, then the Python suite
cargo test --quiet
python3 -m pytest -q
