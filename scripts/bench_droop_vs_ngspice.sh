#!/usr/bin/env bash
# Time `hushrail droop` and ngspice .tran side by side, as whole processes, on the same network (rail VDDR of the
# sample edge-camera board), the same load step, the same 4 µs window and the same time step: hushrail prints
# every step of the waveform as CSV (--points = steps + 1), ngspice writes every step with wrdata (tmax = step).
# Prints the median of RUNS runs of each and the ratio.
set -euo pipefail
cd "$(dirname "$0")/.."
RUNS=${RUNS:-5}
board=sample_boards/edge_camera.json
rail=VDDR
window=4u
cargo build --release --quiet
bin=target/release/hushrail
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
"$bin" netlist "$board" --rail "$rail" --droop --window "$window" --data out.txt -o "$work/net.cir"
dt=$({ "$bin" droop "$board" --rail "$rail" --window "$window" --json || true; } | python3 -c 'import json,sys; print(json.load(sys.stdin)["dt_s"])')
points=$(python3 -c "print(round(4e-6 / $dt) + 1)")

median() { sort -n | awk '{a[NR]=$1} END {print (NR%2) ? a[(NR+1)/2] : (a[NR/2]+a[NR/2+1])/2}'; }
now() { date +%s.%N; }
elapsed() { awk -v a="$1" -v b="$2" 'BEGIN {print a - b}'; }

ours=(); theirs=()
for _ in $(seq "$RUNS"); do
  t0=$(now); "$bin" droop "$board" --rail "$rail" --window "$window" --points "$points" --csv > "$work/ours.csv" || true; t1=$(now)
  ours+=("$(elapsed "$t1" "$t0")")
  t0=$(now); (cd "$work" && ngspice -b net.cir > /dev/null 2>&1); t1=$(now)
  theirs+=("$(elapsed "$t1" "$t0")")
done
printf 'time step %s s; points: hushrail %d, ngspice %d\n' "$dt" "$(($(wc -l < "$work/ours.csv") - 1))" "$(($(wc -l < "$work/out.txt") - 1))"
m_ours=$(printf '%s\n' "${ours[@]}" | median)
m_theirs=$(printf '%s\n' "${theirs[@]}" | median)
awk -v o="$m_ours" -v t="$m_theirs" -v n="$RUNS" 'BEGIN {
  printf "hushrail droop: median %.1f ms over %d runs\n", o * 1000, n
  printf "ngspice .tran : median %.1f ms over %d runs\n", t * 1000, n
  printf "ratio (ngspice / hushrail): %.1f\n", t / o
}'
