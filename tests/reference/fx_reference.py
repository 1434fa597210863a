"""Independent replay of a household in two currencies with Python's decimal and pandas.

Follows the method written in docs/methods-ledger.md ("Foreign currencies") by its own route:
exchange rates are a pandas Series per pair looked up with Series.asof (the latest rate on or
before the day); money is decimal.Decimal rounded half to even to the cent once per conversion;
lots of securities and of dollar cash are plain lists taken first in, first out; a cost or a
sale's proceeds shared among lots uses the largest-remainder rule of docs/methods-ledger.md
("Splitting an amount to the cent").

Input: a list of transaction dicts (the same rows the test imports) and the EUR/USD rates.
Output: holdings on a day and the realized gains, each part with its price and currency part;
on request, the currency gains that spending dollar cash realized (its worth in euros that day,
shared among the dollar lots taken by quantity, less their cost).
"""

from decimal import ROUND_DOWN, ROUND_HALF_EVEN, Decimal, localcontext

import pandas as pd

CENT = Decimal("0.01")


def q(x):
    return x.quantize(CENT, rounding=ROUND_HALF_EVEN)


def div(a, b):
    with localcontext() as ctx:
        ctx.prec = 80
        return q(Decimal(a) / Decimal(b))


def allocate(total, weights):
    """Largest remainder to the cent: floors, then the missing cents to the biggest remainders
    (earlier first on ties); the parts add up to `total` exactly."""
    wsum = sum(weights)
    sign = -1 if total < 0 else 1
    mag = abs(total)
    grid = mag.quantize(CENT, rounding=ROUND_DOWN)
    with localcontext() as ctx:
        ctx.prec = 80
        quotas = [grid * w / wsum for w in weights]
    parts = [x.quantize(CENT, rounding=ROUND_DOWN) for x in quotas]
    rema = [quotas[i] - parts[i] for i in range(len(parts))]
    order = sorted(range(len(parts)), key=lambda i: (-rema[i], i))
    left = grid - sum(parts)
    k = 0
    while left > 0:
        parts[order[k]] += CENT
        left -= CENT
        k += 1
    last = max(i for i, w in enumerate(weights) if w != 0)
    parts[last] += mag - grid
    return [sign * p for p in parts]


def share(cost, taken, held):
    return cost if taken == held else allocate(cost, [taken, held - taken])[0]


class Rates:
    def __init__(self, rows):
        df = pd.DataFrame(rows, columns=["date", "rate"])
        df["date"] = pd.to_datetime(df["date"])
        self.s = df.set_index("date")["rate"].sort_index()

    def eur_usd(self, day):
        r = self.s.asof(pd.Timestamp(day))
        if pd.isna(r):
            raise KeyError(f"no EUR/USD on or before {day}")
        return Decimal(r)

    def to_eur(self, usd, day):
        return div(usd, self.eur_usd(day))


def take(lots, qty):
    """FIFO: removes qty from lots [id, day, qty, cost, local]; returns the parts taken."""
    out = []
    remaining = qty
    while remaining > 0:
        lot = lots[0]
        n = min(remaining, lot["qty"])
        part = dict(lot, qty=n)
        if n == lot["qty"]:
            lots.pop(0)
        else:
            part["cost"] = share(lot["cost"], n, lot["qty"])
            if lot.get("local") is not None:
                part["local"] = share(lot["local"], n, lot["qty"])
                lot["local"] -= part["local"]
            lot["cost"] -= part["cost"]
            lot["qty"] -= n
        out.append(part)
        remaining -= n
    return out


