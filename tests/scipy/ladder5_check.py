#!/usr/bin/env python3
"""Cross-check of tacet's AC sweep against SciPy on a 5th-order ladder filter.

Circuit: a doubly terminated LC ladder (source and load resistance R0) with the
Butterworth prototype values g_k = 2 sin((2k - 1) pi / (2n)), the closed form
tabulated in filter handbooks (e.g. Williams and Taylor, Electronic Filter
Design Handbook, table of Butterworth LC element values). Such a ladder's
voltage transfer from the source to the load is T(s) / 2, with T the Butterworth
all-pole response of cutoff wc; SciPy gives T through scipy.signal.butter(...,
analog=True) and scipy.signal.freqs. Agreement is required to 1e-9 relative.

Usage: ladder5_check.py PATH_TO_TACET
"""
import json
import math
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import signal

ORDER = 5
FC = 10e3  # Hz
R0 = 600.0  # ohm


def netlist() -> str:
    lines = [
        'title "5th-order Butterworth LC ladder, doubly terminated"',
        f"param r0 = {R0!r}",
        f"param fc = {FC!r}",
        "param wc = 2 * pi * fc",
        "vsrc Vs (src, gnd) ac=1",
        "res Rs (src, n1) r0",
    ]
    node = 1
    for k in range(1, ORDER + 1):
        g = f"2 * sin({2 * k - 1} * pi / {2 * ORDER})"
        if k % 2 == 1:  # shunt capacitor at the current node
            lines.append(f"cap C{k} (n{node}, gnd) {g} / (wc * r0)")
        else:  # series inductor to the next node
            lines.append(f"ind L{k} (n{node}, n{node + 1}) {g} * r0 / wc")
            node += 1
    lines.append(f"res RL (n{node}, gnd) r0")
    return "\n".join(lines) + "\n", f"n{node}"


def main() -> int:
    tacet = sys.argv[1]
    text, out_node = netlist()
    freqs = np.logspace(1, 6, 41)  # 10 Hz .. 1 MHz, across the corner and deep into the stop band
    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "ladder5.tacet")
        with open(path, "w") as f:
            f.write(text)
        at = ",".join(repr(float(x)) for x in freqs)
        run = subprocess.run([tacet, "ac", path, "--probe", out_node, "--at", at, "--format", "json"],
                             capture_output=True, text=True)
    if run.returncode != 0:
        print(run.stderr)
        return 1
    points = json.loads(run.stdout)["traces"][0]["points"]
    got = np.array([complex(p["re"], p["im"]) for p in points])
    b, a = signal.butter(ORDER, 2 * math.pi * FC, btype="low", analog=True)
    _, h = signal.freqs(b, a, worN=2 * math.pi * freqs)
    expected = 0.5 * h
    rel = np.abs(got - expected) / np.abs(expected)
    worst = int(np.argmax(rel))
    print(f"worst relative error {rel[worst]:.3e} at {freqs[worst]:.6g} Hz over {len(freqs)} points")
    corner = 20 * math.log10(abs(got[np.argmin(abs(freqs - FC))]) / 0.5) if FC in freqs else None
    if corner is not None:
        print(f"at the corner: {corner:.6f} dB re passband")
    if rel[worst] > 1e-9:
        print("FAIL: tacet and scipy.signal.freqs disagree beyond 1e-9 relative")
        return 1
    print("PASS")
    return 0


if __name__ == "__main__":
    sys.exit(main())
