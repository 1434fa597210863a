#!/usr/bin/python3
"""Deterministic invented market data in keel's canonical CSV layouts.

Writes into OUT_DIR:
  securities.csv     N invented securities (symbols K0000.. , names made up)
  prices.csv         one close per security per weekday for Y years
  metrics.csv        monthly 'book_per_share' and 'earnings_yield' figures,
                     known 20-50 days after the month ends; every 7th figure
                     is restated 30 days later
  distributions.csv  quarterly cash distributions for every third security
  splits.csv         a two-for-one split for every 50th security

Same arguments, same bytes (random.Random(seed)); standard library only.
Rows are ordered by date, then symbol, as a daily data feed would send them.
"""
import argparse
import datetime as dt
import os
import random

SYLLABLES = ["qa", "ro", "vel", "mor", "tan", "lix", "dor", "ne", "sa", "pyr", "ul", "ven"]


def weekdays(start, years):
    day = start
    end = dt.date(start.year + years, start.month, start.day)
    while day < end:
        if day.weekday() < 5:
            yield day
        day += dt.timedelta(days=1)


def month_ends(start, years):
    y, m = start.year, start.month
    for _ in range(12 * years):
        nxt = dt.date(y + (m == 12), m % 12 + 1, 1)
        yield nxt - dt.timedelta(days=1)
        y, m = nxt.year, nxt.month


def money(cents):
    return f"{cents // 100}.{cents % 100:02d}"


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("out_dir")
    ap.add_argument("--securities", type=int, default=100)
    ap.add_argument("--years", type=int, default=2)
    ap.add_argument("--seed", type=int, default=20240101)
    ap.add_argument("--start", default="2010-01-04")
    ap.add_argument("--prices-only", action="store_true")
    a = ap.parse_args()
    rng = random.Random(a.seed)
    os.makedirs(a.out_dir, exist_ok=True)
    start = dt.date.fromisoformat(a.start)
    symbols = [f"K{i:04d}" for i in range(a.securities)]

    with open(os.path.join(a.out_dir, "securities.csv"), "w", newline="") as f:
        f.write("symbol,name,kind,currency,lot_size,sector\n")
        sectors = ["Tools", "Power", "Care", "Goods", "Transport"]
        for i, s in enumerate(symbols):
            name = "".join(rng.choice(SYLLABLES) for _ in range(3)).capitalize()
            kind = "fund" if i % 10 == 9 else "stock"
            f.write(f'{s},"{name} Invented, Ltd.",{kind},USD,1,{sectors[i % 5]}\n')

    cents = [rng.randint(500, 50000) for _ in symbols]
    with open(os.path.join(a.out_dir, "prices.csv"), "w", newline="") as f:
        f.write("date,symbol,close\n")
        for day in weekdays(start, a.years):
            d = day.isoformat()
            lines = []
            for i, s in enumerate(symbols):
                c = cents[i] + cents[i] * rng.randint(-200, 205) // 10000
                cents[i] = max(c, 1)
                lines.append(f"{d},{s},{money(cents[i])}\n")
            f.write("".join(lines))
    if a.prices_only:
        return

    with open(os.path.join(a.out_dir, "metrics.csv"), "w", newline="") as f:
        f.write("date,symbol,metric,value,known_on\n")
        n = 0
        for me in month_ends(start, a.years):
            for s in symbols:
                for metric in ("book_per_share", "earnings_yield"):
                    known = me + dt.timedelta(days=rng.randint(20, 50))
                    v = rng.randint(-500, 5000)
                    f.write(f"{me},{s},{metric},{v / 100},{known}\n")
                    n += 1
                    if n % 7 == 0:
                        later = known + dt.timedelta(days=30)
                        f.write(f"{me},{s},{metric},{(v + rng.randint(-50, 50)) / 100},{later}\n")

    with open(os.path.join(a.out_dir, "distributions.csv"), "w", newline="") as f:
        f.write("ex_date,pay_date,symbol,per_share\n")
        for q, me in enumerate(month_ends(start, a.years)):
            if q % 3 != 2:
                continue
            for i, s in enumerate(symbols):
                if i % 3 == 0:
                    ex = me - dt.timedelta(days=10)
                    pay = ex + dt.timedelta(days=14)
                    f.write(f"{ex},{pay},{s},{rng.randint(5, 90) / 100}\n")

    with open(os.path.join(a.out_dir, "splits.csv"), "w", newline="") as f:
        f.write("date,symbol,ratio\n")
        for i, s in enumerate(symbols):
            if i % 50 == 7:
                f.write(f"{start + dt.timedelta(days=200 + i)},{s},2\n")


if __name__ == "__main__":
    main()
