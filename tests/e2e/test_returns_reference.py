"""End to end: `keel returns --json` against an independent recomputation.

A deterministic, invented four-year ledger (two accounts, monthly deposits,
withdrawals, buys and sells, dividends with tax withheld, interest, an
internal security transfer and an internal cash transfer, daily closes) is
generated here, posted through the keel binary, and its value and flow series
is rebuilt below from the generated events alone (not from keel's output).
From that series pandas 1.5 computes the true time-weighted return, the daily
volatility and the maximum drawdown, and scipy.optimize.brentq (scipy 1.10)
the money-weighted return; keel's figures must agree to 1e-9.

Conventions mirrored from docs/methods-returns.md: r_t = (V_t + O_t) /
(V_{t-1} + I_t) - 1 on each day with an entry (a transaction or a close);
days with a zero base are skipped; volatility = sample sd x sqrt(252) (common
practice); MWR actual/365 with the opening value as a flow on from - 1.
"""
import datetime as dt
import math
import os
import random
import sqlite3
import sys
from decimal import Decimal, ROUND_HALF_EVEN

import pandas as pd
from scipy.optimize import brentq

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, check  # noqa: E402

TOL = 1e-9
TAX, PEN = "Ridge Taxable", "Ridge Pension"
SYMBOLS = ["WREN", "HALYD", "CORVA"]
START, END = dt.date(2019, 1, 1), dt.date(2022, 12, 30)
CENT = Decimal("0.01")


def canon(d):
    """Canonical decimal text as keel stores it: no trailing zeros."""
    text = format(d.normalize(), "f")
    return text


def q2(d):
    return d.quantize(CENT, rounding=ROUND_HALF_EVEN)


def trading_days():
    d = START
    while d <= END:
        if d.weekday() < 5:
            yield d
        d += dt.timedelta(days=1)


# ---------------------------------------------------------------- generation
rng = random.Random(20240917)
days = list(trading_days())
closes = {s: {} for s in SYMBOLS}
for i, s in enumerate(SYMBOLS):
    level = 40.0 + 25 * i
    for d in days:
        shock = rng.gauss(0.0003, 0.012)
        if dt.date(2020, 2, 24) <= d <= dt.date(2020, 3, 20):
            shock -= 0.02  # an invented slump, for a drawdown
        level = max(1.0, level * math.exp(shock))
        closes[s][d] = q2(Decimal(repr(level)))


def close_on_or_before(symbol, day):
    d = day
    while d not in closes[symbol]:
        d -= dt.timedelta(days=1)
        if d < START:
            return None
    return closes[symbol][d]


def next_trading(day):
    while day.weekday() >= 5:
        day += dt.timedelta(days=1)
    return day


events = []  # dicts with date, account, kind and figures, in posting order
cash = {TAX: Decimal(0), PEN: Decimal(0)}
held = {TAX: {s: Decimal(0) for s in SYMBOLS}, PEN: {s: Decimal(0) for s in SYMBOLS}}


def post(**e):
    events.append(e)
    acct, kind = e["account"], e["kind"]
    amount = e.get("amount", Decimal(0))
    fee = e.get("fee", Decimal(0))
    if kind in ("deposit", "dividend", "interest"):
        cash[acct] += amount
    elif kind in ("withdrawal", "tax", "fee"):
        cash[acct] -= amount
    elif kind == "buy":
        cash[acct] -= e["quantity"] * e["price"] + fee
        held[acct][e["symbol"]] += e["quantity"]
    elif kind == "sell":
        cash[acct] += e["quantity"] * e["price"] - fee
        held[acct][e["symbol"]] -= e["quantity"]
    elif kind == "transfer_out":
        other = e["to_account"]
        if "symbol" in e:
            held[acct][e["symbol"]] -= e["quantity"]
            held[other][e["symbol"]] += e["quantity"]
        else:
            cash[acct] -= amount
            cash[other] += amount
    assert cash[acct] >= 0, e


