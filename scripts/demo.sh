#!/usr/bin/env bash
# The main job on a small example of our own: enumerate and score every IPR cage from C60 to C84
# into a catalogue, list the best-ranked C84 candidates by graph descriptors, relax them with the
# tight-binding model, and export the lowest in energy for quantum chemistry.
set -euo pipefail
cd "$(dirname "$0")/.."
echo "building cagerank (release; a few minutes the first time)" >&2
cargo build --release
bin=target/release/cagerank
out=${1:-demo-output}
mkdir -p "$out"
"$bin" enumerate 60..84 --ipr --catalogue "$out/catalogue" --quiet
"$bin" query --catalogue "$out/catalogue" --atoms 84 --ipr --top 5
# Stage 2: relax the IPR C84 candidates with the tight-binding model; export then ranks by energy.
"$bin" screen --catalogue "$out/catalogue" --atoms 84 --ipr --top 5 --quiet
"$bin" export --catalogue "$out/catalogue" --atoms 84 --ipr --top 3 --format xyz,sdf,json --overwrite --out "$out/c84-shortlist"
"$bin" draw C84:IPR-22 --catalogue "$out/catalogue" -o "$out/c84-22.svg"
echo "wrote $out/ (catalogue with energies, C84 shortlist with XYZ/SDF/JSON, Schlegel drawing)"
