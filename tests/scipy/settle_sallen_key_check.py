#!/usr/bin/env python3
"""Cross-check of tacet settle against SciPy on an underdamped Sallen-Key low-pass.

Circuit: a unity-gain Sallen-Key low-pass with equal resistors r, a ground
capacitor c and a feedback capacitor c_fb = 16 c, buffered by an ideal vcvs of
gain 1: H(s) = 1 / (r^2 c c_fb s^2 + 2 r c s + 1) (nodal analysis; Q =
sqrt(c_fb / c) / 2 = 2). SciPy gives the step response of the same transfer
function with scipy.signal.step (a matrix exponential per interval, exact for a
step input up to rounding); the peak at the first zero of scipy.signal.impulse
and the settling time at the last crossing of a band edge, each by
scipy.optimize.brentq. Required: every printed point within 1e-7 of final,
overshoot within 1e-7, settling time within 1e-6 relative.

Usage: settle_sallen_key_check.py PATH_TO_TACET
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import optimize, signal

R = 10e3
C = 1e-9
C_FB = 16 * C
BAND = 1e-4


def netlist() -> str:
    return "\n".join([
        'title "Sallen-Key low-pass, Q = 2, ideal buffer"',
        "vsrc Vin (in, gnd) ac=1",
        f"res R1 (in, x) {R!r}",
        f"res R2 (x, p) {R!r}",
        f"cap Cfb (x, out) {C_FB!r}",
        f"cap Cg (p, gnd) {C!r}",
        "vcvs E1 (out, gnd; p, gnd) gain=1",
        "",
    ])


def main() -> int:
    tacet = sys.argv[1]
    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "sallen_key.tacet")
        with open(path, "w") as f:
            f.write(netlist())
        run = subprocess.run([tacet, "settle", path, "--probe", "out", "--format", "json",
                              "--points", "401"], capture_output=True, text=True)
    if run.returncode != 0:
        print(run.stderr)
        return 1
    trace = json.loads(run.stdout)["traces"][0]
    t = np.array([p["t"] for p in trace["points"]])
    v = np.array([p["v"] for p in trace["points"]])
    system = signal.lti([1.0], [R * R * C * C_FB, 2 * R * C, 1.0])
    _, expected = signal.step(system, T=t)
    worst = float(np.max(np.abs(v - expected)))
    print(f"worst error over {len(t)} points: {worst:.3e} of final")

    def step_at(time):
        return signal.step(system, T=[0.0, time])[1][-1]

    def impulse_at(time):
        return signal.impulse(system, T=[0.0, time])[1][-1]

    dense = np.linspace(0, t[-1], 20001)
    _, h = signal.impulse(system, T=dense)
    first_zero = int(np.argmax(h[1:] < 0)) + 1
    t_peak = optimize.brentq(impulse_at, dense[first_zero - 1], dense[first_zero], xtol=1e-18)
    overshoot = step_at(t_peak) - 1.0
    _, s = signal.step(system, T=dense)
    outside = np.nonzero(np.abs(s - 1.0) > BAND)[0]
    k = int(outside[-1])
    edge = 1.0 + BAND if s[k] > 1.0 else 1.0 - BAND
    settling = optimize.brentq(lambda x: step_at(x) - edge, dense[k], dense[k + 1], xtol=1e-18)
    print(f"overshoot {trace['overshoot']!r} (scipy {overshoot!r}), "
          f"settling {trace['settling_time']!r} s (scipy {settling!r})")
    ok = worst < 1e-7
    ok = ok and abs(trace["final"] - 1.0) < 1e-12
    ok = ok and abs(trace["overshoot"] - overshoot) < 1e-7
    ok = ok and abs(trace["settling_time"] - settling) < 1e-6 * settling
    ok = ok and trace["band"] == BAND
    print("PASS" if ok else "FAIL: tacet settle and scipy.signal.step disagree")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