month = dt.date(2019, 1, 1)
n = 0
while month <= END:
    n += 1
    first = month  # deposits on the 1st, weekend or not
    post(date=first, account=TAX, kind="deposit", amount=Decimal(1500 + rng.randint(0, 400)))
    post(date=first, account=PEN, kind="deposit", amount=Decimal(800))
    trade_day = next_trading(month.replace(day=4))
    for acct, fee in ((TAX, Decimal("1.25")), (PEN, Decimal(0))):
        sym = rng.choice(SYMBOLS)
        price = closes[sym][trade_day]
        qty = ((cash[acct] * Decimal("0.8") - fee) / price).to_integral_value(rounding="ROUND_FLOOR")
        if qty > 0:
            post(date=trade_day, account=acct, kind="buy", symbol=sym, quantity=qty, price=price,
                 fee=fee)
    if n % 7 == 0:
        sell_day = next_trading(month.replace(day=18))
        sym = max(SYMBOLS, key=lambda s: held[TAX][s])
        qty = (held[TAX][sym] / 3).to_integral_value(rounding="ROUND_FLOOR")
        if qty > 0:
            post(date=sell_day, account=TAX, kind="sell", symbol=sym, quantity=qty,
                 price=closes[sym][sell_day], fee=Decimal(2))
    if n % 11 == 0:
        wd = next_trading(month.replace(day=22))
        amount = q2(cash[TAX] * Decimal("0.6"))
        if amount > 0:
            post(date=wd, account=TAX, kind="withdrawal", amount=amount)
    if month.month in (3, 6, 9, 12):
        div_day = next_trading(month.replace(day=15))
        for sym in SYMBOLS:
            if held[TAX][sym] > 0:
                gross = q2(held[TAX][sym] * Decimal("0.35"))
                post(date=div_day, account=TAX, kind="dividend", symbol=sym, amount=gross)
                post(date=div_day, account=TAX, kind="tax", symbol=sym,
                     amount=q2(gross * Decimal("0.15")))
        post(date=div_day, account=PEN, kind="interest", amount=Decimal("3.1"))
    if month == dt.date(2020, 9, 1):
        sym = max(SYMBOLS, key=lambda s: held[TAX][s])
        post(date=dt.date(2020, 9, 10), account=TAX, kind="transfer_out", to_account=PEN,
             symbol=sym, quantity=(held[TAX][sym] / 2).to_integral_value(rounding="ROUND_FLOOR"))
    if month == dt.date(2021, 5, 1):
        post(date=dt.date(2021, 5, 12), account=TAX, kind="transfer_out", to_account=PEN,
             amount=q2(cash[TAX] / 2))
    if month == dt.date(2022, 3, 1):
        post(date=dt.date(2022, 3, 21), account=PEN, kind="withdrawal", amount=q2(cash[PEN] * Decimal("0.9")))
    if month == dt.date(2021, 11, 1):
        post(date=dt.date(2021, 11, 30), account=TAX, kind="fee", amount=Decimal(25))
    month = (month.replace(day=28) + dt.timedelta(days=4)).replace(day=1)

# ------------------------------------------------------------ into the ledger
k = Ledger()
k.ok("account", "add", TAX)
k.ok("account", "add", PEN)
for s in SYMBOLS:
    k.ok("security", "add", s, "--name", f"{s} Invented Works", "--kind", "stock")
for e in events:
    args = ["record", e["kind"], "--date", e["date"].isoformat(), "--account", e["account"]]
    for key in ("symbol", "quantity", "price", "amount", "fee", "to_account"):
        if key in e:
            if key == "fee" and e["kind"] not in ("buy", "sell"):
                continue
            value = e[key] if isinstance(e[key], str) else canon(e[key])
            args += ["--" + key.replace("_", "-"), value]
    k.ok(*args)

# Closes go straight into the scratch ledger's price table; this stands in for
# the import command, which is not part of keel yet.
con = sqlite3.connect(k.path)
ids = dict((sym, i) for i, sym in con.execute("SELECT id, symbol FROM security"))
con.executemany("INSERT INTO price (security_id, date, close) VALUES (?, ?, ?)",
                [(ids[s], d.isoformat(), canon(c)) for s in SYMBOLS for d, c in closes[s].items()])
con.commit()
con.close()


# ---------------------------------------------------- independent recompute
def series(scope, start, end):
    """[(day, V, I, O)] for entry days in [start - 1, end]; scope None = all."""
    first = start - dt.timedelta(days=1)
    entry = {first}
    entry |= {e["date"] for e in events if first < e["date"] <= end}
    entry |= {d for d in days if first < d <= end}
    c = {TAX: Decimal(0), PEN: Decimal(0)}
    h = {TAX: {s: Decimal(0) for s in SYMBOLS}, PEN: {s: Decimal(0) for s in SYMBOLS}}
    out = []
    by_day = {}
    for e in events:
        by_day.setdefault(e["date"], []).append(e)
    all_days = sorted(set(by_day) | entry)
    for d in all_days:
        if d > end:
            break
        inflow = outflow = Decimal(0)
        for e in by_day.get(d, []):
            a, kind = e["account"], e["kind"]
            amt = e.get("amount", Decimal(0))
            if kind in ("deposit", "dividend", "interest"):
                c[a] += amt
            elif kind in ("withdrawal", "tax", "fee"):
                c[a] -= amt
            elif kind == "buy":
                c[a] -= e["quantity"] * e["price"] + e["fee"]
                h[a][e["symbol"]] += e["quantity"]
            elif kind == "sell":
                c[a] += e["quantity"] * e["price"] - e["fee"]
                h[a][e["symbol"]] -= e["quantity"]
            elif kind == "transfer_out":
                b = e["to_account"]
                if "symbol" in e:
                    h[a][e["symbol"]] -= e["quantity"]
                    h[b][e["symbol"]] += e["quantity"]
                    moved = e["quantity"] * close_on_or_before(e["symbol"], d)
                else:
                    c[a] -= amt
                    c[b] += amt
                    moved = amt
                if scope == a:
                    outflow += moved
                elif scope == b:
                    inflow += moved
            if kind == "deposit" and scope in (None, a):
                inflow += amt
            if kind == "withdrawal" and scope in (None, a):
                outflow += amt
        if d < first or d not in entry:
            continue
        value = Decimal(0)
        for a in (TAX, PEN):
            if scope in (None, a):
                value += c[a]
                for s in SYMBOLS:
                    if h[a][s]:
                        value += h[a][s] * close_on_or_before(s, d)
        out.append((d, value, inflow, outflow))
    return out


