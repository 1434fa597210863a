#!/usr/bin/python3
"""Times commands against a reference command, interleaved, and prints ratios.

Usage:
  interleave.py --pairs N [--repeat K] --ref NAME 'SHELL COMMAND' --cmd NAME 'SHELL COMMAND' [--cmd ...]

Each round runs the reference and every other command once, in an order that
alternates between rounds (so neither side always runs on a warmer or colder
machine), each under GNU time for its wall time, its processor time (user + system)
and its peak resident memory.
The machine may be shared and noisy: what counts is the ratio of each
command to the reference within the same round. Prints every round's times,
then per command the ratio's minimum and median over the rounds, and its
peak memory. The same ratios of processor time follow: on a machine that
other work keeps busy, wall time also counts the time a command waited for a
core, and processor time does not. Output of the commands goes to
/dev/null; a command that fails stops the run. --record FILE LABEL appends one
tab-separated line per command to FILE (label, command, processor time's
ratio minimum and median, the command's median processor seconds, wall
time's ratio median, peak MiB) for a table over several runs
(scaling_table.py). --repeat K runs each command K
times back to back inside one measurement and reports the time of one run:
for commands of a few tens of milliseconds, which GNU time's 10 ms steps
would otherwise blur.
"""
import argparse
import statistics
import subprocess
import sys
import tempfile


def timed(command, repeat=1):
    """(wall seconds, processor seconds, peak RSS in MiB) of one run of a shell command,
    averaged over `repeat` runs made back to back."""
    if repeat > 1:
        command = f"i=0; while [ $i -lt {repeat} ]; do {command} || exit $?; i=$((i + 1)); done"
    with tempfile.NamedTemporaryFile("r", suffix=".time") as t:
        p = subprocess.run(["/usr/bin/time", "-f", "%e %U %S %M", "-o", t.name, "sh", "-c", command],
                           stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
        if p.returncode != 0:
            sys.exit(f"failed ({p.returncode}): {command}\n{p.stderr}")
        wall, user, system, kib = t.read().split()[-4:]
        return float(wall) / repeat, (float(user) + float(system)) / repeat, int(kib) / 1024


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--pairs", type=int, default=3)
    ap.add_argument("--repeat", type=int, default=1)
    ap.add_argument("--ref", nargs=2, metavar=("NAME", "COMMAND"), required=True)
    ap.add_argument("--cmd", nargs=2, metavar=("NAME", "COMMAND"), action="append", required=True)
    ap.add_argument("--record", nargs=2, metavar=("FILE", "LABEL"))
    a = ap.parse_args()
    if a.pairs < 3:
        sys.exit("--pairs: at least 3 rounds are needed for a median worth the name")
    commands = [tuple(a.ref)] + [tuple(c) for c in a.cmd]
    times = {name: [] for name, _ in commands}
    cpu = {name: [] for name, _ in commands}
    peak = {name: 0.0 for name, _ in commands}
    for r in range(a.pairs):
        order = commands if r % 2 == 0 else commands[::-1]
        for name, command in order:
            wall, processor, mib = timed(command, a.repeat)
            times[name].append(wall)
            cpu[name].append(processor)
            peak[name] = max(peak[name], mib)
        print(f"round {r + 1}: " + ", ".join(f"{n} {times[n][-1]:.3f} s" for n, _ in commands),
              flush=True)
    ref = commands[0][0]
    for title, series in (("wall time", times), ("processor time", cpu)):
        print(f"\n{title}\n{'command':<28} {'min s':>8} {'median s':>9} {'ratio min':>10} "
              f"{'ratio median':>13} {'peak MiB':>9}")
        for name, _ in commands:
            # A reference too quick to register (0.00 s) counts as one step of GNU time.
            ratios = [t / max(r, 0.01 / a.repeat) for t, r in zip(series[name], series[ref])]
            print(f"{name:<28} {min(series[name]):8.3f} {statistics.median(series[name]):9.3f} "
                  f"{min(ratios):10.3f} {statistics.median(ratios):13.3f} {peak[name]:9.1f}")
    if a.record:
        floor = 0.01 / a.repeat
        with open(a.record[0], "a") as f:
            for name, _ in commands:
                cpu_ratios = [t / max(r, floor) for t, r in zip(cpu[name], cpu[ref])]
                wall_ratios = [t / max(r, floor) for t, r in zip(times[name], times[ref])]
                f.write(f"{a.record[1]}\t{name}\t{min(cpu_ratios):.3f}\t"
                        f"{statistics.median(cpu_ratios):.3f}\t{statistics.median(cpu[name]):.3f}\t"
                        f"{statistics.median(wall_ratios):.3f}\t{peak[name]:.1f}\n")


if __name__ == "__main__":
    main()
