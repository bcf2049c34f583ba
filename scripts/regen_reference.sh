#!/usr/bin/env bash
# Regenerate tests/reference: ngspice's AC answer for every rail of every sample board and test network,
# 1 kHz to 1 GHz at 20 points per decade, from the netlist `hushrail netlist` writes. A placed rail (one with a
# plane_pair) is checked live on its mesh netlist (tests/integration/placed_ngspice.rs) and has no file here.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --quiet
bin=${CARGO_TARGET_DIR:-target}/debug/hushrail
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
# One line per rail: its name, and "die" when it gives a package (then the die view is written too).
rails() {
  python3 -c 'import json,sys
for r in json.load(open(sys.argv[1]))["rails"]:
    if "plane_pair" in r: continue
    print(r["name"], "die" if "package" in r else "")' "$1"
}
for board in sample_boards/*.json tests/networks/*.json; do
  stem=$(basename "$board" .json)
  while read -r rail die; do
    for view in board $die; do
      suffix=""; [ "$view" = die ] && suffix="__die"
      "$bin" netlist "$board" --rail "$rail" --view "$view" --from 1k --to 1G --per-decade 20 --data out.txt -o "$work/net.cir"
      (cd "$work" && rm -f out.txt && ngspice -b net.cir >/dev/null 2>&1)
      cp "$work/out.txt" "tests/reference/${stem}__${rail}${suffix}.txt"
      echo "tests/reference/${stem}__${rail}${suffix}.txt"
    done
  done < <(rails "$board")
done
