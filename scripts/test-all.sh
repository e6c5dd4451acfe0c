#!/usr/bin/env bash
# The whole test suite, in the order CI runs it (.ci/run calls this script and nothing else):
# the Rust suite first; later stages (the SLURM cluster test, the Python package) are added
# below as they land, each installing what it needs from inside the repo.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo test --release

# A real one-host SLURM cluster (installs slurm-wlm and munge if missing) runs the shipped job
# scripts for all C60 in 4 tasks and checks the merged bytes, also after a task is rerun, and
# all C82 in 2 tasks stopped by scancel and kill -9, resubmitted, merged to the same bytes.
bash scripts/slurm/test-cluster.sh

# The Python package in a fresh virtual environment (installs python3-venv if missing).
python/test.sh
