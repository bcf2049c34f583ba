#!/usr/bin/env python3
"""Large but plausible inputs, timed as whole processes with their peak memory (GNU time):
`check` on 1,000 rails, `droop` on a 1,000-group rail, `report` with droop on 100 rails, `suggest` with 1,000
candidates. Goal (issue: hostile input): each under 2 s and 500 MB. Usage: python3 scripts/bench_large_inputs.py
[BINARY] (default target/release/hushrail). Boards are invented, built from the sample edge-camera board."""
import copy, json, os, subprocess, sys, tempfile

root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
binary = sys.argv[1] if len(sys.argv) > 1 else os.path.join(os.environ.get("CARGO_TARGET_DIR", os.path.join(root, "target")), "release", "hushrail")
sample = json.load(open(os.path.join(root, "sample_boards", "edge_camera.json")))
work = tempfile.mkdtemp(prefix="hushrail-large-")

def board_with_rails(n):
    b = copy.deepcopy(sample)
    rails = []
    for i in range(n):
        r = copy.deepcopy(sample["rails"][i % len(sample["rails"])])
        r["name"] = f"R{i:04d}"
        rails.append(r)
    b["rails"] = rails
    return b

def board_with_groups(n):
    b = copy.deepcopy(sample)
    rail = b["rails"][0]
    parts = [p["id"] for p in sample["parts"]]
    rail["decaps"] = [{"part": parts[i % len(parts)], "count": 1 + i % 5, "mounting_h": 4e-10 + 1e-12 * i} for i in range(n)]
    b["rails"] = [rail]
    return b

def candidates(n):
    b = {"format": "hushrail-board", "version": 1, "name": "invented candidates", "parts": [], "rails": []}
    for i in range(n):
        c = 10 ** (-9 + 6 * (i / n))
        b["parts"].append({"id": f"cand-{i:05d}", "kind": "ceramic", "capacitance_f": c, "esr_ohm": 0.002 + 0.00001 * i,
                           "esl_h": 3e-10 + 1e-13 * i, "unit_cost": 0.01 + 0.0001 * i})
    return b

def write(name, board):
    path = os.path.join(work, name)
    json.dump(board, open(path, "w"))
    return path

cases = [
    ("check, 1,000 rails", ["check", write("rails1000.json", board_with_rails(1000))]),
    ("droop, one rail of 1,000 groups", ["droop", write("groups1000.json", board_with_groups(1000)), "--rail", "VCORE"]),
    ("report with droop, 100 rails", ["report", write("rails100.json", board_with_rails(100)), "-o", os.path.join(work, "r.html")]),
    ("suggest, 1,000 candidates", ["suggest", os.path.join(root, "sample_boards", "edge_camera.json"), "--rail", "VCORE",
                                   "--candidates-from", write("cand1000.json", candidates(1000))]),
]
print(f"{'what':40} {'seconds':>8} {'peak MB':>8} exit")
for what, args in cases:
    r = subprocess.run(["/usr/bin/time", "-f", "%e %M", binary] + args, capture_output=True, text=True)
    last = r.stderr.strip().splitlines()[-1].split()
    secs, kb = float(last[0]), int(last[1])
    print(f"{what:40} {secs:8.2f} {kb / 1024:8.1f} {r.returncode}")
