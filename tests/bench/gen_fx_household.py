"""Writes an invented household ledger for timing a translated `keel statement`.

Usage: gen_fx_household.py KEEL_BIN LEDGER_PATH mixed|single [ACCOUNTS]

ACCOUNTS accounts (default 4) over 2023-2024, each trading four invented stocks of its own
currency with daily closes: monthly deposits, buys, quarterly dividends and some sells, through
`keel import`. "mixed": half the accounts and their stocks in dollars, the ledger in euros, with
a daily EUR/USD rate, so the statement translates (one build for the household and one for each
account). "single": the same rows, everything in euros (one build).
"""
import csv
import datetime as dt
import math
import os
import random
import subprocess
import sys

KEEL, PATH, MODE = sys.argv[1], sys.argv[2], sys.argv[3]
N_ACCOUNTS = int(sys.argv[4]) if len(sys.argv) > 4 else 4
folder = os.path.dirname(PATH)


def keel(*args):
    subprocess.run([KEEL, "--db", PATH, *args], check=True, capture_output=True)


def write(name, header, rows):
    path = os.path.join(folder, name)
    with open(path, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(header)
        w.writerows(rows)
    return path


rng = random.Random(15)
days = [dt.date(2023, 1, 2) + dt.timedelta(days=i) for i in range(730)]
days = [d for d in days if d.weekday() < 5]
accounts = {f"House {i}": ("USD" if MODE == "mixed" and i % 2 else "EUR") for i in range(N_ACCOUNTS)}
keel("init", "--currency", "EUR")
securities = {}
for a, code in accounts.items():
    keel("account", "add", a, "--currency", code)
    for k in range(4):
        s = f"H{a[-1]}S{k}"
        securities[s] = (a, code)
        keel("security", "add", s, "--name", f"Invented Works {s}", "--kind", "stock",
             "--currency", code)
closes, price_rows = {}, []
for s in securities:
    level = rng.uniform(20, 120)
    for d in days:
        level = max(1.0, level * math.exp(rng.gauss(0.0002, 0.012)))
        closes[(s, d)] = round(level, 2)
        price_rows.append((d.isoformat(), s, f"{closes[(s, d)]:.2f}"))
keel("import", "prices", write("closes.csv", ["date", "symbol", "close"], price_rows), "--quiet")
if MODE == "mixed":
    rate, rate_rows = 1.08, []
    for d in [dt.date(2022, 12, 30)] + days:
        rate *= math.exp(rng.gauss(0, 0.004))
        rate_rows.append((d.isoformat(), "EUR", "USD", f"{rate:.4f}"))
    keel("import", "fx", write("rates.csv", ["date", "base", "quote", "rate"], rate_rows),
         "--quiet")
rows = []
held = {s: 0 for s in securities}
for m, d in enumerate(d for i, d in enumerate(days) if i == 0 or days[i - 1].month != d.month):
    for a in accounts:
        rows.append((d.isoformat(), a, "deposit", "", "", "", "3000", ""))
        for s in (s for s, (owner, _) in securities.items() if owner == a):
            q = int(600 / closes[(s, d)])
            rows.append((d.isoformat(), a, "buy", s, str(q), f"{closes[(s, d)]:.2f}", "", "1"))
            held[s] += q
            if m % 3 == 2:
                rows.append((d.isoformat(), a, "dividend", s, "", "", "12.50", ""))
            if m % 4 == 3 and held[s] > 4:
                rows.append((d.isoformat(), a, "sell", s, "2", f"{closes[(s, d)]:.2f}", "", "1"))
                held[s] -= 2
keel("import", "transactions", write(
    "trades.csv", ["date", "account", "kind", "symbol", "quantity", "price", "amount", "fee"],
    rows))
