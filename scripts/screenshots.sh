#!/usr/bin/env bash
# Screenshots of the planner window under Xvfb (no screen needed), for looking at the window and for the README.
# Needs: xvfb x11-apps imagemagick xdotool mesa-vulkan-drivers libvulkan1 libgl1-mesa-dri libegl-mesa0.
# Usage: scripts/screenshots.sh [BINARY] [OUT_DIR]   (defaults: target/release/hushrail, /tmp/hushrail-shots)
#
# At 1280x800 (a laptop) and 1920x1080, in the dark and the light theme, it writes
#   sample-WxH-THEME.png       the built-in sample board as it opens
#   pin_finding-WxH-THEME.png  a pin, a changed count, a finding selected, the pointer over the plot
# and at 1280x800 in both themes
#   time_view-1280x800-THEME.png  the voltage after a load step with the worst-case pattern
#   suggest-1280x800-THEME.png    suggested mixes for the first rail, every option pinned on the plot
#   map-1280x800-THEME.png        the board map of VCORE_PLACED with the plane's voltage at a frequency clicked
#   rating-1280x800-THEME.png     the motor-drive board with its 4.7 µF parts rated 2.5 V on the 3.3 V rail, the
#                                 worst corner drawn
#   corner_yield-1280x800-THEME.png  the gate rail with its worst corner and the yield of random boards.
#
# Every session starts with its own empty XDG_DATA_HOME and XDG_CONFIG_HOME (no recent files, autosave, pins or
# window state from this machine's own sessions, nor from an earlier session of this script); the theme is set
# through the window's own preferences file there. The clicks are at places in the window's layout: the left and
# right columns keep their widths, so a point in the right column moves with the right edge and one in the
# findings pane with the bottom edge; the plot grows in between. Only the processes it starts are stopped, by
# their ids.
set -euo pipefail
bin=${1:-target/release/hushrail}
out=${2:-/tmp/hushrail-shots}
mkdir -p "$out"
export XDG_RUNTIME_DIR=$(mktemp -d); chmod 700 "$XDG_RUNTIME_DIR"
unset HUSHRAIL_DATA_DIR
display=${SHOTS_DISPLAY:-:99}   # another number when several sessions share the machine
xvfb=
app=
cleanup() {
    if [ -n "$app" ]; then kill "$app" 2>/dev/null || true; fi
    if [ -n "$xvfb" ]; then kill "$xvfb" 2>/dev/null || true; fi
}
work=$(mktemp -d)
trap 'cleanup; rm -rf "$work"' EXIT

x() { DISPLAY=$display xdotool "$@"; }
shot() { xwd -root -display "$display" | convert xwd:- "$1"; }

# A fresh screen of W x H and the window on it in the given theme ("true" dark, "false" light), filling it; with a
# fourth argument, that board file instead of the built-in sample.
start() {
    W=$1; H=$2; dark=$3; board=${4:-}
    R=$((W - 1280)); B=$((H - 800))   # how far the right column and the findings pane moved from 1280x800
    Xvfb "$display" -screen 0 "${W}x${H}x24" >/dev/null 2>&1 & xvfb=$!
    sleep 1
    XDG_DATA_HOME=$(mktemp -d); XDG_CONFIG_HOME=$(mktemp -d); export XDG_DATA_HOME XDG_CONFIG_HOME
    mkdir -p "$XDG_DATA_HOME/hushrail"
    printf '{"recent": [], "dark": %s}\n' "$dark" >"$XDG_DATA_HOME/hushrail/prefs.json"
    DISPLAY=$display WAYLAND_DISPLAY= "$bin" $board & app=$!
    sleep 8
    local id
    id=$(DISPLAY=$display xdotool search --sync --pid "$app" | head -1)
    x windowmove "$id" 0 0 windowsize "$id" "$W" "$H"
    sleep 3
    x mousemove $((W - 10)) $((H - 10))
    sleep 1
}

stop() {
    kill "$app"; wait "$app" 2>/dev/null || true; app=
    kill "$xvfb"; wait "$xvfb" 2>/dev/null || true; xvfb=
}

