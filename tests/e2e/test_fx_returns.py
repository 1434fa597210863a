"""Returns of a euro household with a dollar stock and dollar cash, checked against pandas.

An invented two-currency ledger: a EUR account, a USD stock, USD cash bought by an exchange, a
USD dividend, a USD deposit and a EUR withdrawal. The daily value series in euros is recomputed
here with pandas (Debian's python3-pandas) from the raw CSVs alone: closes and EUR/USD rates
forward-filled onto every calendar day, each day's dollar holdings (cash plus units x close)
divided by that day's rate and rounded once to the cent, half to even (keel's stated method,
perf/ledger_series.h), euro cash added. The true time-weighted return is then linked from it
with the definition in docs/methods-returns.md, r_t = (V_t + O_t) / (V_{t-1} + I_t) - 1.
keel's `returns --json` must agree: every day's closing value to the cent, the TWR to 1e-9.
"""
import os
import sys
from decimal import Decimal

import pandas as pd

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, check, equal, write_csv_files  # noqa: E402

FROM, TO = "2025-03-03", "2025-04-30"

# EUR/USD (dollars per euro), invented; business days only, some missing.
RATE_ROWS = [("2025-03-03", "1.0412"), ("2025-03-04", "1.0480"), ("2025-03-05", "1.0561"),
             ("2025-03-07", "1.0833"), ("2025-03-12", "1.0902"), ("2025-03-14", "1.0875"),
             ("2025-03-19", "1.0918"), ("2025-03-20", "1.0844"), ("2025-03-26", "1.0790"),
             ("2025-04-01", "1.0805"), ("2025-04-08", "1.0962"), ("2025-04-15", "1.1347"),
             ("2025-04-23", "1.1398"), ("2025-04-29", "1.1386")]
# Quintara Optics (invented), dollars.
CLOSE_ROWS = [("2025-03-05", "101.40"), ("2025-03-06", "99.85"), ("2025-03-07", "100.10"),
              ("2025-03-11", "97.35"), ("2025-03-14", "98.20"), ("2025-03-18", "103.05"),
              ("2025-03-21", "104.90"), ("2025-03-27", "102.15"), ("2025-04-02", "99.60"),
              ("2025-04-04", "92.30"), ("2025-04-09", "96.75"), ("2025-04-16", "94.10"),
              ("2025-04-24", "98.45"), ("2025-04-30", "101.85")]
COLUMNS = ["date", "account", "kind", "symbol", "quantity", "price", "amount", "fee", "ref",
           "currency", "rate", "to_currency"]
TXNS = [  # date, kind, symbol, quantity, price, amount, fee, currency, rate, to_currency
    ("2025-03-03", "deposit", "", "", "", "10000", "", "", "", ""),
    ("2025-03-04", "exchange", "", "", "", "4000", "3.00", "EUR", "1.0480", "USD"),
    ("2025-03-05", "buy", "QNT", "30", "101.20", "", "1.00", "", "", ""),
    ("2025-03-14", "dividend", "QNT", "", "", "12.60", "", "", "", ""),
    ("2025-03-20", "deposit", "", "", "", "500", "", "USD", "", ""),
    ("2025-04-01", "withdrawal", "", "", "", "200", "", "", "", ""),
    ("2025-04-10", "buy", "QNT", "5", "95.00", "", "", "", "", ""),
]


led = Ledger(currency="EUR")
led.ok("account", "add", "Depot")
led.ok("security", "add", "QNT", "--name", "Quintara Optics", "--kind", "stock",
       "--currency", "USD")
files = write_csv_files(led.dir.name, (
        ("rates.csv", ["date", "base", "quote", "rate"], [(d, "EUR", "USD", r) for d, r in RATE_ROWS]),
        ("closes.csv", ["date", "symbol", "close"], [(d, "QNT", c) for d, c in CLOSE_ROWS]),
        ("trades.csv", COLUMNS, [(d, "Depot", k, s, q, p, a, f, "", c, r, to)
                                 for d, k, s, q, p, a, f, c, r, to in TXNS])))
led.ok("import", "fx", files["rates.csv"], "--quiet")
led.ok("import", "prices", files["closes.csv"], "--quiet")
led.ok("import", "transactions", files["trades.csv"])

# --- The independent recomputation, from the three CSV files only (pandas). ---
days = pd.date_range(pd.Timestamp(FROM) - pd.Timedelta(days=1), TO, freq="D")
rates = pd.read_csv(files["rates.csv"], parse_dates=["date"]).set_index("date")["rate"]
closes = pd.read_csv(files["closes.csv"], parse_dates=["date"]).set_index("date")["close"]
trades = pd.read_csv(files["trades.csv"], parse_dates=["date"], keep_default_na=False)
grid = pd.DataFrame(index=days)
grid["rate"] = rates.reindex(days).ffill()        # the latest rate on or before the day
grid["close"] = closes.reindex(days).ffill()      # the latest close on or before the day
for col in ("eur", "usd", "units", "inflow", "outflow"):
    grid[col] = 0.0


def num(x):
    return float(x) if x != "" else 0.0


