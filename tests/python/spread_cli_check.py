#!/usr/bin/env python3
"""tacet spread and tacet merge through the real binary.

Checks, with nothing but Python's standard library reading the output:
- the same seed gives byte-identical output for --threads 1 and 2, in every format;
- the shards 1/3..3/3 (run separately, merged in another order) give exactly the
  whole run's output, byte for byte, in every format;
- bad input exits 2 with its message and writes nothing to --output: --runs 0,
  --shard 3/2, shards of different seeds, a shard given twice, a missing shard;
- the SVG parses as XML with one histogram per spec.

Usage: spread_cli_check.py PATH_TO_TACET
"""
import os
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET

NETLIST = "\n".join([
    'title "matched divider and an RC corner"',
    "vsrc Vin (in, gnd) ac=1",
    "res R1 (in, out) 10k tol=1% match=RA ratio=0.1%",
    "res R2 (out, gnd) 10k tol=1% match=RA ratio=0.1%",
    "res R3 (in, f) 10k tol=5% dist=normal",
    "cap C1 (f, gnd) 10n tol=10%",
    "spec half gain (out) at=1kHz min=0.4996 max=0.5004",
    "spec corner upper_corner (f) ref=10Hz min=1.5kHz max=1.7kHz",
    "",
])

FAILURES = []


def run(tacet, *args):
    return subprocess.run([tacet, *args], capture_output=True, text=True)


def expect(condition, what):
    if not condition:
        FAILURES.append(what)


def refuses(tacet, folder, args, message):
    output = os.path.join(folder, "should-not-exist.txt")
    r = run(tacet, *args, "--output", output)
    expect(r.returncode == 2, f"{args}: exit {r.returncode}, not 2")
    expect(message in r.stderr, f"{args}: stderr lacks {message!r}: {r.stderr!r}")
    expect(not os.path.exists(output), f"{args}: wrote {output}")


def main():
    tacet = sys.argv[1]
    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "stage.tacet")
        with open(path, "w") as f:
            f.write(NETLIST)
        base = ["spread", path, "--runs", "600", "--seed", "11"]
        for fmt in ["table", "csv", "json", "svg"]:
            one = run(tacet, *base, "--threads", "1", "--format", fmt)
            two = run(tacet, *base, "--threads", "2", "--format", fmt)
            expect(one.returncode == 0 and one.stdout, f"{fmt}: {one.stderr}")
            expect(one.stdout == two.stdout, f"{fmt}: --threads 1 and 2 differ")
            shards = []
            for i in (1, 2, 3):
                shard = os.path.join(folder, f"shard-{i}.json")
                r = run(tacet, *base, "--shard", f"{i}/3", "--output", shard)
                expect(r.returncode == 0, f"shard {i}: {r.stderr}")
                shards.append(shard)
            merged = run(tacet, "merge", shards[2], shards[0], shards[1], "--format", fmt)
            expect(merged.returncode == 0, f"merge {fmt}: {merged.stderr}")
            expect(merged.stdout == one.stdout, f"{fmt}: the merged shards differ from the whole run")
            if fmt == "svg":
                root = ET.fromstring(one.stdout)
                figures = [e for e in root if e.tag.endswith("svg")]
                expect(len(figures) == 2, f"svg: {len(figures)} figures, not 2")

        refuses(tacet, folder, ["spread", path, "--runs", "0"], "--runs must be at least 1, not 0")
        refuses(tacet, folder, ["spread", path, "--shard", "3/2"], "--shard 3/2 does not exist")
        other = os.path.join(folder, "other-seed.json")
        run(tacet, "spread", path, "--runs", "600", "--seed", "12", "--shard", "2/3", "--output", other)
        shard = lambda i: os.path.join(folder, f"shard-{i}.json")
        refuses(tacet, folder, ["merge", shard(1), other, shard(3)], "are shards of different runs: seed 11 and 12")
        refuses(tacet, folder, ["merge", shard(1), shard(1), shard(3)], "shard 1/3 is given twice")
        refuses(tacet, folder, ["merge", shard(1), shard(3)], "shard 2/3 is missing")
        refuses(tacet, folder, ["merge", path], "is not a shard of tacet spread")
    for f in FAILURES:
        print("FAIL:", f)
    print("spread and merge: " + ("failed" if FAILURES else "threads, shards, merge and bad input as expected"))
    return 1 if FAILURES else 0


if __name__ == "__main__":
    sys.exit(main())
