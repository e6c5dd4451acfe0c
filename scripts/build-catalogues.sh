#!/usr/bin/env bash
# Rebuilds the shipped catalogue in catalogues/: every isomer from C20 to C84 and every IPR
# isomer from C60 to C100, fully scored, with tight-binding energies of the IPR cages. Resumable: if interrupted, run it again.
# Requires `cagerank enumerate ... --catalogue DIR` (the enumerate command writing catalogues).
# Existing files of the same runs count as finished whatever format wrote them: after a format
# or schema change, delete catalogues/*.cgr first so that every file is rewritten.
set -euo pipefail
cd "$(dirname "$0")/.."
out="${1:-catalogues}"
cargo build --release --bin cagerank
bin=target/release/cagerank
"$bin" enumerate 20..84 --catalogue "$out"
"$bin" enumerate 60..100 --ipr --catalogue "$out"
# Tight-binding energies of every IPR cage C60-C100 (the screen's results, stored beside the
# data files), so that export and query --rank-by relative_energy_kj rank by energy out of the box.
for n in $(seq 60 2 100); do
  "$bin" screen --atoms "$n" --ipr --all --catalogue "$out" --quiet --top 1 >/dev/null
done
"$bin" verify "$out"
"$bin" stats --catalogue "$out" | head -n 40
