#!/usr/bin/env python3
"""tacet settle's output files: bad input writes nothing, the SVG reads back.

1. Each bad invocation (an input that is no source, an unknown probe, --band 0
   or below, --to 0, a capacitor current) exits 2 with its message on stderr
   and leaves no file at --output.
2. --format svg to --output gives a well-formed SVG (xml.etree) with one trace
   per probe, as many points as the JSON of the same run, the settling band
   and one settling-time marker.

Usage: settle_output_check.py PATH_TO_TACET
"""
import json
import os
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET

NETLIST = """title "RC low-pass"
vsrc Vin (in, gnd) ac=1
res R1 (in, out) 10k
cap C1 (out, gnd) 10n
"""

BAD = [
    (["--probe", "out", "--input", "R1"], "error: --input 'R1' is a res, not a source"),
    (["--probe", "otu"], "error: unknown node 'otu' in probe 'otu'"),
    (["--probe", "out", "--band", "0"], "error: --band must be a positive fraction"),
    (["--probe", "out", "--band", "-1%"], "error: --band must be a positive fraction"),
    (["--probe", "out", "--to", "0"], "error: --to must be a positive time"),
    (["--probe", "i(C1)"], "error: settle: probe 'i(C1)' is a capacitor's current"),
]

SVG = "{http://www.w3.org/2000/svg}"


def main() -> int:
    tacet = sys.argv[1]
    failures = 0
    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "rc.tacet")
        with open(path, "w") as f:
            f.write(NETLIST)
        for args, message in BAD:
            out = os.path.join(folder, "out.json")
            run = subprocess.run([tacet, "settle", path] + args + ["--output", out],
                                 capture_output=True, text=True)
            ok = run.returncode == 2 and run.stderr.startswith(message) and not os.path.exists(out)
            print(("ok   " if ok else "FAIL ") + " ".join(args) + f" -> {run.returncode}")
            failures += not ok
        svg_path = os.path.join(folder, "step.svg")
        common = [tacet, "settle", path, "--probe", "out", "--probe", "in", "--points", "41"]
        run = subprocess.run(common + ["--format", "svg", "--output", svg_path], capture_output=True, text=True)
        data = json.loads(subprocess.run(common + ["--format", "json"], capture_output=True, text=True).stdout)
        root = ET.parse(svg_path).getroot()
        panel = next(g for g in root.iter(SVG + "g") if g.get("class") == "panel")
        traces = [e for e in panel.iter(SVG + "path") if "trace" in e.get("class", "").split()]
        bands = [e for e in panel.iter(SVG + "rect") if e.get("class") == "band"]
        markers = [e for e in panel.iter(SVG + "line") if e.get("class") == "marker"]
        counts = [d.count("L") + 1 for d in (t.get("d") for t in traces)]
        expected = [len(t["points"]) for t in data["traces"]]
        ok = run.returncode == 0 and counts == expected and len(bands) == 1 and len(markers) == 1
        print(("ok   " if ok else "FAIL ") + f"svg: traces {counts} (json {expected}), bands {len(bands)}, "
              f"markers {len(markers)}")
        failures += not ok
    print("PASS" if failures == 0 else f"FAIL: {failures} checks")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
