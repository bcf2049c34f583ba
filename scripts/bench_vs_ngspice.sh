#!/usr/bin/env bash
# Time `hushrail sweep` and ngspice side by side, as whole processes, on the same network (the ten-group rail of
# tests/networks/ten_groups.json) and the same 10 003 log-spaced frequencies from 1 kHz to 1 GHz
# (1 667 per decade: ngspice's `.ac dec 1667 1k 1G` and `hushrail sweep --points 10003` give the same grid).
# Both format every point with full precision (hushrail to stdout, ngspice to its data file). Prints the median
# wall time of RUNS runs of each, timed alike by scripts/time_commands.py, and the ratio.
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

rows_ours=$(($("$bin" sweep "$board" --rail "$rail" --from 1k --to 1G --points 10003 | wc -l) - 1))
(cd "$work" && ngspice -b net.cir > /dev/null 2>&1)
rows_theirs=$(($(wc -l < "$work/out.txt") - 1))
printf 'points: hushrail %d, ngspice %d\n' "$rows_ours" "$rows_theirs"
# ngspice writes its data file into its working folder: run it there by absolute path.
cd "$work"
python3 "$OLDPWD/scripts/time_commands.py" "$RUNS" \
  "hushrail sweep" "$OLDPWD/$bin sweep $OLDPWD/$board --rail $rail --from 1k --to 1G --points 10003" \
  "ngspice -b" "ngspice -b net.cir"
