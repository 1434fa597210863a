#!/usr/bin/python3
"""Invented market data for the propose benchmark, in keel's CSV layouts.

Writes into OUT_DIR:
  securities.csv  N invented stocks (symbols P0000..), five invented sectors
  prices.csv      one close per stock per month end for Y years
  metrics.csv     one 'pe' figure per stock per month end, known 15-45 days
                  later; about one in twenty is not positive
Same arguments, same bytes (random.Random(seed)); standard library only.
"""
import argparse
import datetime as dt
import os
import random


def month_ends(start_year, years):
    for y in range(start_year, start_year + years):
        for m in range(1, 13):
            nxt = dt.date(y + (m == 12), m % 12 + 1, 1)
            yield nxt - dt.timedelta(days=1)


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("out_dir")
    ap.add_argument("--securities", type=int, default=3000)
    ap.add_argument("--years", type=int, default=20)
    ap.add_argument("--start-year", type=int, default=2004)
    ap.add_argument("--seed", type=int, default=7)
    a = ap.parse_args()
    rng = random.Random(a.seed)
    os.makedirs(a.out_dir, exist_ok=True)
    symbols = [f"P{i:04d}" for i in range(a.securities)]
    sectors = ["Tools", "Power", "Care", "Goods", "Transport"]
    with open(os.path.join(a.out_dir, "securities.csv"), "w", newline="") as f:
        f.write("symbol,name,kind,currency,lot_size,sector\n")
        for i, s in enumerate(symbols):
            f.write(f"{s},Invented Holding {i},stock,USD,1,{sectors[i % 5]}\n")
    ends = list(month_ends(a.start_year, a.years))
    cents = [rng.randint(500, 40000) for _ in symbols]
    with open(os.path.join(a.out_dir, "prices.csv"), "w", newline="") as p, \
            open(os.path.join(a.out_dir, "metrics.csv"), "w", newline="") as m:
        p.write("date,symbol,close\n")
        m.write("date,symbol,metric,value,known_on\n")
        for me in ends:
            plines, mlines = [], []
            for i, s in enumerate(symbols):
                cents[i] = max(100, cents[i] + cents[i] * rng.randint(-800, 820) // 10000)
                plines.append(f"{me},{s},{cents[i] // 100}.{cents[i] % 100:02d}\n")
                pe = rng.randint(-200, 6000) / 100 if rng.random() < 0.05 else rng.randint(300, 6000) / 100
                known = me + dt.timedelta(days=rng.randint(15, 45))
                mlines.append(f"{me},{s},pe,{pe},{known}\n")
            p.write("".join(plines))
            m.write("".join(mlines))


if __name__ == "__main__":
    main()
