#!/usr/bin/env python3
"""Bad input to `tacet sensitivity` exits 2 and writes nothing to --output.

For each bad command line (unknown probe, --at missing, zero or negative,
--input naming no source, an unknown format) the check runs the binary twice
with --output: once to a path that does not exist (it must still not exist
afterwards) and once to a file that holds earlier text (it must hold exactly
that text afterwards, so a failed run loses nothing).

Usage: sensitivity_bad_input_check.py TACET
"""

import os
import subprocess
import sys
import tempfile

NETLIST = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "golden",
                       "sensitivity_stage.tacet")

BAD = {
    "unknown probe": ["--probe", "otu", "--at", "1k"],
    "--at missing": ["--probe", "out"],
    "--at zero": ["--probe", "out", "--at", "0"],
    "--at negative": ["--probe", "out", "--at=-1k"],
    "--at not a frequency": ["--probe", "out", "--at", "1kV"],
    "--input not a source": ["--probe", "out", "--at", "1k", "--input", "Rf"],
    "--input unknown": ["--probe", "out", "--at", "1k", "--input", "Vinn"],
    "format it lacks": ["--probe", "out", "--at", "1k", "--format", "svg"],
}


def main():
    tacet = sys.argv[1]
    failures = 0
    with tempfile.TemporaryDirectory() as folder:
        for what, args in BAD.items():
            fresh = os.path.join(folder, "fresh.json")
            kept = os.path.join(folder, "kept.json")
            with open(kept, "w") as f:
                f.write("earlier report\n")
            for target in (fresh, kept):
                run = subprocess.run([tacet, "sensitivity", NETLIST] + args + ["--output", target],
                                     capture_output=True, text=True)
                problems = []
                if run.returncode != 2:
                    problems.append(f"exit {run.returncode}, expected 2")
                if "error:" not in run.stderr:
                    problems.append("no error message on stderr")
                if target == fresh and os.path.exists(fresh):
                    problems.append("wrote --output")
                if target == kept and open(kept).read() != "earlier report\n":
                    problems.append("changed the existing --output file")
                if problems:
                    failures += 1
                    print(f"FAIL {what}: {'; '.join(problems)}\n{run.stderr}")
    print(f"{len(BAD)} bad command lines, {failures} failures")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
