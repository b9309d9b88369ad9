#!/usr/bin/env python3
"""Mutation fuzzer for tacet: mutants of the bundled netlists through every command.

Each mutant is written into a copy of netlists/ (so includes resolve) and run through
every command that reads a netlist (show, ac, noise, bias, check, diff, report, loop,
poles, settle, spread, sensitivity, rank) with a per-run timeout. A run passes when it ends in
time with an exit status tacet documents (0, 1, 2 or 3) and prints no sanitizer
report. Anything else (a crash, exit 70, a hang, "runtime error:" from UBSan,
"AddressSanitizer" from ASan) is a failure; the mutant is kept in --keep for replay:

    tests/fuzz/fuzz_netlists.py --tacet build-asan/tacet --mutants 20000 --seed 7

CI runs a few thousand runs of it against the sanitizer build (.ci/test.sh).
"""
import argparse
import os
import random
import shutil
import subprocess
import sys
import tempfile

ALLOWED = {0, 1, 2, 3}

# Pieces a mutation may insert: the language's own words and the bytes that
# broke it before (no-break space, truncated UTF-8, NUL, huge numbers, nesting).
TOKENS = [
    "res", "cap", "ind", "vsrc", "isrc", "vcvs", "vccs", "opamp", "model", "block", "use",
    "spec", "param", "include", "title", "supply", "ambient", "gnd", "(", ")", "{", "}",
    ",", ";", "=", "+", "-", "*", "/", "^", "#", "\\\n", "\"", "1k", "10n", "1e999", "1e-320",
    "1e308", "-1", "0", "tol=1%", "ac=1", "dc=1", "level=2Vrms", "gbw", "aol", "vos",
    "1MHz", "kohm", "\xc2\xb5", "\xce\xa9", "\xc2\xa0", "\xc2", "\xff", "\x00", "\t", "\r\n",
    "sqrt(", "((((((((((", "-----", "2^2^2^2^", "min=", "max=", "from=", "to=", "ref=",
]
# Written as latin-1 so that "\xc2\xa0" is the two bytes C2 A0 (U+00A0 in UTF-8).
TOKEN_BYTES = [t.encode("latin-1") for t in TOKENS]
# Every command that reads a netlist. "{pristine}" stands for the unmutated seed
# file, so diff compares a mutant against the revision it came from.
COMMANDS = [
    ["show"],
    ["ac", "--probe", "out", "--per-decade", "3"],
    ["ac", "--probe", "out", "--per-decade", "2", "--format", "svg", "--threads", "2"],
    ["noise", "--probe", "out", "--from", "10", "--to", "10k", "--per-decade", "2"],
    ["bias"],
    ["check", "--threads", "2"],
    ["check", "--sensitivity", "--top", "2"],
    ["diff", "{pristine}"],
    ["report"],
    ["loop", "--per-decade", "3"],
    ["poles"],
    ["settle", "--probe", "out"],
    ["spread", "--runs", "8", "--threads", "2"],
    ["spread", "--runs", "4", "--corners"],
    ["sensitivity", "--probe", "out", "--at", "1kHz"],
    ["rank", "--slot", "U1"],
]


def mutate(data: bytes, rng: random.Random, corpus: list) -> bytes:
    out = bytearray(data)
    for _ in range(rng.randint(1, 6)):
        op = rng.randrange(7)
        at = rng.randrange(len(out) + 1) if out else 0
        if op == 0 and out:  # flip a byte
            out[min(at, len(out) - 1)] = rng.randrange(256)
        elif op == 1:  # insert a token
            out[at:at] = rng.choice(TOKEN_BYTES)
        elif op == 2 and out:  # delete a span
            end = min(len(out), at + rng.randint(1, 40))
            del out[at:end]
        elif op == 3:  # duplicate a line
            lines = out.split(b"\n")
            if lines:
                i = rng.randrange(len(lines))
                lines.insert(i, lines[i])
                out = bytearray(b"\n".join(lines))
        elif op == 4:  # splice a line from another netlist
            other = rng.choice(corpus).split(b"\n")
            out[at:at] = rng.choice(other) + b"\n"
        elif op == 5:  # raw byte soup
            out[at:at] = bytes(rng.randrange(256) for _ in range(rng.randint(1, 4)))
        else:  # repeat a token many times (depth and length attacks)
            out[at:at] = rng.choice(TOKEN_BYTES) * rng.randint(50, 3000)
    return bytes(out)


def run(tacet, args, timeout):
    try:
        p = subprocess.run([tacet] + args, capture_output=True, timeout=timeout)
    except subprocess.TimeoutExpired:
        return "timeout", b""
    err = p.stderr
    if b"AddressSanitizer" in err or b"runtime error:" in err or b"LeakSanitizer" in err:
        return "sanitizer", err
    if p.returncode not in ALLOWED:
        return f"exit {p.returncode}", err
    return None, err


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--tacet", required=True)
    ap.add_argument("--netlists", default=os.path.join(os.path.dirname(__file__), "..", "..", "netlists"))
    ap.add_argument("--mutants", type=int, default=500)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--timeout", type=float, default=20.0)
    ap.add_argument("--keep", default="fuzz-failures")
    a = ap.parse_args()

    rng = random.Random(a.seed)
    work = tempfile.mkdtemp(prefix="tacet-fuzz-")
    tree = os.path.join(work, "netlists")
    shutil.copytree(a.netlists, tree)
    seeds = []
    for root, _, files in os.walk(tree):
        seeds += [os.path.join(root, f) for f in files if f.endswith(".tacet")]
    seeds.sort()
    corpus = [open(p, "rb").read() for p in seeds]
    pristine_tree = os.path.join(work, "pristine")
    shutil.copytree(a.netlists, pristine_tree)
    failures = 0
    runs = 0
    for i in range(a.mutants):
        k = rng.randrange(len(seeds))
        target = seeds[k]
        mutant = mutate(corpus[k], rng, corpus)
        with open(target, "wb") as f:
            f.write(mutant)
        pristine = os.path.join(pristine_tree, os.path.relpath(target, tree))
        command = [pristine if w == "{pristine}" else w for w in rng.choice(COMMANDS)]
        runs += 1
        problem, err = run(a.tacet, command[:1] + [target] + command[1:], a.timeout)
        if problem:
            failures += 1
            os.makedirs(a.keep, exist_ok=True)
            name = os.path.join(a.keep, f"mutant-{a.seed}-{i}.tacet")
            with open(name, "wb") as f:
                f.write(mutant)
            print(f"FAIL ({problem}): tacet {' '.join(command[:1] + [name] + command[1:])}")
            print(err.decode("utf-8", "replace")[-2000:])
        with open(target, "wb") as f:
            f.write(corpus[k])
    shutil.rmtree(work)
    print(f"fuzz: {runs} runs, {failures} failures (seed {a.seed})")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
