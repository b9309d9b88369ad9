#!/usr/bin/env python3
"""Cross-check of tacet sensitivity against SciPy on a Sallen-Key low-pass.

Circuit: the unity-gain Sallen-Key low-pass with an ideal gain-K buffer (a vcvs):
in -R1- a -R2- b, C1 from a to the output, C2 from b to gnd, out = K v(b). Its
transfer (Sallen and Key 1955; the standard nodal analysis of the topology) is

    H(s) = K / (s^2 R1 R2 C1 C2 + s (C2 (R1 + R2) + R1 C1 (1 - K)) + 1).

SciPy evaluates H with scipy.signal.freqs for the nominal parts and for each
part scaled by 1 +- h; the normalised sensitivities are central differences of
ln H in ln x: mag = Re, deg = (180/pi) Im. tacet's adjoint values must agree to
1e-7 (the differences' own error is about h^2 = 1e-12 plus rounding / h).

Usage: sallen_key_sensitivity_check.py PATH_TO_TACET
"""
import json
import math
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import signal

PARTS = {"R1": 10e3, "R2": 22e3, "C1": 2.2e-9, "C2": 1e-9, "E1": 1.0}
FREQS = [300.0, 5e3, 9e3, 40e3]
STEP = 1e-6


def netlist() -> str:
    p = PARTS
    return "\n".join([
        'title "Sallen-Key low-pass, ideal buffer"',
        "vsrc Vin (in, gnd) ac=1",
        f"res R1 (in, a) {p['R1']!r}",
        f"res R2 (a, b) {p['R2']!r}",
        f"cap C1 (a, out) {p['C1']!r}",
        f"cap C2 (b, gnd) {p['C2']!r}",
        f"vcvs E1 (out, gnd; b, gnd) gain={p['E1']!r}",
    ]) + "\n"


def h(parts, f):
    r1, r2, c1, c2, k = (parts[n] for n in ("R1", "R2", "C1", "C2", "E1"))
    b = [k]
    a = [r1 * r2 * c1 * c2, c2 * (r1 + r2) + r1 * c1 * (1 - k), 1.0]
    _, value = signal.freqs(b, a, worN=[2 * math.pi * f])
    return value[0]


def reference(name, f):
    up, down = dict(PARTS), dict(PARTS)
    up[name] *= 1 + STEP
    down[name] *= 1 - STEP
    s = (np.log(h(up, f)) - np.log(h(down, f))) / (2 * STEP)
    return s.real, 180 / math.pi * s.imag


def main() -> int:
    tacet = sys.argv[1]
    worst = 0.0
    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "sallen_key.tacet")
        with open(path, "w") as f:
            f.write(netlist())
        for f in FREQS:
            run = subprocess.run([tacet, "sensitivity", path, "--probe", "out", "--at", repr(f),
                                  "--format", "json"], capture_output=True, text=True)
            if run.returncode != 0:
                print(run.stderr)
                return 1
            rows = {r["name"]: r for r in json.loads(run.stdout)["elements"]}
            if set(rows) != set(PARTS):
                print(f"FAIL: parameters {sorted(rows)}, expected {sorted(PARTS)}")
                return 1
            for name in PARTS:
                mag, deg = reference(name, f)
                error = max(abs(rows[name]["mag"] - mag), abs(rows[name]["deg"] - deg) / 57.3)
                worst = max(worst, error)
                if error > 1e-7:
                    print(f"FAIL at {f} Hz, {name}: tacet mag {rows[name]['mag']!r} deg "
                          f"{rows[name]['deg']!r}, scipy mag {mag!r} deg {deg!r}")
                    return 1
    print(f"worst absolute error {worst:.3e} over {len(FREQS)} frequencies and {len(PARTS)} parts")
    print("PASS")
    return 0


if __name__ == "__main__":
    sys.exit(main())
