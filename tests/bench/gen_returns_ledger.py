"""Writes an invented 20-year daily ledger for timing `keel returns`.

Usage: gen_returns_ledger.py KEEL_BIN LEDGER_PATH [--securities 50] [--years 20]
                             [--transactions 20000]

The ledger's years end on 2024-12-31 and start on 3 January of the first
year; the defaults make the 20-year ledger of the other benchmarks, byte for
byte.

Accounts and securities go through the keel binary; the 20,000 transactions
and the daily closes of 50 securities are written straight into the ledger's
tables with Python's sqlite3 module (a stand-in for bulk import, which keel
does not have yet). The generator keeps its own books so every sell is
covered and no account's cash goes negative; keel replays and checks it all
when it reads the ledger.
"""
import argparse
import datetime as dt
import math
import random
import sqlite3
import subprocess
from decimal import Decimal, ROUND_FLOOR, ROUND_HALF_EVEN

ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
ap.add_argument("keel")
ap.add_argument("path")
ap.add_argument("--securities", type=int, default=50)
ap.add_argument("--years", type=int, default=20)
ap.add_argument("--transactions", type=int, default=20000)
args = ap.parse_args()
KEEL, PATH = args.keel, args.path
N_SEC, N_TXN = args.securities, args.transactions
END = dt.date(2024, 12, 31)
START = dt.date(END.year - args.years + 1, 1, 3)
ACCOUNTS = ["Bench Main", "Bench Spare"]
CENT = Decimal("0.01")


def keel(*args):
    subprocess.run([KEEL, "--db", PATH, *args], check=True, capture_output=True)


def canon(d):
    return format(d.normalize(), "f")


keel("init", "--currency", "USD")
for a in ACCOUNTS:
    keel("account", "add", a)
symbols = [f"SYN{i:02d}" for i in range(N_SEC)]
for s in symbols:
    keel("security", "add", s, "--name", f"Synthetic Works {s}", "--kind", "stock")

rng = random.Random(4242)
days = []
d = START
while d <= END:
    if d.weekday() < 5:
        days.append(d)
    d += dt.timedelta(days=1)

con = sqlite3.connect(PATH)
ids = dict((s, i) for i, s in con.execute("SELECT id, symbol FROM security"))
acct = dict((n, i) for i, n in con.execute("SELECT id, name FROM account"))

closes = {}
rows = []
for s in symbols:
    level = rng.uniform(20, 200)
    closes[s] = {}
    for d in days:
        level = max(1.0, level * math.exp(rng.gauss(0.0002, 0.015)))
        c = Decimal(repr(level)).quantize(CENT, rounding=ROUND_HALF_EVEN)
        closes[s][d] = c
        rows.append((ids[s], d.isoformat(), canon(c)))
con.executemany("INSERT INTO price (security_id, date, close) VALUES (?, ?, ?)", rows)

cash = {a: Decimal(0) for a in ACCOUNTS}
held = {a: {s: Decimal(0) for s in symbols} for a in ACCOUNTS}
txns = []
now = "2025-01-01T00:00:00Z"
per_day = N_TXN / len(days)
carry = 0.0
for d in days:
    carry += per_day
    while carry >= 1 and len(txns) < N_TXN:
        carry -= 1
        a = rng.choice(ACCOUNTS)
        s = rng.choice(symbols)
        price = closes[s][d]
        roll = rng.random()
        if cash[a] < 5000 or roll < 0.15:
            amt = Decimal(rng.randint(2000, 20000))
            cash[a] += amt
            txns.append((acct[a], d.isoformat(), "deposit", None, None, None, canon(amt), "0"))
        elif roll < 0.25 and held[a][s] > 0:
            q = (held[a][s] / 2).to_integral_value(rounding=ROUND_FLOOR) or held[a][s]
            held[a][s] -= q
            cash[a] += q * price - 1
            txns.append((acct[a], d.isoformat(), "sell", ids[s], canon(q), canon(price), None, "1"))
        elif roll < 0.30:
            amt = (cash[a] / 10).quantize(CENT, rounding=ROUND_FLOOR)
            cash[a] -= amt
            txns.append((acct[a], d.isoformat(), "withdrawal", None, None, None, canon(amt), "0"))
        elif roll < 0.38 and any(held[a].values()):
            held_s = [x for x in symbols if held[a][x] > 0]
            x = rng.choice(held_s)
            amt = (held[a][x] * Decimal("0.3")).quantize(CENT, rounding=ROUND_HALF_EVEN)
            if amt > 0:
                cash[a] += amt
                txns.append((acct[a], d.isoformat(), "dividend", ids[x], None, None, canon(amt),
                             "0"))
        else:
            q = ((cash[a] * Decimal("0.2") - 1) / price).to_integral_value(rounding=ROUND_FLOOR)
            if q > 0:
                held[a][s] += q
                cash[a] -= q * price + 1
                txns.append((acct[a], d.isoformat(), "buy", ids[s], canon(q), canon(price), None,
                             "1"))
        assert cash[a] >= 0
con.executemany(
    "INSERT INTO txn (account_id, date, kind, security_id, quantity, price, amount, fee, "
    "recorded_at) VALUES (?, ?, ?, ?, ?, ?, ?, ?, '" + now + "')", txns)
con.commit()
con.close()
print(f"{len(txns)} transactions, {len(rows)} closes of {N_SEC} securities, "
      f"{days[0]} to {days[-1]}")
