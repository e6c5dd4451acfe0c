#!/usr/bin/env bash
# The main job on a small example of our own: enumerate and score every IPR cage from C60 to C84
# into a catalogue, list the best-ranked C84 candidates, and export them for quantum chemistry.
set -euo pipefail
cd "$(dirname "$0")/.."
echo "building cagerank (release; a few minutes the first time)" >&2
cargo build --release
bin=target/release/cagerank
out=${1:-demo-output}
mkdir -p "$out"
"$bin" enumerate 60..84 --ipr --catalogue "$out/catalogue" --quiet
"$bin" query --catalogue "$out/catalogue" --atoms 84 --ipr --top 5
"$bin" export --catalogue "$out/catalogue" --atoms 84 --ipr --top 3 --format xyz,sdf,json --overwrite --out "$out/c84-shortlist"
"$bin" draw C84:23 --ipr -o "$out/c84-23.svg"
echo "wrote $out/ (catalogue, C84 shortlist with XYZ/SDF/JSON, Schlegel drawing)"
