#!/usr/bin/env bash
# The whole test suite, in the order CI runs it (.ci/run calls this script and nothing else):
# the Rust suite first; later stages (the SLURM cluster test, the Python package) are added
# below as they land, each installing what it needs from inside the repo.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo test --release
python/test.sh
