#!/usr/bin/env python3
"""Reads `tacet loop --format svg` back with Python's own XML parser and checks
every margin annotation against the same run's `--format json`.

xml.etree.ElementTree (the standard library's XML 1.0 parser, built on expat)
refuses a document that is not well-formed. For each op amp of the
transimpedance example: one |T| and one phase trace with a point per
frequency, a dot and a label "U1 PM 58.9° at 117.2kHz" on the phase panel at
each crossover of the JSON (x at its frequency, y at its phase, PM - 180), and
a label "U2 GM ..." on the |T| panel at each phase crossover (y at -GM dB).
Positions are read through the axes' own tick labels.

Usage: loop_svg_check.py PATH_TO_TACET
"""
import json
import math
import os
import sys
import xml.etree.ElementTree as ET

from svg_read import NS, linear_reader, run, with_class, y_reader

NETLIST = "netlists/examples/turbidity_frontend.tacet"


def si(text):
    scale = {"k": 1e3, "M": 1e6, "G": 1e9, "m": 1e-3}
    return float(text[:-1]) * scale[text[-1]] if text[-1] in scale else float(text)


def x_reader(root):
    return linear_reader([(math.log10(si(t.text)), float(t.get("x"))) for t in with_class(root, "x-tick")])


def labelled_dots(panel):
    """Each labelled dot of the panel's markers: label -> (cx, cy) of the dot before it."""
    markers = with_class(panel, "markers")[0]
    out, dot = {}, None
    for e in markers:
        if e.tag == NS + "circle":
            dot = (float(e.get("cx")), float(e.get("cy")))
        elif e.tag == NS + "text" and dot is not None:
            out[e.text] = dot
            dot = None
    return out


def main():
    tacet = os.path.abspath(sys.argv[1])
    root = ET.fromstring(run(tacet, "loop", NETLIST, "--format", "svg"))
    data = json.loads(run(tacet, "loop", NETLIST, "--format", "json"))
    panels = with_class(root, "panel")
    assert len(panels) == 2, len(panels)
    x = x_reader(root)
    magnitude, phase = y_reader(panels[0]), y_reader(panels[1])
    pm_dots, gm_dots = labelled_dots(panels[1]), labelled_dots(panels[0])
    worst, marks = 0.0, 0
    for k, loop in enumerate(data["loops"]):
        for panel in panels:
            assert len(with_class(panel, "trace")) == len(data["loops"])
        for c in loop["crossovers"]:
            label = next(t for t in pm_dots if t.startswith(f"{loop['opamp']} PM {c['phase_margin']:.1f}° at "))
            cx, cy = pm_dots[label]
            worst = max(worst, abs(x(cx) - math.log10(c["f"])) / 0.005, abs(phase(cy) - (c["phase_margin"] - 180)) / 0.5)
            marks += 1
        for c in loop["phase_crossovers"]:
            label = next(t for t in gm_dots if t.startswith(f"{loop['opamp']} GM {c['gain_margin']:.1f} dB at "))
            cx, cy = gm_dots[label]
            worst = max(worst, abs(x(cx) - math.log10(c["f"])) / 0.005, abs(magnitude(cy) + c["gain_margin"]) / 0.5)
            marks += 1
    assert marks > 0, "no margin to check"
    assert len(pm_dots) + len(gm_dots) == marks, (sorted(pm_dots), sorted(gm_dots))
    # worst: in units of the tolerance, 0.005 decade and 0.5 deg or dB (two decimals of a
    # pixel on some 60 px a decade and a few px a degree are far below it).
    assert worst < 1, worst
    print(f"loop svg: {marks} margin marks where the JSON puts them (worst {worst:.4f} of tolerance)")


if __name__ == "__main__":
    main()