def reference(scope, start, end):
    rows = series(scope, start, end)
    df = pd.DataFrame(rows, columns=["day", "v", "i", "o"])
    for col in ("v", "i", "o"):
        df[col] = df[col].map(float)
    base = df["v"].shift(1) + df["i"]
    r = (df["v"] + df["o"]) / base - 1
    r = r[1:][base[1:] > 0]
    twr = float((1 + r).prod() - 1)
    vol = float(r.std(ddof=1) * math.sqrt(252))
    idx = pd.concat([pd.Series([1.0]), (1 + r).cumprod()], ignore_index=True)
    mdd = float((idx / idx.cummax() - 1).min())
    d0 = start - dt.timedelta(days=1)
    flows = [(d0, float(rows[0][1]))]
    flows += [(d, float(i - o)) for d, v, i, o in rows[1:]]
    flows.append((end, -float(rows[-1][1])))

    def npv(rate):
        return sum(cf * (1 + rate) ** (-(d - d0).days / 365) for d, cf in flows)

    mwr = brentq(npv, -0.9, 5.0, xtol=1e-15, rtol=1e-15, maxiter=500)
    ndays = (end - d0).days
    return {"twr": twr, "volatility_daily_annualized": vol, "max_drawdown": mdd,
            "mwr_annualized": mwr, "mwr_period": (1 + mwr) ** (ndays / 365) - 1,
            "twr_annualized": (1 + twr) ** (365 / ndays) - 1,
            "opening_value": rows[0][1], "closing_value": rows[-1][1],
            "inflows": sum(x[2] for x in rows[1:]), "outflows": sum(x[3] for x in rows[1:])}


def compare(got, ref, what):
    for key in ("twr", "twr_annualized", "mwr_annualized", "mwr_period",
                "volatility_daily_annualized", "max_drawdown"):
        check(got[key] is not None, f"{what}: {key} is null")
        check(abs(got[key] - ref[key]) <= TOL,
              f"{what}: {key} keel {got[key]!r} vs pandas/scipy {ref[key]!r}")
    for key in ("opening_value", "closing_value", "inflows", "outflows"):
        check(Decimal(got[key]) == ref[key], f"{what}: {key} keel {got[key]} vs {ref[key]}")


inception = min(e["date"] for e in events)
whole = k.json("returns", "--period", "inception")
check(whole["scope"] == "all accounts", f"scope {whole['scope']}")
check(whole["from"] == inception.isoformat(), f"from {whole['from']}")
check(whole["to"] == END.isoformat(), f"to {whole['to']} (the latest close)")
compare(whole, reference(None, inception, END), "whole ledger")
check(Decimal(whole["income"]) == sum(e["amount"] for e in events
                                      if e["kind"] in ("dividend", "interest")), "income")

a_from, a_to = dt.date(2020, 3, 1), dt.date(2022, 6, 30)
acct = k.json("returns", "--account", TAX, "--from", a_from.isoformat(), "--to", a_to.isoformat())
compare(acct, reference(TAX, a_from, a_to), "taxable account")
check(acct["scope"] == TAX, "account scope")

pen = k.json("returns", "--account", PEN, "--year", "2021")
compare(pen, reference(PEN, dt.date(2021, 1, 1), dt.date(2021, 12, 31)), "pension 2021")

# The internal transfers leave the whole ledger's flows alone but are flows
# for each account: the pension's 2020 inflows exceed its deposits.
pen2020 = k.json("returns", "--account", PEN, "--year", "2020")
deposits = sum(e["amount"] for e in events if e["account"] == PEN and e["kind"] == "deposit"
               and e["date"].year == 2020)
check(Decimal(pen2020["inflows"]) > deposits, "transfer in counted as the pension's inflow")

# Terminal form carries the caution; option errors name the option.
text = k.ok("returns", "--period", "1y")
check("Past results do not predict future returns" in text, "caution line")
err = k.fails("returns", "--year", "2021", "--period", "ytd")
check("--year and --period" in err, err)
err = k.fails("returns", "--method", "weekly")
check("--method" in err, err)
err = k.fails("returns", "--account", "Nowhere")
check("--account" in err, err)
print("ok")
