#!/usr/bin/env python3
"""Write tests/networks/regulator_measured_out.s1p: the output impedance of an invented regulator, computed here from
Erickson and Maksimovic's loop (Fundamentals of Power Electronics, 2nd ed., section 9.4.2) and written by scikit-rf
(a general-purpose RF library, PyPI scikit-rf), so the engine's fit is checked against a file it did not write.

Z(s) = R + sL + s*L_c*T/(1 + T), T = w0/(s(1 + s/w2)), w0 = wc/sin(pm), w2 = wc*tan(pm), L_c = R/wc.
The values are invented: R 1.5 mOhm, L 0.8 nH, crossover 60 kHz, phase margin 38 degrees."""
import numpy as np
import skrf as rf

R, L, FC, PM = 1.5e-3, 0.8e-9, 60e3, 38.0
f = 100.0 * 10 ** (np.arange(61) / 10.0)  # 100 Hz to 100 MHz, 10 points per decade
s = 2j * np.pi * f
wc, pm = 2 * np.pi * FC, np.radians(PM)
w0, w2 = wc / np.sin(pm), wc * np.tan(pm)
T = w0 / (s * (1 + s / w2))
z = R + s * L + s * (R / wc) * T / (1 + T)
net = rf.Network(frequency=rf.Frequency.from_f(f, unit="hz"), z=z.reshape(-1, 1, 1), z0=50)
net.name = "regulator_measured_out"
net.write_touchstone("tests/networks/regulator_measured_out", form="ri")
