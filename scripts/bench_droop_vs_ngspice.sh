#!/usr/bin/env bash
# Time `hushrail droop` and ngspice .tran side by side, as whole processes, on the same network (rail VDDR of the
# sample edge-camera board), the same load step, the same 4 µs window and the same time step: hushrail prints
# every step of the waveform as CSV (--points = steps + 1), ngspice writes every step with wrdata (tmax = step).
# Prints the median wall time of RUNS runs of each, timed alike by scripts/time_commands.py, and the ratio.
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

"$bin" droop "$board" --rail "$rail" --window "$window" --points "$points" --csv > "$work/ours.csv" || true
(cd "$work" && ngspice -b net.cir > /dev/null 2>&1)
printf 'time step %s s; points: hushrail %d, ngspice %d\n' "$dt" "$(($(wc -l < "$work/ours.csv") - 1))" "$(($(wc -l < "$work/out.txt") - 1))"
cd "$work"
python3 "$OLDPWD/scripts/time_commands.py" "$RUNS" \
  "hushrail droop" "$OLDPWD/$bin droop $OLDPWD/$board --rail $rail --window $window --points $points --csv" \
  "ngspice .tran" "ngspice -b net.cir"
