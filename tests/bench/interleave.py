#!/usr/bin/python3
"""Times commands against a reference command, interleaved, and prints ratios.

Usage:
  interleave.py --pairs N --ref NAME 'SHELL COMMAND' --cmd NAME 'SHELL COMMAND' [--cmd ...]

Each round runs the reference and every other command once, in an order that
alternates between rounds (so neither side always runs on a warmer or colder
machine), each under GNU time for its wall time and peak resident memory.
The machine may be shared and noisy: what counts is the ratio of each
command to the reference within the same round. Prints every round's times,
then per command the ratio's minimum and median over the rounds, and its
peak memory. Output of the commands goes to /dev/null; a command that fails
stops the run.
"""
import argparse
import statistics
import subprocess
import sys
import tempfile


def timed(command):
    """(wall seconds, peak RSS in MiB) of one run of a shell command."""
    with tempfile.NamedTemporaryFile("r", suffix=".time") as t:
        p = subprocess.run(["/usr/bin/time", "-f", "%e %M", "-o", t.name, "sh", "-c", command],
                           stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
        if p.returncode != 0:
            sys.exit(f"failed ({p.returncode}): {command}\n{p.stderr}")
        wall, kib = t.read().split()[-2:]
        return float(wall), int(kib) / 1024


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--pairs", type=int, default=3)
    ap.add_argument("--ref", nargs=2, metavar=("NAME", "COMMAND"), required=True)
    ap.add_argument("--cmd", nargs=2, metavar=("NAME", "COMMAND"), action="append", required=True)
    a = ap.parse_args()
    if a.pairs < 3:
        sys.exit("--pairs: at least 3 rounds are needed for a median worth the name")
    commands = [tuple(a.ref)] + [tuple(c) for c in a.cmd]
    times = {name: [] for name, _ in commands}
    peak = {name: 0.0 for name, _ in commands}
    for r in range(a.pairs):
        order = commands if r % 2 == 0 else commands[::-1]
        for name, command in order:
            wall, mib = timed(command)
            times[name].append(wall)
            peak[name] = max(peak[name], mib)
        print(f"round {r + 1}: " + ", ".join(f"{n} {times[n][-1]:.2f} s" for n, _ in commands),
              flush=True)
    ref = commands[0][0]
    print(f"\n{'command':<28} {'min s':>8} {'median s':>9} {'ratio min':>10} "
          f"{'ratio median':>13} {'peak MiB':>9}")
    for name, _ in commands:
        ratios = [t / r for t, r in zip(times[name], times[ref])]
        print(f"{name:<28} {min(times[name]):8.2f} {statistics.median(times[name]):9.2f} "
              f"{min(ratios):10.3f} {statistics.median(ratios):13.3f} {peak[name]:9.1f}")


if __name__ == "__main__":
    main()
