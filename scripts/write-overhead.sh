#!/usr/bin/env bash
# What writing a catalogue adds to an enumeration with scoring: N pairs (default 10) of
# `enumerate SIZE` (default 60) with and without `--catalogue` (a fresh directory each time),
# alternating which runs first so that a drifting machine load does not favour one side.
# Prints wall and CPU (user + sys) medians and the change. Run after `cargo build --release`.
set -euo pipefail
cd "$(dirname "$0")/.."
size="${1:-60}"
pairs="${2:-10}"
bin=target/release/cagerank
log=$(mktemp)
work=$(mktemp -d)
uptime
for i in $(seq 1 "$pairs"); do
  if [ $((i % 2)) -eq 0 ]; then order="plain cat"; else order="cat plain"; fi
  for mode in $order; do
    if [ "$mode" = plain ]; then
      /usr/bin/time -f "plain %e %U %S" -a -o "$log" "$bin" enumerate "$size" --quiet --threads 2 >/dev/null
    else
      /usr/bin/time -f "cat %e %U %S" -a -o "$log" "$bin" enumerate "$size" --quiet --threads 2 --catalogue "$work/$i" >/dev/null
      rm -rf "${work:?}/$i"
    fi
  done
done
uptime
python3 - "$log" <<'PY'
import statistics as st, sys
rows = [l.split() for l in open(sys.argv[1])]
def med(mode, f):
    return st.median(f(r) for r in rows if r[0] == mode)
for name, f in [("wall", lambda r: float(r[1])), ("cpu", lambda r: float(r[2]) + float(r[3]))]:
    p, c = med("plain", f), med("cat", f)
    print(f"median {name}: without {p:.2f} s, with --catalogue {c:.2f} s ({100 * (c / p - 1):+.1f} %)")
PY
rm -rf "$log" "$work"
