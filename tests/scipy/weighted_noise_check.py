#!/usr/bin/env python3
"""Cross-check of tacet's weighted noise totals against SciPy's quad.

A 10 kohm resistor to gnd has the white thermal noise density 4 k T R
(Johnson 1928, Nyquist 1928). Weighted over a band, its power is
4 k T R times the integral of |W(f)|^2 over the band (the brief's "band total of
density x |W(f)|^2"). W is written here from the standards' own formulas:

  A (IEC 61672-1, annex E): R_A(f) = f4^2 f^4 / ((f^2 + f1^2)
      sqrt((f^2 + f2^2)(f^2 + f3^2)) (f^2 + f4^2)), f1..f4 = 20.598997,
      107.65265, 737.86223, 12194.217 Hz, and W_A = R_A / R_A(1 kHz), the
      standard's A1000 normalisation (about -2.00 dB) taken exactly.

The integral comes from scipy.integrate.quad in ln f, to 1e-12 relative. The
check also covers a band that starts far below the A curve's low poles (1 Hz),
where the integrand is tiny, and one that reaches well above 20 kHz.
Agreement is required to 1e-7 relative.

Usage: weighted_noise_check.py PATH_TO_TACET
"""
import json
import math
import os
import subprocess
import sys
import tempfile

from scipy import integrate

K_BOLTZMANN = 1.380649e-23  # J/K, exact (SI 2019)
R = 10e3
F1, F2, F3, F4 = 20.598997, 107.65265, 737.86223, 12194.217


def r_a(f: float) -> float:
    f2 = f * f
    return F4**2 * f2 * f2 / ((f2 + F1**2) * math.sqrt((f2 + F2**2) * (f2 + F3**2)) * (f2 + F4**2))


def w_a(f: float) -> float:
    return r_a(f) / r_a(1000.0)


def weighted_bandwidth(low: float, high: float) -> float:
    value, _ = integrate.quad(lambda u: w_a(math.exp(u)) ** 2 * math.exp(u), math.log(low),
                              math.log(high), epsabs=0, epsrel=1e-12, limit=200)
    return value


def main() -> int:
    tacet = sys.argv[1]
    worst = 0.0
    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "resistor.tacet")
        with open(path, "w") as f:
            f.write('title "one resistor to gnd"\nres R1 (out, gnd) 10k\n')
        for low, high in ((20.0, 20e3), (1.0, 100e3), (300.0, 3e3)):
            run = subprocess.run([tacet, "noise", path, "--probe", "out", "--weight", "a",
                                  "--band", f"{low!r}..{high!r}", "--at", "1000", "--format", "json"],
                                 capture_output=True, text=True)
            if run.returncode != 0:
                print(run.stdout, run.stderr)
                return 1
            result = json.loads(run.stdout)
            if result.get("weight") != "a":
                print("the JSON does not name the weighting:", result.get("weight"))
                return 1
            kelvin = result["temperature_K"]
            expected = math.sqrt(4 * K_BOLTZMANN * kelvin * R * weighted_bandwidth(low, high))
            error = abs(result["total_rms"] - expected) / expected
            worst = max(worst, error)
            print(f"{low:g}..{high:g} Hz: tacet {result['total_rms']:.9e} V, scipy {expected:.9e} V,"
                  f" relative error {error:.2e}")
    print(f"worst relative error {worst:.2e}")
    return 0 if worst < 1e-7 else 1


if __name__ == "__main__":
    sys.exit(main())