def replay(rows, rate_rows, currencies, fx_gains=None):
    """rows: dicts with id, date, account, kind, symbol, quantity, price, amount, fee,
    currency, rate, to_currency (strings or None). currencies: symbol -> currency.
    Every account keeps EUR; foreign cash is USD only. fx_gains: a list to which each dollar
    lot spent is appended (account, acquired, disposed, amount, proceeds, cost, gain)."""
    rates = Rates(rate_rows)
    D = lambda v: Decimal(v) if v not in (None, "") else None  # noqa: E731
    books = {}
    gains = []

    def book(a):
        return books.setdefault(a, {"cash": Decimal(0), "usd": [], "pos": {}})

    def spend(b, qty, worth, r):
        parts = take(b["usd"], qty)
        for p, pr in zip(parts, allocate(worth, [p["qty"] for p in parts])):
            if fx_gains is not None:
                fx_gains.append({"account": r["account"], "acquired": p["day"],
                                 "disposed": r["date"], "amount": p["qty"], "proceeds": pr,
                                 "cost": p["cost"], "gain": pr - p["cost"]})

    for r in rows:
        b = book(r["account"])
        day = r["date"]
        kind = r["kind"]
        amount, qty, price = D(r.get("amount")), D(r.get("quantity")), D(r.get("price"))
        fee = D(r.get("fee")) or Decimal(0)
        rate = D(r.get("rate"))
        sym = r.get("symbol")
        cur = r.get("currency") or (currencies[sym] if sym else "EUR")
        if kind == "exchange":
            sold, to = amount, r["to_currency"]
            bought = q(sold * rate)
            if cur == "EUR":
                b["cash"] -= sold + fee
                b["usd"].append({"id": r["id"], "day": day, "qty": bought, "cost": sold + fee})
            else:
                spend(b, sold + fee, bought, r)
                b["cash"] += bought
            continue
        if cur == "EUR":
            if kind == "deposit":
                b["cash"] += amount
            elif kind == "buy":
                b["cash"] -= qty * price + fee
                b["pos"].setdefault(sym, []).append(
                    {"id": r["id"], "day": day, "qty": qty, "cost": qty * price + fee,
                     "local": None})
            else:
                raise ValueError(kind)
            continue
        to_eur = (lambda x: div(x, rate)) if rate else (lambda x: rates.to_eur(x, day))
        if kind in ("deposit", "dividend"):
            if rate:
                b["cash"] += to_eur(amount)
            else:
                b["usd"].append({"id": r["id"], "day": day, "qty": amount, "cost": to_eur(amount)})
        elif kind in ("withdrawal", "tax", "fee"):
            if rate:
                b["cash"] -= to_eur(amount)
            else:
                spend(b, amount, to_eur(amount), r)
        elif kind == "buy":
            local = qty * price + fee
            cost = to_eur(local)
            if rate:
                b["cash"] -= cost
            else:
                spend(b, local, cost, r)
            b["pos"].setdefault(sym, []).append(
                {"id": r["id"], "day": day, "qty": qty, "cost": cost, "local": local})
        elif kind == "sell":
            parts = take(b["pos"][sym], qty)
            local = qty * price - fee
            proceeds = to_eur(local)
            weights = [p["qty"] for p in parts]
            for p, pr, lp in zip(parts, allocate(proceeds, weights), allocate(local, weights)):
                price_part = to_eur(lp - p["local"])
                gains.append({"account": r["account"], "symbol": sym, "lot": p["id"],
                              "sell": r["id"], "quantity": p["qty"], "proceeds": pr,
                              "cost": p["cost"], "gain": pr - p["cost"],
                              "local_proceeds": lp, "local_cost": p["local"],
                              "price_part": price_part,
                              "currency_part": pr - p["cost"] - price_part})
            if not b["pos"][sym]:
                del b["pos"][sym]
            if rate:
                b["cash"] += proceeds
            else:
                b["usd"].append({"id": r["id"], "day": day, "qty": local, "cost": proceeds})
        else:
            raise ValueError(kind)
    return books, gains, rates


def holdings(books, rates, closes, currencies, day):
    """Positions and cash valued on `day`, in EUR; USD at the latest rate on or before it."""
    positions, cash, total = [], [], Decimal(0)
    for account in sorted(books):
        b = books[account]
        for sym in sorted(b["pos"]):
            lots = b["pos"][sym]
            qty = sum(l["qty"] for l in lots)
            cost = sum(l["cost"] for l in lots)
            local = qty * closes[sym]
            value = rates.to_eur(local, day) if currencies[sym] == "USD" else local
            positions.append({"account": account, "symbol": sym, "quantity": qty,
                              "cost_basis": cost, "market_value": value})
            total += value
        cash.append({"account": account, "amount": b["cash"]})
        total += b["cash"]
        usd = sum((l["qty"] for l in b["usd"]), Decimal(0))
        if b["usd"]:
            value = rates.to_eur(usd, day)
            cash.append({"account": account, "amount": usd, "currency": "USD", "value": value,
                         "cost": sum(l["cost"] for l in b["usd"])})
            total += value
    return positions, cash, total
