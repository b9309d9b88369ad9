#!/usr/bin/env python3
"""Writes a generated signal chain of about N elements as a tacet netlist.

The chain: a source, then repeated sections of a non-inverting stage (gain 2),
a resistive pad (1/2) and a unity-gain Sallen-Key low-pass (Butterworth, about 1.1 MHz),
ten elements a section, every resistor noisy, every op amp one
invented archetype model with offsets, noise and rails. The budget at the end
has one spec of every kind a chain needs: gain, flatness, upper corner, noise,
snr, offset and rails (the source declares a level, so rails also runs the
headroom sweep).

With --inverting the first stage of every section is inverting (gain -2, its
+ pin on a bias-compensation resistor to gnd): its input resistor loads the
output before it, which has rout, so the stages load each other both ways and
bias takes the tree's path (docs/analyses/bias.md) instead of the cascade's.

With --tol every resistor gets tol=1%, every capacitor tol=5% dist=normal,
each section's gain pair is a matched set (ratio 0.1%) and the model spreads
(gbw_tol 30%, aol_tol 50%), for the spread benchmark.

Usage: gen_chain.py ELEMENTS [OUTPUT] [--tol] [--inverting]   (default output: stdout)
"""

import sys

SECTION = 10  # elements per section


def section(k, into, tol=False, inverting=False):
    """Elements of section k, from node `into`; returns its output node."""
    a, fb, b, s1, s2, out = (f"a{k}", f"fb{k}", f"b{k}", f"s{k}", f"t{k}", f"o{k}")
    r = " tol=1%" if tol else ""
    pair = f" tol=1% match=RA{k} ratio=0.1%" if tol else ""
    c = " tol=5% dist=normal" if tol else ""
    if inverting:  # gain -2 from `into`, the + pin on 6.8k to gnd (about 20k || 10k)
        first = [
            f"opamp UA{k} (+{a}p, -{fb}, {a}) chain_amp",
            f"res RF{k} ({a}, {fb}) 20k{pair}",
            f"res RG{k} ({into}, {fb}) 10k{pair}",
            f"res RC{k} ({a}p, gnd) 6.8k{r}",
        ]
    else:
        first = [
            f"opamp UA{k} (+{into}, -{fb}, {a}) chain_amp",
            f"res RF{k} ({a}, {fb}) 10k{pair}",
            f"res RG{k} ({fb}, gnd) 10k{pair}",
        ]
    return first + [
        f"res RP{k} ({a}, {b}) 4.7k{r}",
        f"res RQ{k} ({b}, gnd) 4.7k{r}",
        f"res RS{k} ({b}, {s1}) 1k{r}",
        f"res RT{k} ({s1}, {s2}) 1k{r}",
        f"cap CS{k} ({s1}, {out}) 200p{c}",
        f"cap CT{k} ({s2}, gnd) 100p{c}",
        f"opamp UB{k} (+{s2}, -{out}, {out}) chain_amp",
    ], out


def netlist(elements, tol=False, inverting=False):
    sections = max(1, (elements - 2) // (SECTION + (1 if inverting else 0)))
    lines = [
        f'title "Generated chain, {sections} sections"',
        "supply +15V -15V",
        "model chain_amp opamp {",
        "  gbw 20MHz  aol 120dB  rout 20ohm",
        "  en 5nV/rtHz  fce 10Hz  in 0.4pA/rtHz  fci 100Hz",
        "  vos 50uV  ib 20nA  ios 2nA  swing 1.5V  slew 10V/us",
        *(["  gbw_tol 30%  aol_tol 50%"] if tol else []),
        "}",
        "vsrc Vin (in, gnd) ac=1 level=100mVrms band_low=20Hz band_high=20kHz",
    ]
    node = "in"
    for k in range(sections):
        body, node = section(k, node, tol, inverting)
        lines += body
    lines += [
        f"res RL ({node}, gnd) 10k",
        f"spec g1k     gain         ({node}) at=1kHz min=-1dB max=1dB",
        f"spec flat    flatness     ({node}) from=20Hz to=2kHz ref=1kHz max=1dB",
        f"spec corner  upper_corner ({node}) ref=1kHz min=1kHz",
        f"spec hiss    noise        ({node}) from=20Hz to=20kHz max=10mV",
        f"spec snr     snr          ({node}) from=20Hz to=20kHz input=Vin level=100mV min=20dB",
        f"spec dc      offset       ({node}) max=10V",
        "spec swing   rails        margin=0.5V",
    ]
    return "\n".join(lines) + "\n"


def main():
    tol, inverting = "--tol" in sys.argv, "--inverting" in sys.argv
    args = [a for a in sys.argv[1:] if a not in ("--tol", "--inverting")]
    if len(args) not in (1, 2):
        sys.exit(__doc__)
    text = netlist(int(args[0]), tol, inverting)
    if len(args) == 2:
        with open(args[1], "w") as out:
            out.write(text)
    else:
        sys.stdout.write(text)


if __name__ == "__main__":
    main()
