#!/usr/bin/env bash
# Side-by-side cost of the Hückel gap and exact Kekulé count: cagerank (Rust) against an
# independent numpy + networkx reference, on the same first 1,000 C100 isomers in spiral order.
# Not run by CI. Needs python3 with numpy and networkx (pip install numpy networkx).
#
#   scripts/peer-compare.sh            # prints both per-isomer figures
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
# The first 1,000 isomers, as "ATOMS: p1 ... p12" lines for the Python reference.
target/release/cagerank enumerate 100 --json --quiet --threads 2 | head -n 1000 |
    python3 -c 'import json, sys
for line in sys.stdin:
    r = json.loads(line)
    print(str(r["atoms"]) + ": " + " ".join(map(str, r["spiral"])))' >"$work/spirals.txt"
echo "python reference (numpy $(python3 -c 'import numpy; print(numpy.__version__)'), networkx $(python3 -c 'import networkx; print(networkx.__version__)')):"
python3 scripts/reference_huckel_kekule.py --spirals "$work/spirals.txt" >"$work/reference.jsonl"
echo "cagerank (criterion, per 1,000 isomers; divide by 1,000 for per isomer):"
cargo bench -p cagerank-benches --bench score -- "first 1000 C100 isomers/Hückel" 2>&1 | grep -E "time:|thrpt:" || true
