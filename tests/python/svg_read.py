"""Reading tacet's SVG pictures back into numbers, shared by the SVG checks.

A picture is checked the way a reader checks it: find the marks by their class,
turn page coordinates back into values through the labelled ticks of the axes,
and compare those values with the JSON of the same run.
"""
import subprocess
import sys

NS = "{http://www.w3.org/2000/svg}"


def run(tacet, *args):
    """tacet's stdout; any exit but 0 ends the check with tacet's message."""
    done = subprocess.run([tacet, *args], capture_output=True, text=True)
    if done.returncode != 0:
        sys.exit(f"tacet {' '.join(args)} failed ({done.returncode}): {done.stderr}")
    return done.stdout


def with_class(root, name):
    """Every element below root whose class list holds name."""
    return [e for e in root.iter() if name in (e.get("class") or "").split()]


def linear_reader(pairs):
    """Page coordinate -> value, straight through the first and last (value, page) pair."""
    (v0, p0), (v1, p1) = pairs[0], pairs[-1]
    return lambda p: v0 + (v1 - v0) * (p - p0) / (p1 - p0)


def y_reader(panel):
    """Page y -> value on a linear axis, from its first and last labelled ticks
    (a tick's label sits 4 px below the tick's own y)."""
    return linear_reader([(float(t.text), float(t.get("y")) - 4) for t in with_class(panel, "y-tick")])
