#!/usr/bin/env bash
# Regenerate tests/reference: ngspice's AC answer for every rail of every sample board and test network,
# 1 kHz to 1 GHz at 20 points per decade, from the netlist `hushrail netlist` writes.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --quiet
bin=target/debug/hushrail
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
for board in sample_boards/*.json tests/networks/*.json; do
  stem=$(basename "$board" .json)
  for rail in $(python3 -c 'import json,sys; print("\n".join(r["name"] for r in json.load(open(sys.argv[1]))["rails"]))' "$board"); do
    "$bin" netlist "$board" --rail "$rail" --from 1k --to 1G --per-decade 20 --data out.txt -o "$work/net.cir"
    (cd "$work" && rm -f out.txt && ngspice -b net.cir >/dev/null 2>&1)
    cp "$work/out.txt" "tests/reference/${stem}__${rail}.txt"
    echo "tests/reference/${stem}__${rail}.txt"
  done
done
