#!/usr/bin/env python3
"""Whole-process timing of tacet's commands on generated chains (bench/gen_chain.py).

For each size it writes the chain into a temporary folder, runs every command
as its own process (the fastest of REPEATS runs), and prints wall time, CPU
time (user + system: the fairer figure on a shared machine), peak resident
memory and the ratio of CPU times to the 100-point AC sweep of the same
netlist, the yardstick the performance goals are written against:

  ac     100 log points 1 Hz .. 100 kHz at the chain's output
  bias   the DC point and every op amp's worst-case offsets
  noise  100 points and the band total over 20 Hz .. 20 kHz
  check  the seven specs of the chain's budget
  diff   the chain against itself with one resistor changed
  settle the step response over its first 2 us
  loop   every op amp's loop gain over the default loop sweep, and its margins
  poles  every pole (block by block beyond 600 unknowns)
         (these three are not part of the default set: pass --only settle,loop,poles)
  ac1    the AC response at one frequency (1 kHz)
  sens   tacet sensitivity at 1 kHz: every parameter by one adjoint solve
  checks tacet check --sensitivity: the budget and what moves each spec

Usage: commands.py TACET [SIZE...] [--repeats N] [--only CMD,CMD] [--inverting]
       (default sizes 10 1000 10000 100000; default repeats 3; --inverting:
       the chain of gen_chain.py --inverting, whose stages load each other)
"""

import os
import re
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
import gen_chain  # noqa: E402


def output_node(text):
    return re.search(r"^res RL \((\S+), gnd\)", text, re.M).group(1)


def commands(path, changed, out):
    sweep = ["--from", "1", "--to", "100k", "--points", "100"]
    return {
        "ac": ["ac", path, "--probe", out] + sweep,
        "bias": ["bias", path],
        "noise": ["noise", path, "--probe", out, "--band", "20..20k"] + sweep,
        "check": ["check", path],
        "diff": ["diff", path, changed],
        # The first 2 us: the same dynamics (and steps) at every chain length.
        "settle": ["settle", path, "--probe", out, "--probe", "o1", "--points", "101", "--to", "2us"],
        "ac1": ["ac", path, "--probe", out, "--at", "1k"],
        "sens": ["sensitivity", path, "--probe", out, "--at", "1k", "--format", "csv"],
        "checks": ["check", path, "--sensitivity"],
        "loop": ["loop", path, "--format", "csv"],
        "poles": ["poles", path],
    }


OPT_IN = {"settle", "loop", "poles"}  # run only when --only names them


def run(tacet, args):
    """Wall seconds, CPU seconds, peak RSS (MB) and exit status of one process."""
    start = time.perf_counter()
    child = subprocess.Popen([tacet] + args, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(child.pid, 0)
    seconds = time.perf_counter() - start
    child.stderr.read()
    child.stderr.close()
    code = os.waitstatus_to_exitcode(status)
    return seconds, usage.ru_utime + usage.ru_stime, usage.ru_maxrss / 1024.0, code


def main():
    args = sys.argv[1:]
    if not args:
        sys.exit(__doc__)
    repeats, only = 3, None
    inverting = "--inverting" in args
    args = [a for a in args if a != "--inverting"]
    if "--repeats" in args:
        i = args.index("--repeats")
        repeats = int(args[i + 1])
        del args[i:i + 2]
    if "--only" in args:
        i = args.index("--only")
        only = args[i + 1].split(",")
        del args[i:i + 2]
    tacet, sizes = args[0], [int(a) for a in args[1:]] or [10, 1000, 10000, 100000]
    print(f"{'elements':>9} {'command':>7} {'wall s':>9} {'cpu s':>9} {'peak MB':>8} {'x ac':>7} {'exit':>4}")
    with tempfile.TemporaryDirectory() as folder:
        for size in sizes:
            text = gen_chain.netlist(size, inverting=inverting)
            path = os.path.join(folder, f"chain_{size}.tacet")
            changed = os.path.join(folder, f"chain_{size}_b.tacet")
            with open(path, "w") as f:
                f.write(text)
            with open(changed, "w") as f:
                f.write(re.sub(r"res RF0 \(a0, fb0\) (\d+)k", r"res RF0 (a0, fb0) \g<1>.2k", text))  # both kinds
            ac_seconds = None
            for name, argv in commands(path, changed, output_node(text)).items():
                if only and name not in only and name != "ac":
                    continue
                if name in OPT_IN and not (only and name in only):
                    continue
                best = min((run(tacet, argv) for _ in range(repeats)), key=lambda r: r[1])
                seconds, cpu, peak, code = best
                if name == "ac":
                    ac_seconds = cpu
                ratio = cpu / ac_seconds if ac_seconds else float("nan")
                print(f"{size:>9} {name:>7} {seconds:>9.3f} {cpu:>9.3f} {peak:>8.1f} {ratio:>7.2f}"
                      f" {code:>4}", flush=True)


if __name__ == "__main__":
    main()
