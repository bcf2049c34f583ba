#!/usr/bin/env bash
# Screenshots of the planner window under Xvfb (no screen needed), for looking at the window and for the README.
# Needs: xvfb x11-apps imagemagick xdotool mesa-vulkan-drivers libvulkan1 libgl1-mesa-dri libegl-mesa0.
# Usage: scripts/screenshots.sh [BINARY] [OUT_DIR]   (defaults: target/release/hushrail, /tmp/hushrail-shots)
# Writes sample.png (the built-in sample board), pin_finding.png (a pin, a changed count, a finding selected, the
# pointer over the curve), time_view.png (the voltage after a load step with the worst-case pattern) and
# suggest.png (suggested mixes pinned on the plot). Only the processes it starts are stopped, by their ids.
set -euo pipefail
bin=${1:-target/release/hushrail}
out=${2:-/tmp/hushrail-shots}
mkdir -p "$out"
export XDG_RUNTIME_DIR=$(mktemp -d); chmod 700 "$XDG_RUNTIME_DIR"
# A fresh data directory: no recent files or autosave from this machine's own sessions in the pictures.
export HUSHRAIL_DATA_DIR=$(mktemp -d)
Xvfb :99 -screen 0 1280x800x24 >/dev/null 2>&1 & xvfb=$!
trap 'kill "$xvfb" 2>/dev/null || true' EXIT
sleep 1
shot() { xwd -root -display :99 | convert xwd:- "$1"; }
x() { DISPLAY=:99 xdotool "$@"; }

DISPLAY=:99 WAYLAND_DISPLAY= "$bin" & app=$!
sleep 8
x mousemove 1270 790
sleep 1
shot "$out/sample.png"

# Pin the curve, add two of the 10 µF parts, select the first finding, point at the curve.
x mousemove 323 136 click 1; sleep 1
x mousemove 979 403 click 1; sleep 0.5; x click 1; sleep 1
x mousemove 550 632 click 1; sleep 1
x mousemove 568 330; sleep 1.5
shot "$out/pin_finding.png"
kill "$app"
wait "$app" 2>/dev/null || true

# The time view of the first rail, with the worst-case load pattern (a fresh data directory: the work left
# unsaved above would be offered back).
export HUSHRAIL_DATA_DIR=$(mktemp -d)
DISPLAY=:99 WAYLAND_DISPLAY= "$bin" & app=$!
sleep 8
x mousemove 448 113 click 1; sleep 3
x mousemove 300 189 click 1; sleep 4
x mousemove 1270 790; sleep 1
shot "$out/time_view.png"
kill "$app"
wait "$app" 2>/dev/null || true

# Suggested mixes for the first rail from the built-in shelf, every option pinned.
export HUSHRAIL_DATA_DIR=$(mktemp -d)
DISPLAY=:99 WAYLAND_DISPLAY= "$bin" & app=$!
sleep 8
x mousemove 1031 41 click 1; sleep 1
x mousemove 900 343 click 1; sleep 5
x mousemove 960 395 click 1; sleep 1.5
x mousemove 1270 790; sleep 1
shot "$out/suggest.png"
kill "$app"
wait "$app" 2>/dev/null || true
