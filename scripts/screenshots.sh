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
#   placed_time-1280x800-THEME.png the same on VCORE_PLACED: the worst load's step, pattern and pattern response
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

# One picture at 1280x800 in the current theme: NAME, a board file (or "" for the built-in sample), then clicks
# "X,Y,SECONDS" in turn (with SHOTS_PARTS other than all, a plain picture NAME_plain before the last one), the
# pointer moved out of the way, the picture NAME.
scene() {
    local name=$1 board=$2 left cx cy wait
    shift 2
    start 1280 800 "$dark" $board
    left=$#
    for click in "$@"; do
        left=$((left - 1))
        IFS=, read -r cx cy wait <<<"$click"
        if [ "$left" -eq 0 ] && [ "$parts" != all ]; then shot "$out/${name}_plain-1280x800-$theme.png"; fi
        x mousemove "$cx" "$cy" click 1; sleep "$wait"
    done
    x mousemove 1270 790; sleep 1
    shot "$out/$name-1280x800-$theme.png"
    stop
}

# SHOTS_PARTS=extra takes only the 1280x800 pictures, with a plain picture before the last click (to check the clicks
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
    [ "$parts" = verdicts ] || scene time_view "" 352,67,3 240,169,4
    # The same on VCORE_PLACED (the fourth rail): drawn at its worst load, the pattern that load's own.
    [ "$parts" = verdicts ] || scene placed_time "" 80,300,2 352,107,4 236,265,6
    # Suggested mixes for the first rail from the built-in shelf, every option pinned.
    [ "$parts" = verdicts ] || scene suggest "" 1058,41,1 926,528,12 1012,607,1.5
    # The board map of VCORE_PLACED (the fourth rail), the plane's voltage at a frequency clicked on its plot.
    scene map "" 80,300,2 417,107,3 855,470,3
    # The motor-drive board with its 4.7 µF parts rated 2.5 V, V3V3_ANALOG (the third rail) with the worst corner.
    python3 - "$work/motor_drive_over_rating.json" <<'PY'
import json, sys
board = json.load(open("sample_boards/motor_drive.json"))
for part in board["parts"]:
    if part["id"] == "mlcc-4u7-0805":
        part["rated_voltage_v"] = 2.5
json.dump(board, open(sys.argv[1], "w"), indent=1)
PY
    scene rating "$work/motor_drive_over_rating.json" 80,240,2 660,131,3
    # The gate rail (the second) of the motor-drive board: its worst corner and the yield of random boards.
    scene corner_yield sample_boards/motor_drive.json 80,168,2 660,67,2 812,138,15
done
