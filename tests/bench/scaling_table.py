#!/usr/bin/python3
"""Prints the figures interleave.py --record wrote over several shapes as one table.

Usage: scaling_table.py RECORD_FILE

One block per command, one line per shape (the record's label) in the order
they were measured: the processor time's ratio to the reference, minimum and
median over the rounds, the command's median processor seconds, the wall
time's median ratio and the peak resident memory. A line 'LABEL<TAB>load<TAB>
TEXT' (written by the scaling scripts before and after each shape) shows as
that shape's load averages.
"""
import sys


def main():
    rows, load, labels = {}, {}, []
    with open(sys.argv[1]) as f:
        for line in f:
            fields = line.rstrip("\n").split("\t")
            label = fields[0]
            if label not in labels:
                labels.append(label)
            if fields[1] == "load":
                load.setdefault(label, []).append(fields[2])
                continue
            rows.setdefault(fields[1], {})[label] = fields[2:]
    for command, by_label in rows.items():
        print(f"\n{command}")
        print(f"  {'shape':<14} {'cpu ratio min':>13} {'median':>7} {'cpu s':>8} "
              f"{'wall ratio med':>14} {'peak MiB':>9}  load (1, 5, 15 min) before / after")
        for label in labels:
            if label not in by_label:
                continue
            lo, med, sec, wall, mib = by_label[label]
            print(f"  {label:<14} {lo:>13} {med:>7} {sec:>8} {wall:>14} {mib:>9}  "
                  f"{' / '.join(load.get(label, []))}")


if __name__ == "__main__":
    main()
