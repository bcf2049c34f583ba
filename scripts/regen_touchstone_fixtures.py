#!/usr/bin/env python3
"""Write the Touchstone fixtures of tests/integration/touchstone.rs with scikit-rf (a general-purpose RF library from PyPI:
pip install scikit-rf), and record what scikit-rf reads from them.

(a) Invented capacitors (series R-L-C; the values are invented, not data of any real part) as one-port
    reflections (.s1p) and as shunt-through two-ports (.s2p), written by scikit-rf in several formats (RI, MA, DB),
    frequency units (Hz, kHz, MHz, GHz), reference impedances (50, 25, 75 ohm) and versions (1.0, 2.0). The
    two-ports are built by scikit-rf's own circuit algebra (a series R, L, C to a short, put in shunt across a
    line), so the S-parameters do not come from our shunt-through formula.
(b) The one-port file that `hushrail export` wrote for rail VCORE of sample_boards/edge_camera.json
    (tests/touchstone/hushrail_edge_camera_VCORE.s1p, committed), read by scikit-rf.

Everything scikit-rf reads back (frequencies, S, and its Z: Z11 for one-ports, Z21 for shunt-through two-ports,
which is the shunt element's impedance) goes into tests/touchstone/expected.json with full float precision.

Run from the crate root:  python3 scripts/regen_touchstone_fixtures.py
Regenerate the export first when the engine or sample board changes:
  hushrail export sample_boards/edge_camera.json --rail VCORE --points 61 --from 1k --to 1G \
      --touchstone tests/touchstone/hushrail_edge_camera_VCORE.s1p
"""

import json
import os

import numpy as np
import skrf as rf

OUT = os.path.join(os.path.dirname(__file__), "..", "tests", "touchstone")

# Invented parts: (name, C in F, ESR in ohm, ESL in H).
BULK = ("bulk_4u7", 4.7e-6, 0.008, 0.55e-9)
SMALL = ("small_100n", 100e-9, 0.02, 0.4e-9)

F_HZ = np.logspace(3, 9, 31)  # 1 kHz to 1 GHz, 5 points per decade


def rlc_z(part, f_hz):
    _, c, r, l = part
    w = 2 * np.pi * f_hz
    return r + 1j * w * l + 1 / (1j * w * c)


def one_port(part, z0):
    freq = rf.Frequency.from_f(F_HZ, unit="Hz")
    z = rlc_z(part, F_HZ)
    s = ((z - z0) / (z + z0)).reshape(-1, 1, 1)
    return rf.Network(frequency=freq, s=s, z0=z0, name=part[0])


def shunt_through(part, z0):
    freq = rf.Frequency.from_f(F_HZ, unit="Hz")
    line = rf.media.DefinedGammaZ0(frequency=freq, z0_port=z0)
    _, c, r, l = part
    # The part as a series R, L, C two-port, shorted at its far end: a one-port of impedance Z; then in shunt.
    branch = line.resistor(r) ** line.inductor(l) ** line.capacitor(c) ** line.short()
    return line.shunt(branch)


# (file stem, network builder, part, z0, form, unit, version, fixture)
CASES = [
    ("bulk_ri_hz_50", one_port, BULK, 50.0, "ri", "Hz", "1.0", "one-port"),
    ("bulk_ma_mhz_50", one_port, BULK, 50.0, "ma", "MHz", "1.0", "one-port"),
    ("bulk_db_ghz_25", one_port, BULK, 25.0, "db", "GHz", "1.0", "one-port"),
    ("small_ri_khz_50_v2", one_port, SMALL, 50.0, "ri", "kHz", "2.0", "one-port"),
    ("small_ri_ghz_50", shunt_through, SMALL, 50.0, "ri", "GHz", "1.0", "shunt-through"),
    ("small_ma_hz_75", shunt_through, SMALL, 75.0, "ma", "Hz", "1.0", "shunt-through"),
    ("bulk_db_mhz_50", shunt_through, BULK, 50.0, "db", "MHz", "1.0", "shunt-through"),
    ("bulk_ma_mhz_50_v2", shunt_through, BULK, 50.0, "ma", "MHz", "2.0", "shunt-through"),
]


def pairs(a):
    return [[float(x.real), float(x.imag)] for x in a]


def record(path, fixture):
    n = rf.Network(path)
    ports = n.s.shape[1]
    z = n.z[:, 0, 0] if fixture == "one-port" else n.z[:, 1, 0]
    return {
        "file": os.path.basename(path),
        "fixture": fixture,
        "ports": int(ports),
        "z0_ohm": float(np.real(n.z0[0, 0])),
        "freq_hz": [float(f) for f in n.f],
        # Row-major: S11 (one-port) or S11 S12 S21 S22.
        "s": [pairs(n.s[:, i, j]) for i in range(ports) for j in range(ports)],
        "z_skrf": pairs(z),
    }


def main():
    os.makedirs(OUT, exist_ok=True)
    expected = {"written_by_skrf": [], "hushrail_exports": [], "skrf_version": rf.__version__}
    for stem, build, part, z0, form, unit, version, fixture in CASES:
        net = build(part, z0)
        net.frequency.unit = unit
        ext = "s1p" if fixture == "one-port" else "s2p"
        net.write_touchstone(filename=f"{stem}.{ext}", dir=OUT, form=form, skrf_comment=True, version=version)
        entry = record(os.path.join(OUT, f"{stem}.{ext}"), fixture)
        entry["part"] = {"name": part[0], "c_f": part[1], "esr_ohm": part[2], "esl_h": part[3]}
        entry["z_true"] = pairs(rlc_z(part, np.array(entry["freq_hz"])))
        expected["written_by_skrf"].append(entry)
    export = os.path.join(OUT, "hushrail_edge_camera_VCORE.s1p")
    entry = record(export, "one-port")
    entry["board"] = "sample_boards/edge_camera.json"
    entry["rail"] = "VCORE"
    expected["hushrail_exports"].append(entry)
    with open(os.path.join(OUT, "expected.json"), "w") as fh:
        json.dump(expected, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main()
