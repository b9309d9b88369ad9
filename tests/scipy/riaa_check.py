#!/usr/bin/env python3
"""Cross-check of the playback network, ac --input and the deviation spec against SciPy.

1. The exact passive playback network (R1 C1 = 750 us, R1 C2 = 2187 us, R2 C2 = 318 us),
   driven by Vin with a second source (a hum current into the input node) present:
   `tacet ac --input Vin` must give the IEC 60098 playback response
   T(s) = (1 + s 318us) / ((1 + s 3180us)(1 + s 75us)), computed here by
   scipy.signal.freqs from its polynomials, to 1e-9 relative.
2. A deviation spec of a series RLC low-pass (f0 = 5 kHz, Q = 2: a peak inside the band)
   against target=riaa: the largest
   |dB(H/H(1k)) - dB(T/T(1k))| over 100 Hz .. 20 kHz, with H and T both from
   scipy.signal.freqs on a dense grid (20000 points a decade), must agree with tacet's
   refined value to 1e-6 dB.

Usage: riaa_check.py PATH_TO_TACET
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import signal

T1, T2, T3 = 3180e-6, 318e-6, 75e-6
B_RIAA = [T2, 1.0]
A_RIAA = np.polymul([T1, 1.0], [T3, 1.0])

NETWORK = """title "exact passive playback network, with a hum source"
param r1 = 100k
vsrc Vin  (in, gnd) ac=1
isrc Ihum (gnd, out) ac=1u
res R1 (in, out) r1
cap C1 (out, gnd) 750u / r1
cap C2 (out, m) 2187u / r1
res R2 (m, gnd) 318u / (2187u / r1)
"""

L, C = 10e-3, 1 / ((2 * np.pi * 5e3) ** 2 * 10e-3)
R = np.sqrt(L / C) / 2
RLC = f"""title "series RLC low-pass against the playback curve"
vsrc Vin (in, gnd) ac=1
res R1 (in, a) {R!r}
ind L1 (a, out) {L!r}
cap C1 (out, gnd) {C!r}
spec d deviation (out) target=riaa from=100Hz to=20kHz ref=1kHz max=100dB
"""


def run(tacet, args):
    done = subprocess.run([tacet] + args, capture_output=True, text=True)
    if done.returncode not in (0, 1):
        print(done.stderr)
        raise SystemExit(1)
    return json.loads(done.stdout)


def response(b, a, f):
    _, h = signal.freqs(b, a, worN=2 * np.pi * np.asarray(f))
    return h


def main() -> int:
    tacet = sys.argv[1]
    ok = True
    with tempfile.TemporaryDirectory() as folder:
        network = os.path.join(folder, "network.tacet")
        with open(network, "w") as f:
            f.write(NETWORK)
        freqs = np.logspace(np.log10(20), np.log10(20e3), 31)
        at = ",".join(repr(float(x)) for x in freqs)
        doc = run(tacet, ["ac", network, "--probe", "out", "--input", "Vin", "--at", at, "--format", "json"])
        got = np.array([complex(p["re"], p["im"]) for p in doc["traces"][0]["points"]])
        expected = response(B_RIAA, A_RIAA, freqs)
        rel = np.abs(got - expected) / np.abs(expected)
        worst = int(np.argmax(rel))
        print(f"network from Vin alone: worst relative error {rel[worst]:.3e} at {freqs[worst]:.6g} Hz")
        ok &= rel[worst] <= 1e-9

        rlc = os.path.join(folder, "rlc.tacet")
        with open(rlc, "w") as f:
            f.write(RLC)
        spec = run(tacet, ["check", rlc, "--format", "json"])["specs"][0]
        dense = np.logspace(2, np.log10(20e3), 46021)
        h = 20 * np.log10(np.abs(response([1.0], [L * C, R * C, 1.0], np.append(dense, 1e3))))
        t = 20 * np.log10(np.abs(response(B_RIAA, A_RIAA, np.append(dense, 1e3))))
        deviation = np.abs((h[:-1] - h[-1]) - (t[:-1] - t[-1]))
        best = float(np.max(deviation))
        print(f"deviation of the RLC from riaa: tacet {spec['value']:.9f} dB, scipy dense grid {best:.9f} dB "
              f"at {dense[int(np.argmax(deviation))]:.6g} Hz")
        ok &= abs(spec["value"] - best) <= 1e-6
    print("PASS" if ok else "FAIL: tacet and scipy.signal.freqs disagree")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
