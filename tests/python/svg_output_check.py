#!/usr/bin/env python3
"""Reads tacet's `--format svg` back with Python's own XML parser and checks it
against the same run's `--format json`.

xml.etree.ElementTree (the standard library's XML 1.0 parser, built on expat)
refuses a document that is not well-formed; the checks then read the plot's
structure: one magnitude and one phase trace per probe, one path point per
frequency with a finite value, decade tick labels with SI prefixes, the axis
titles, and the magnitude at every point read back through the y axis's ticks
to within 0.05 dB of the JSON value. The noise picture: the total density and
its contributors, one point per frequency.

Usage: svg_output_check.py PATH_TO_TACET
"""
import json
import os
import re
import sys
import tempfile
import xml.etree.ElementTree as ET

from svg_read import NS, run, with_class, y_reader

DEMO = "netlists/vibration_logger.tacet"


def path_points(d):
    moves = re.findall(r"([ML])(-?[\d.]+) (-?[\d.]+)", d)
    if "".join(m[0] + m[1] + " " + m[2] for m in moves) != d:
        sys.exit(f"unexpected path data: {d[:80]}")
    return sum(1 for m in moves if m[0] == "M"), [(float(x), float(y)) for _, x, y in moves]


def check_ac(tacet, worst):
    probes = ["adc_p,adc_n", "buf_out", "i(Rprot)"]
    args = [DEMO, "--from", "1", "--to", "100k", "--per-decade", "30"]
    for p in probes:
        args += ["--probe", p]
    with tempfile.TemporaryDirectory() as folder:
        target = os.path.join(folder, "ac.svg")
        run(tacet, "ac", *args, "--format", "svg", "--output", target)
        root = ET.parse(target).getroot()
    data = json.loads(run(tacet, "ac", *args, "--format", "json"))
    assert root.tag == NS + "svg", root.tag
    panels = with_class(root, "panel")
    assert len(panels) == 2, len(panels)
    ticks = [t.text for t in with_class(root, "x-tick")]
    assert ticks == ["1", "10", "100", "1k", "10k", "100k"], ticks
    titles = [t.text for t in with_class(root, "axis-title")]
    assert titles == ["magnitude [dB re 1 V or 1 A]", "phase [deg]", "frequency [Hz]"], titles
    legend = [t.text for t in with_class(root, "legend")[0].iter(NS + "text")]
    assert legend == probes, legend
    read = y_reader(panels[0])
    for panel_index, panel in enumerate(panels):
        traces = with_class(panel, "trace")
        assert len(traces) == len(probes), len(traces)
        for trace, expected in zip(traces, data["traces"]):
            finite = [p for p in expected["points"] if p["db"] is not None]
            subpaths, points = path_points(trace.get("d"))
            assert subpaths == 1 and len(points) == len(finite), (subpaths, len(points), len(finite))
            if panel_index == 0:
                for (_, y), p in zip(points, finite):
                    worst = max(worst, abs(read(y) - p["db"]))
    return worst


def check_noise(tacet):
    args = [DEMO, "--probe", "adc_p,adc_n", "--band", "2..4k", "--from", "1", "--to", "100k"]
    root = ET.fromstring(run(tacet, "noise", *args, "--format", "svg"))
    data = json.loads(run(tacet, "noise", *args, "--format", "json"))
    traces = with_class(root, "trace")
    assert len(traces) == 7, len(traces)  # the total and the six largest contributors
    for trace in traces:
        assert len(path_points(trace.get("d"))[1]) == len(data["points"])
    legend = [t.text for t in with_class(root, "legend")[0].iter(NS + "text")]
    top = data["contributors"][0]
    assert legend[0] == "total at adc_p,adc_n", legend
    assert legend[1].startswith(f"{top['source']} {top['mechanism']} ("), legend
    ticks = [t.text for t in with_class(root, "y-tick")]
    assert all(re.fullmatch(r"(1|10|100)[pnµm]?", t) for t in ticks), ticks


def main():
    tacet = os.path.abspath(sys.argv[1])
    worst = check_ac(tacet, 0.0)
    check_noise(tacet)
    assert worst < 0.05, worst
    print(f"svg output: well-formed, traces and ticks as the data; worst magnitude read back {worst:.4f} dB")


if __name__ == "__main__":
    main()