# SHOTS_PARTS=extra takes only the 1280x800 pictures, with a plain picture before each click (to check the clicks
# after a layout change); SHOTS_PARTS=verdicts only the map, rating and corner ones.
parts=${SHOTS_PARTS:-all}
[ "$parts" = extra ] || [ "$parts" = verdicts ] || for size in 1280x800 1920x1080; do
    for dark in true false; do
        theme=$([ "$dark" = true ] && echo dark || echo light)
        start "${size%x*}" "${size#*x}" "$dark"
        shot "$out/sample-$size-$theme.png"
        # Pin the curve, add two of the 10 µF parts (group 2's "+"), select the first finding, point into the plot.
        x mousemove 455 67 click 1; sleep 1
        x mousemove $((1004 + R)) 461 click 1; sleep 0.5; x click 1; sleep 1
        x mousemove 540 $((650 + B)) click 1; sleep 1
        x mousemove $((302 + (568 + R) * 48 / 100)) $((330 + B / 2)); sleep 1.5
        shot "$out/pin_finding-$size-$theme.png"
        stop
    done
done

for dark in true false; do
    theme=$([ "$dark" = true ] && echo dark || echo light)
    # The time view of the first rail, with the worst-case load pattern.
    [ "$parts" = verdicts ] || {
    start 1280 800 "$dark"
    x mousemove 352 67 click 1; sleep 3
    [ "$parts" = all ] || shot "$out/time_view_plain-1280x800-$theme.png"
    x mousemove 240 169 click 1; sleep 4
    x mousemove 1270 790; sleep 1
    shot "$out/time_view-1280x800-$theme.png"
    stop

    # Suggested mixes for the first rail from the built-in shelf, every option pinned.
    start 1280 800 "$dark"
    x mousemove 1058 41 click 1; sleep 1
    [ "$parts" = all ] || shot "$out/suggest_plain-1280x800-$theme.png"
    x mousemove 926 528 click 1; sleep 12
    [ "$parts" = all ] || shot "$out/suggest_found-1280x800-$theme.png"
    x mousemove 1012 607 click 1; sleep 1.5
    x mousemove 1270 790; sleep 1
    shot "$out/suggest-1280x800-$theme.png"
    stop
    }

    # The board map of VCORE_PLACED (the fourth rail), the plane's voltage at a frequency clicked on its plot.
    start 1280 800 "$dark"
    x mousemove 80 300 click 1; sleep 2
    x mousemove 417 107 click 1; sleep 3
    [ "$parts" = all ] || shot "$out/map_plain-1280x800-$theme.png"
    x mousemove 855 470 click 1; sleep 3
    x mousemove 1270 790; sleep 1
    shot "$out/map-1280x800-$theme.png"
    stop

    # The motor-drive board with its 4.7 µF parts rated 2.5 V, V3V3_ANALOG (the third rail) with the worst corner.
    python3 - "$work/motor_drive_over_rating.json" <<'PY'
import json, sys
board = json.load(open("sample_boards/motor_drive.json"))
for part in board["parts"]:
    if part["id"] == "mlcc-4u7-0805":
        part["rated_voltage_v"] = 2.5
json.dump(board, open(sys.argv[1], "w"), indent=1)
PY
    start 1280 800 "$dark" "$work/motor_drive_over_rating.json"
    x mousemove 80 240 click 1; sleep 2
    [ "$parts" = all ] || shot "$out/rating_plain-1280x800-$theme.png"
    x mousemove 660 131 click 1; sleep 3
    x mousemove 1270 790; sleep 1
    shot "$out/rating-1280x800-$theme.png"
    stop

    # The gate rail (the second) of the motor-drive board: its worst corner and the yield of random boards.
    start 1280 800 "$dark" sample_boards/motor_drive.json
    x mousemove 80 168 click 1; sleep 2
    [ "$parts" = all ] || shot "$out/corner_yield_plain-1280x800-$theme.png"
    x mousemove 660 67 click 1; sleep 2
    x mousemove 812 138 click 1; sleep 15
    x mousemove 1270 790; sleep 1
    shot "$out/corner_yield-1280x800-$theme.png"
    stop
done
