#!/usr/bin/env bash
# Time `hushrail sweep` and ngspice side by side, as whole processes, on the same network (the ten-group rail of
# tests/networks/ten_groups.json) and the same 10 003 log-spaced frequencies from 1 kHz to 1 GHz
# (1 667 per decade: ngspice's `.ac dec 1667 1k 1G` and `hushrail sweep --points 10003` give the same grid).
# Both write every point with full precision to a file. Prints the median of RUNS runs of each and the ratio.
set -euo pipefail
cd "$(dirname "$0")/.."
RUNS=${RUNS:-7}
board=tests/networks/ten_groups.json
rail=R10
cargo build --release --quiet
bin=target/release/hushrail
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
"$bin" netlist "$board" --rail "$rail" --from 1k --to 1G --per-decade 1667 --data out.txt -o "$work/net.cir"

median() { sort -n | awk '{a[NR]=$1} END {print (NR%2) ? a[(NR+1)/2] : (a[NR/2]+a[NR/2+1])/2}'; }
now() { date +%s.%N; }

ours=(); theirs=()
for _ in $(seq "$RUNS"); do
  t0=$(now); "$bin" sweep "$board" --rail "$rail" --from 1k --to 1G --points 10003 > "$work/ours.csv"; t1=$(now)
  ours+=("$(awk -v a="$t1" -v b="$t0" 'BEGIN {print a - b}')")
  t0=$(now); (cd "$work" && ngspice -b net.cir > /dev/null 2>&1); t1=$(now)
  theirs+=("$(awk -v a="$t1" -v b="$t0" 'BEGIN {print a - b}')")
done
rows_ours=$(($(wc -l < "$work/ours.csv") - 1))
rows_theirs=$(($(wc -l < "$work/out.txt") - 1))
m_ours=$(printf '%s\n' "${ours[@]}" | median)
m_theirs=$(printf '%s\n' "${theirs[@]}" | median)
printf 'points: hushrail %d, ngspice %d\n' "$rows_ours" "$rows_theirs"
awk -v o="$m_ours" -v t="$m_theirs" -v n="$RUNS" 'BEGIN {
  printf "hushrail sweep: median %.2f ms over %d runs\n", o * 1000, n
  printf "ngspice -b    : median %.2f ms over %d runs\n", t * 1000, n
  printf "ratio (ngspice / hushrail): %.1f\n", t / o
}'
