#!/usr/bin/env bash
# Python against the CLI on a full scoring run of IPR C100 (450 isomers, OEIS A046880): the
# same enumeration and descriptors, once as `cagerank enumerate 100 --ipr --json` and once as
# `list(cagerank.isomers(100, ipr=True, score=True))`, each timed by /usr/bin/time, best of
# RUNS (default 3). Usage, with the package installed in the Python given as PYTHON:
#   PYTHON=/path/to/venv/bin/python python/bench.sh
set -euo pipefail
cd "$(dirname "$0")/.."
python=${PYTHON:-python3}
runs=${RUNS:-3}
cargo build --release --quiet --bin cagerank
cli=target/release/cagerank
best() { sort -n | head -1; }
cli_times=() py_times=()
for _ in $(seq "$runs"); do
    cli_times+=("$( { /usr/bin/time -f '%e %U %S' "$cli" enumerate 100 --ipr --json --quiet >/dev/null; } 2>&1 | tail -1)")
    py_times+=("$( { /usr/bin/time -f '%e %U %S' "$python" -c \
        'import cagerank; rows = list(cagerank.isomers(100, ipr=True, score=True)); assert len(rows) == 450' ; } 2>&1 | tail -1)")
done
echo "wall user sys (s), best of $runs by wall time"
printf 'CLI:    %s\n' "$(printf '%s\n' "${cli_times[@]}" | best)"
printf 'Python: %s\n' "$(printf '%s\n' "${py_times[@]}" | best)"
