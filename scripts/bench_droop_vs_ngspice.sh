#!/usr/bin/env bash
# Time `hushrail droop` and ngspice .tran side by side, as whole processes, on the same network (rail VDDR of the
# sample edge-camera board), the same stimulus (the load step, its ramp and the band filter when the droop applies
# one), the same 4 µs window and the same output grid: `hushrail netlist --droop` writes ngspice's run with a print
# step of window/2000 (2001 points, its largest internal step the smaller of that and ramp/50), and `hushrail
# droop --points 2001 --csv` prints the same grid (plus each interval's lowest and highest point). Both outputs are
# written in full (ngspice with `.options interp`, so it writes the print grid rather than every internal point; its
# internal step stays as fine). `NO_BUILD=1` skips the release build (run it under the build lock first). Prints the two lowest voltages (they agree within 1 %, as tests/integration/droop.rs holds them),
# then the median wall time of RUNS runs of each, timed alike by scripts/time_commands.py, and the ratio.
set -euo pipefail
cd "$(dirname "$0")/.."
RUNS=${RUNS:-5}
board=sample_boards/edge_camera.json
rail=${RAIL:-VDDR}
window=4u
points=2001
[ -n "${NO_BUILD:-}" ] || cargo build --release --quiet
bin=${CARGO_TARGET_DIR:-target}/release/hushrail
case "$bin" in /*) ;; *) bin="$PWD/$bin" ;; esac
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
"$bin" netlist "$board" --rail "$rail" --droop --window "$window" --data out.txt -o "$work/net.cir"
# ngspice writes every internal time point unless told to interpolate onto the print grid: the same grid as ours.
sed -i 's/^\.tran /.options interp\n.tran /' "$work/net.cir"
"$bin" droop "$board" --rail "$rail" --window "$window" --points "$points" --csv > "$work/ours.csv" || true
(cd "$work" && ngspice -b net.cir > /dev/null 2>&1)
python3 - "$work/ours.csv" "$work/out.txt" <<'PY'
import sys
ours = [tuple(map(float, l.split(","))) for l in open(sys.argv[1]).read().split("\n")[1:] if l]
theirs = [tuple(map(float, l.split())) for l in open(sys.argv[2]).read().split("\n")[1:] if l.strip()]
lo_o, lo_t = min(ours, key=lambda r: r[1]), min(theirs, key=lambda r: r[1])
print(f"rows: hushrail {len(ours)}, ngspice {len(theirs)}")
print(f"lowest: hushrail {lo_o[1]:.6f} V at {lo_o[0]:.4e} s; ngspice {lo_t[1]:.6f} V at {lo_t[0]:.4e} s")
PY
cd "$work"
python3 "$OLDPWD/scripts/time_commands.py" "$RUNS" \
  "hushrail droop" "$bin droop $OLDPWD/$board --rail $rail --window $window --points $points --csv" \
  "ngspice .tran" "ngspice -b net.cir"