for _, t in trades.iterrows():
    d, cur = t["date"], (t["currency"] or "EUR")
    amount, fee = num(t["amount"]), num(t["fee"])
    if t["kind"] == "deposit":
        grid.loc[d:, cur.lower()] += amount
        grid.loc[d, "inflow"] += amount if cur == "EUR" else round(amount / grid.at[d, "rate"], 2)
    elif t["kind"] == "withdrawal":
        grid.loc[d:, cur.lower()] -= amount
        grid.loc[d, "outflow"] += amount if cur == "EUR" else round(amount / grid.at[d, "rate"], 2)
    elif t["kind"] == "exchange":  # EUR into USD at the broker's rate, fee in EUR
        grid.loc[d:, "eur"] -= amount + fee
        grid.loc[d:, "usd"] += round(amount * float(t["rate"]), 2)
    elif t["kind"] == "buy":  # QNT, paid from dollar cash
        grid.loc[d:, "usd"] -= num(t["quantity"]) * num(t["price"]) + fee
        grid.loc[d:, "units"] += num(t["quantity"])
    elif t["kind"] == "dividend":  # kept in dollars
        grid.loc[d:, "usd"] += amount
dollars = (grid["usd"] + grid["units"] * grid["close"].fillna(0.0)) / grid["rate"]
dollars = dollars.where((grid["usd"] != 0) | (grid["units"] != 0), 0.0)  # none held yet
# keel rounds half to even on the exact decimal; a tie within 1e-6 of a half cent could round
# either way in binary, so the data must have none.
frac = (dollars * 100) % 1
check(((frac - 0.5).abs() > 1e-6).all(), "a dollar total lies on a half cent; change the data")
grid["value"] = grid["eur"] + dollars.round(2)
r = (grid["value"] + grid["outflow"]) / (grid["value"].shift(1) + grid["inflow"]) - 1
base = grid["value"].shift(1) + grid["inflow"]
twr = float((1 + r[1:].where(base[1:] > 0, 0.0)).prod() - 1)

# --- keel, the period and each day's closing value. ---
rep = led.json("returns", "--from", FROM, "--to", TO)
equal(Decimal(rep["opening_value"]), Decimal("0"), "opening value")
closing = Decimal(rep["closing_value"])
check(abs(float(closing) - grid["value"].iloc[-1]) < 0.005,
      f"closing value {closing} against pandas {grid['value'].iloc[-1]:.2f}")
check(abs(float(rep["twr"]) - twr) < 1e-9, f"TWR {rep['twr']} against pandas {twr!r}")
equal(Decimal(rep["inflows"]), Decimal(str(round(grid["inflow"].sum(), 2))), "inflows in euros")
equal(Decimal(rep["outflows"]), Decimal(str(round(grid["outflow"].sum(), 2))), "outflows in euros")
dividend_eur = round(12.60 / grid.at[pd.Timestamp("2025-03-14"), "rate"], 2)
equal(Decimal(rep["income"]), Decimal(str(dividend_eur)), "the dollar dividend in euros")
fee_eur = round(3.00 + round(1.00 / grid.at[pd.Timestamp("2025-03-05"), "rate"], 2), 2)
equal(Decimal(rep["fees"]), Decimal(str(fee_eur)), "fees in euros")

checked = 0
for d in pd.date_range(FROM, TO, freq="D"):
    if d.dayofweek >= 5:
        continue
    day = d.strftime("%Y-%m-%d")
    v = Decimal(led.json("returns", "--from", FROM, "--to", day)["closing_value"])
    check(abs(float(v) - grid.at[d, "value"]) < 0.005,
          f"value on {day}: keel {v}, pandas {grid.at[d, 'value']:.2f}")
    checked += 1

# Identity in euros: opening value + flows + gain = closing value, where the gain is what
# pandas' own series earned apart from flows (its value change less its flows in euros).
gain = Decimal(str(round(grid["value"].iloc[-1] - grid["value"].iloc[0]
                         - grid["inflow"].sum() + grid["outflow"].sum(), 2)))
equal(Decimal(rep["opening_value"]) + Decimal(rep["inflows"]) - Decimal(rep["outflows"]) + gain,
      closing, "opening value + flows + gain = closing value")
# The months chain: each opens at the last one's close, and their flows add up to the period's.
months = led.json("returns", "--from", FROM, "--to", TO, "--monthly")["months"]
for a, b in zip(months, months[1:]):
    equal(b["opening_value"], a["closing_value"], f"{b['month']} opens at {a['month']}'s close")
equal(sum(Decimal(m["inflows"]) for m in months), Decimal(rep["inflows"]), "monthly inflows")
equal(months[-1]["closing_value"], rep["closing_value"], "the last month closes the period")

print(f"fx returns: {checked} daily values in EUR match pandas to the cent; TWR "
      f"{float(rep['twr']):.12f}, pandas {twr:.12f} (|difference| {abs(float(rep['twr']) - twr):.1e});"
      f" closing value {closing} EUR")

# A dollar stock settled in euros at the broker's rate, with no stored rate: returns cannot
# value it in euros and say which rate is missing, never assuming 1.
bare = Ledger(currency="EUR")
bare.ok("account", "add", "Depot")
bare.ok("security", "add", "QNT", "--name", "Quintara Optics", "--kind", "stock", "--currency", "USD")
bare.ok("record", "deposit", "--date", "2025-03-03", "--account", "Depot", "--amount", "1000")
bare.ok("record", "buy", "--date", "2025-03-04", "--account", "Depot", "--symbol", "QNT",
        "--quantity", "2", "--price", "100", "--rate", "1.05")
before = open(bare.path, "rb").read()
equal(bare.fails("returns", "--from", "2025-03-03", "--to", "2025-03-31"),
      "keel: error: no exchange rate for EUR/USD on or before 2025-03-04 (nor for USD/EUR, nor "
      "through a third currency); import one with 'keel import fx FILE.csv'",
      "returns without a rate for a dollar stock")
equal(open(bare.path, "rb").read(), before, "the refused report changed the ledger")
print("fx returns: a missing rate stops returns, naming the pair and the day")
