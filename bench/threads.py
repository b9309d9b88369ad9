#!/usr/bin/env python3
"""Whole-process `tacet ac --threads N` on a 1000-section RC ladder over 2000 points.

Writes the ladder (series 1k, shunt 1n per section, a source at the input) into
a temporary folder, then prints, each the fastest of REPEATS runs:

  bare    the bare single-thread KLU refactor + solve of the ladder's matrix
          over the same 2001 log points 1 Hz .. 100 MHz (tacet_bench bare:
          assembly subtracted, no parse, no check, no output), wall and CPU
  ac -tN  the whole `tacet ac` process with --threads N (parse, elaborate,
          MNA build, symbolic analysis, the sweep with its solution check,
          the table written to /dev/null): wall and CPU seconds

and the goals of issue 10: wall(--threads 2) / bare <= 0.65 and
wall(--threads 1) / wall(--threads 2) >= 1.8 (an idle 2-core machine). The
load average is printed beside the figures: on a shared machine the wall
times are only as good as the cores that were free.

Usage: threads.py TACET TACET_BENCH [--sections N] [--repeats N] [--threads 1,2]
"""

import os
import re
import subprocess
import sys
import tempfile
import time

PER_DECADE = 250  # 8 decades: 2001 points


def ladder(sections):
    lines = [f'title "RC ladder, {sections} sections"', "vsrc Vin (n0, gnd) ac=1"]
    for k in range(sections):
        lines += [f"res R{k} (n{k}, n{k + 1}) 1k", f"cap C{k} (n{k + 1}, gnd) 1n"]
    return "\n".join(lines) + "\n"


def run(args):
    """Wall and CPU seconds of one process."""
    start = time.perf_counter()
    child = subprocess.Popen(args, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(child.pid, 0)
    seconds = time.perf_counter() - start
    err = child.stderr.read().decode()
    child.stderr.close()
    if os.waitstatus_to_exitcode(status) != 0:
        sys.exit(f"{' '.join(args)} failed: {err}")
    return seconds, usage.ru_utime + usage.ru_stime


def option(args, name, default):
    if name not in args:
        return default
    i = args.index(name)
    value = args[i + 1]
    del args[i:i + 2]
    return value


def main():
    args = sys.argv[1:]
    sections = int(option(args, "--sections", "1000"))
    repeats = int(option(args, "--repeats", "5"))
    threads = [int(t) for t in option(args, "--threads", "1,2").split(",")]
    if len(args) != 2:
        sys.exit(__doc__)
    tacet, bench = args
    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "ladder.tacet")
        with open(path, "w") as out:
            out.write(ladder(sections))
        bare_text = subprocess.run([bench, "bare", path, str(PER_DECADE)], check=True,
                                   capture_output=True, text=True).stdout
        bare_ms = float(re.search(r"([0-9.]+) ms total", bare_text).group(1))
        bare_cpu_ms = float(re.search(r"([0-9.]+) ms cpu", bare_text).group(1))
        print(f"load average before: {os.getloadavg()[0]:.2f}")
        print(bare_text.strip())
        sweep = ["--from", "1", "--to", "100M", "--per-decade", str(PER_DECADE)]
        wall = {}
        print(f"{'command':>12}  {'wall s':>8}  {'cpu s':>8}  {'wall/bare':>9}  {'cpu/bare cpu':>12}")
        for t in threads:
            runs = [run([tacet, "ac", path, "--probe", f"n{sections}", "--threads", str(t)] + sweep)
                    for _ in range(repeats)]
            w = min(r[0] for r in runs)
            c = min(r[1] for r in runs)
            wall[t] = w
            print(f"{'ac -t' + str(t):>12}  {w:8.3f}  {c:8.3f}  {w / (bare_ms / 1e3):9.2f}"
                  f"  {c / (bare_cpu_ms / 1e3):12.2f}")
        if 1 in wall and 2 in wall:
            print(f"speed-up --threads 1 / --threads 2: {wall[1] / wall[2]:.2f}x (goal >= 1.8)")
            print(f"wall(--threads 2) / bare: {wall[2] / (bare_ms / 1e3):.2f} (goal <= 0.65)")
        print(f"load average after: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
