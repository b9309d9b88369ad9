#!/usr/bin/env python3
"""Cross-check of tacet spread's yield and Wilson interval against SciPy.

Circuit: a divider H = R2 / (R1 + R2) of two 10k resistors, each uniform on
+-2 % (tol=2%, the default dist), and a window spec 0.495 <= H <= 0.505. With
R1 = 10k (1 + a), R2 = 10k (1 + b), H = (1 + b) / (2 + a + b) and the yield is
the area of {lo <= H <= hi} in the square [-t, t]^2 over (2t)^2: for each a the
b inside the window form one interval, (lo (2 + a) - 1) / (1 - lo) <= b <=
(hi (2 + a) - 1) / (1 - hi), so scipy.integrate.dblquad integrates 1 between
those bounds (clipped to the square), a direct numerical integration.

tacet's yield over N draws must lie within 5 standard errors
sqrt(p (1 - p) / N) of the integral (the seed is fixed, so the check is
deterministic; the bound only sizes it), and its 95 % interval must equal
scipy.stats.binomtest(k, N).proportion_ci(method="wilson") (Wilson 1927).

Usage: spread_yield_check.py PATH_TO_TACET
"""
import json
import math
import os
import subprocess
import sys
import tempfile

from scipy import integrate, stats

T = 0.02
LO, HI = 0.495, 0.505
RUNS = 20000


def netlist() -> str:
    return "\n".join([
        'title "divider window"',
        "vsrc Vin (in, gnd) ac=1",
        f"res R1 (in, out) 10k tol={T * 100}%",
        f"res R2 (out, gnd) 10k tol={T * 100}%",
        f"spec half gain (out) at=1kHz min={LO} max={HI}",
        "",
    ])


def exact_yield() -> float:
    def b_low(a):
        return min(T, max(-T, (LO * (2 + a) - 1) / (1 - LO)))

    def b_high(a):
        return max(b_low(a), min(T, (HI * (2 + a) - 1) / (1 - HI)))

    area, _ = integrate.dblquad(lambda b, a: 1.0, -T, T, b_low, b_high, epsabs=1e-12, epsrel=1e-10)
    return area / (2 * T) ** 2


def main() -> int:
    tacet = sys.argv[1]
    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "divider.tacet")
        with open(path, "w") as f:
            f.write(netlist())
        out = subprocess.run([tacet, "spread", path, "--runs", str(RUNS), "--seed", "3",
                              "--format", "json"], check=True, capture_output=True, text=True).stdout
    doc = json.loads(out)
    spec = doc["specs"][0]
    p = exact_yield()
    se = math.sqrt(p * (1 - p) / RUNS)
    error = abs(spec["yield"] - p)
    passed = round(spec["yield"] * RUNS)
    ci = stats.binomtest(passed, RUNS).proportion_ci(confidence_level=0.95, method="wilson")
    wilson_error = max(abs(spec["yield_low"] - ci.low), abs(spec["yield_high"] - ci.high))
    print(f"yield {spec['yield']:.5f}, integral {p:.5f}, {error / se:.2f} standard errors; "
          f"Wilson interval off by {wilson_error:.2e}")
    ok = error <= 5 * se and wilson_error < 1e-12 and doc["yield"] == spec["yield"] and 0.2 < p < 0.9
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
