#!/usr/bin/python3
"""Writes keel's invented demo scenario as canonical CSV files.

The Ardwyn household of Thistlecombe (invented, like everything here) keeps two
accounts, a joint taxable one and a retirement one, from 2016-01-04 to
2025-12-31. Each month they pay in, and on the first business day they follow
a written rule: hold the ten stocks of the universe with the lowest positive
price/earnings figure that could be known that day, keep a name while it stays
in the best sixteen, sell it when it drops out or reports a loss. The
retirement account also keeps about a third in a bond fund.

Every security, name, symbol, price and figure below is invented: a random
model with a market factor, sector factors, a slowly mean-reverting valuation
and, for some cyclical stocks, years of losses (negative P/E).

Output (keel's layouts, docs/import-formats.md), into --out:
  accounts.csv       the two accounts
  securities.csv     40 x scale stocks in eight sectors, a bond fund, a
                     total-return index (kind index) used as benchmark
  prices.csv         a close per security per business day
  metrics.csv        monthly 'pe' figures known 30 to 45 days after the month
                     ends; some restated later (a second row, later known_on)
  distributions.csv  quarterly cash distributions
  splits.csv         two splits
  transactions.csv   deposits, trades, dividends with 15 % withholding tax,
                     an account fee, a transfer between the accounts and a
                     withdrawal, each with a ref, simulated so that no sell
                     takes more than is held and no day ends with negative cash
  scenario.toml      what the demo command needs to know about the scenario

Same arguments, same bytes: one random.Random(seed), money in decimal.Decimal
rounded half to even; Python standard library only.
"""
import argparse
import datetime as dt
import math
import os
import random
from decimal import ROUND_HALF_EVEN, Decimal

START = dt.date(2016, 1, 4)
END = dt.date(2025, 12, 31)
TAXABLE = "Ardwyn Joint Taxable"
RETIREMENT = "Ardwyn Retirement"
BENCHMARK = "ZXTR"
BOND_FUND = "XJBF"
WITHHOLDING = Decimal("0.15")
CENT = Decimal("0.01")

# Invented symbols and names, five per sector. Symbols pair Q, X, Z and J so
# as not to collide with listed tickers.
SECTORS = {
    "Technology": [("QJTN", "Jotrane Software"), ("XQVL", "Quivelle Logic"),
                   ("ZQRM", "Zorrim Devices"), ("QZDA", "Dazequin Networks"),
                   ("XJRE", "Rejax Circuits")],
    "Financials": [("QVBK", "Vobrick Savings"), ("ZJFN", "Fenjar Lending"),
                   ("XQLA", "Lamquist Assurance"), ("QJMO", "Morvane Trust"),
                   ("ZXPR", "Pradzel Brokerage")],
    "Health": [("QXMD", "Medquarrow Labs"), ("ZQHL", "Holzique Clinics"),
               ("XJVA", "Vajinth Therapeutics"), ("QZTH", "Thazmere Health"),
               ("ZJCR", "Crejova Diagnostics")],
    "Consumer": [("QJRB", "Rublanq Foods"), ("XZLO", "Lozwick Apparel"),
                 ("ZQMA", "Maquinder Stores"), ("QVXE", "Vexemby Brewing"),
                 ("XJPT", "Pentajol Homewares")],
    "Industrials": [("QZWK", "Wekzander Machines"), ("ZJGR", "Grojevic Freight"),
                    ("XQMT", "Mettiquar Tools"), ("QJHL", "Hollajin Cranes"),
                    ("ZXNO", "Noxbridge Rail")],
    "Energy": [("QXVO", "Volquen Drilling"), ("ZJOL", "Oljarrow Fuels"),
               ("XZRG", "Ragzelt Power"), ("QVTH", "Thevquin Pipelines"),
               ("ZQPE", "Pequazzo Refining")],
    "Materials": [("QJSM", "Smejquist Steel"), ("XQTI", "Tiquarn Chemicals"),
                  ("ZJRK", "Rokjazza Mining"), ("QZMN", "Manzequor Timber"),
                  ("XVQA", "Aqvellin Glass")],
    "Utilities": [("QXUT", "Utqarro Water"), ("ZJWA", "Wajelby Grid"),
                  ("XQPW", "Powquenna Electric"), ("QVGR", "Grevquill Gas"),
                  ("ZZQL", "Lizquane Energy Networks")],
}
CYCLICAL = {"Energy", "Materials", "Industrials"}
SPLITS = [("QJTN", dt.date(2019, 6, 3), 2), ("QXMD", dt.date(2022, 3, 1), 3)]
TRANSFER = (dt.date(2020, 3, 2), Decimal("8000"))     # taxable -> retirement, cash
WITHDRAWAL = (dt.date(2024, 9, 2), Decimal("20000"))  # from taxable: a new roof
FEES = {TAXABLE: Decimal("4.95"), RETIREMENT: Decimal("0")}
OPENING = {TAXABLE: Decimal("50000"), RETIREMENT: Decimal("30000")}
MONTHLY = {TAXABLE: Decimal("1500"), RETIREMENT: Decimal("500")}
HOLD, KEEP_WITHIN = 10, 16


def business_days():
    day = START
    while day <= END:
        if day.weekday() < 5 and (day.month, day.day) not in ((1, 1), (12, 25)):
            yield day
        day += dt.timedelta(days=1)


def month_end(day):
    nxt = dt.date(day.year + (day.month == 12), day.month % 12 + 1, 1)
    return nxt - dt.timedelta(days=1)


def next_weekday(day):
    while day.weekday() >= 5:
        day += dt.timedelta(days=1)
    return day


def cents(x):
    return Decimal(x).quantize(CENT, rounding=ROUND_HALF_EVEN)


def places(x, n):
    return Decimal(repr(x)).quantize(Decimal(1).scaleb(-n), rounding=ROUND_HALF_EVEN)


def extra_symbols(count):
    """Invented symbols for --scale above 1: Q J x y, letters skipping vowels."""
    letters = "BCDFGHKLMNPRSTVWXZ"
    for i in range(count):
        yield "QJ" + letters[(i // len(letters)) % len(letters)] + letters[i % len(letters)]


class Universe:
    def __init__(self, rng, scale):
        self.stocks = []  # (symbol, name, sector)
        for sector, names in SECTORS.items():
            for sym, name in names:
                self.stocks.append((sym, name, sector))
        sectors = list(SECTORS)
        taken = {s for s, _, _ in self.stocks}
        for i, sym in enumerate(s for s in extra_symbols(40 * scale) if s not in taken):
            if len(self.stocks) >= 40 * scale:
                break
            self.stocks.append((sym, f"Invented Holding {sym.title()}", sectors[i % len(sectors)]))
        self.params = {}
        for sym, _, sector in self.stocks:
            self.params[sym] = {
                "level": math.log(rng.uniform(15, 140)),
                "drift": rng.uniform(0.02, 0.09) / 252,
                "beta": rng.uniform(0.7, 1.3),
                "pe_fair": rng.uniform(9, 28),
                "yield": rng.uniform(0.01, 0.045) if rng.random() < 0.65 else 0.0,
                "phase": rng.uniform(0, 2 * math.pi),
                "cyclical": sector in CYCLICAL and rng.random() < 0.5,
                "quarter": rng.randrange(3),
            }


def model(rng, universe):
    """Daily closes, monthly P/E figures, distributions and the index."""
    days = list(business_days())
    sectors = list(SECTORS)
    fundamental = {s: p["level"] for s, p in universe.params.items()}
    valuation = {s: rng.gauss(0, 0.12) for s in universe.params}
    per_share_scale = {s: 1 for s in universe.params}  # split-adjusted shares
    splits = {(sym, day): ratio for sym, day, ratio in SPLITS}
    bond, index = 10.0, 1000.0
    closes = {}  # day -> {symbol: Decimal}
    pe_rows, dist_rows = [], []
    month_no = 0
    prev_close = None
    for n, day in enumerate(days):
        market = rng.gauss(0.0002, 0.009)
        sector_move = {sec: rng.gauss(0, 0.005) for sec in sectors}
        row, tr_returns = {}, []
        for sym, _, sector in universe.stocks:
            p = universe.params[sym]
            if (sym, day) in splits:
                per_share_scale[sym] *= splits[(sym, day)]
            fundamental[sym] += p["drift"] + p["beta"] * market + sector_move[sector] + rng.gauss(0, 0.008)
            valuation[sym] += -valuation[sym] / 250 + rng.gauss(0, 0.011)
            price = max(math.exp(fundamental[sym] + valuation[sym]) / per_share_scale[sym], 0.5)
            row[sym] = places(price, 2)
            tr_returns.append(0.0)
        # distributions: ex-date on the first business day on or after the 15th
        # of the stock's quarter month; paid two weeks later.
        for i, (sym, _, _) in enumerate(universe.stocks):
            p = universe.params[sym]
            if p["yield"] and day.month % 3 == p["quarter"] and 15 <= day.day and (
                    n == 0 or days[n - 1].month != day.month or days[n - 1].day < 15):
                per_share = places(p["yield"] * float(row[sym]) / 4, 4)
                pay = next_weekday(day + dt.timedelta(days=14))
                dist_rows.append((day, pay, sym, per_share))
                tr_returns[i] += float(per_share) / float(row[sym])
        if prev_close is not None:
            for i, (sym, _, _) in enumerate(universe.stocks):
                ratio = splits.get((sym, day), 1)
                tr_returns[i] += float(row[sym]) * ratio / float(prev_close[sym]) - 1
            index *= 1 + sum(tr_returns) / len(tr_returns)
        bond *= math.exp(rng.gauss(0.00004, 0.0025))
        row[BOND_FUND] = places(bond, 2)
        if day.month % 3 == 0 and day.day >= 20 and (days[n - 1].month != day.month or days[n - 1].day < 20):
            pay = next_weekday(day + dt.timedelta(days=7))
            dist_rows.append((day, pay, BOND_FUND, places(0.028 * bond / 4, 4)))
        row[BENCHMARK] = places(index, 2)
        closes[day] = row
        prev_close = row
        # month end: earnings per share and the P/E figure for the month
        if n + 1 == len(days) or days[n + 1].month != day.month:
            me = month_end(day)
            month_no += 1
            for sym, _, _ in universe.stocks:
                p = universe.params[sym]
                eps = math.exp(fundamental[sym]) / per_share_scale[sym] / p["pe_fair"]
                eps *= 1 + rng.gauss(0, 0.05)
                if p["cyclical"]:
                    cycle = 0.7 + 0.8 * math.sin(2 * math.pi * month_no / 54 + p["phase"])
                    eps *= cycle if abs(cycle) > 0.05 else math.copysign(0.05, cycle)
                pe = places(float(row[sym]) / eps, 2)
                known = me + dt.timedelta(days=rng.randint(30, 45))
                pe_rows.append((me, sym, pe, known))
                if rng.random() < 0.06:
                    later = known + dt.timedelta(days=rng.randint(20, 60))
                    restated = places(float(pe) * (1 + rng.choice((-1, 1)) * rng.uniform(0.03, 0.15)), 2)
                    pe_rows.append((me, sym, restated, later))
    return days, closes, pe_rows, dist_rows


class PointInTime:
    """The P/E a reader could see on a day: the same rule keel's metric_as_of follows."""

    def __init__(self, pe_rows):
        self.rows = {}
        for me, sym, pe, known in pe_rows:
            self.rows.setdefault(sym, []).append((me, known, pe))
        for rows in self.rows.values():
            rows.sort()

    def at(self, sym, day):
        best = None
        for me, known, pe in self.rows.get(sym, ()):
            if known <= day and (best is None or (me, known) > best[:2]):
                best = (me, known, pe)
        return best[2] if best else None


class Books:
    """Whole-share positions and cash per account, checked as keel checks them."""

    def __init__(self):
        self.cash = {a: Decimal(0) for a in OPENING}
        self.units = {a: {} for a in OPENING}
        self.rows = []

    def add(self, day, account, kind, **f):
        self.rows.append((day, account, kind, f))
        ref = f"AW-{len(self.rows):05d}"
        f["ref"] = ref
        sym, q, price = f.get("symbol"), f.get("quantity"), f.get("price")
        amount, fee = f.get("amount"), f.get("fee", Decimal(0))
        if kind == "buy":
            self.cash[account] -= q * price + fee
            self.units[account][sym] = self.units[account].get(sym, 0) + q
        elif kind == "sell":
            assert self.units[account].get(sym, 0) >= q, (day, account, sym)
            self.cash[account] += q * price - fee
            self.units[account][sym] -= q
            if self.units[account][sym] == 0:
                del self.units[account][sym]
        elif kind in ("deposit", "dividend"):
            self.cash[account] += amount
        elif kind in ("withdrawal", "tax", "fee"):
            self.cash[account] -= amount
        elif kind == "transfer_out":
            self.cash[account] -= amount
            self.cash[f["to_account"]] += amount
        assert self.cash[account] >= 0, (day, account, kind, self.cash[account])

    def value(self, account, close):
        return self.cash[account] + sum(q * close[s] for s, q in self.units[account].items())


def rebalance(books, account, day, close, pit, universe, reserve):
    """Sells names that left the rule's best sixteen (or report a loss), then
    buys the best ten with the cash there is, keeping `reserve` aside."""
    fee = FEES[account]
    ranked = []
    for sym, _, _ in universe.stocks:
        pe = pit.at(sym, day)
        if pe is not None and pe > 0:
            ranked.append((pe, sym))
    ranked.sort()
    rank = {sym: i for i, (_, sym) in enumerate(ranked)}
    pe_of = {sym: pe for pe, sym in ranked}
    held = books.units[account]
    for sym in sorted(held):
        if sym == BOND_FUND:
            continue
        if rank.get(sym, KEEP_WITHIN) >= KEEP_WITHIN:
            why = f"rule: P/E rank {rank[sym] + 1}" if sym in rank else "rule: no positive P/E"
            books.add(day, account, "sell", symbol=sym, quantity=held[sym], price=close[sym],
                      fee=fee, note=why)
    total = books.value(account, close) - reserve
    # Raise the reserve from the largest positions when cash falls short.
    while books.cash[account] < reserve + fee and held:
        sym = max(held, key=lambda s: (held[s] * close[s], s))
        need = reserve + fee - books.cash[account]
        q = min(held[sym], int((need + fee) / close[sym]) + 1)
        books.add(day, account, "sell", symbol=sym, quantity=Decimal(q), price=close[sym],
                  fee=fee, note="raise cash")
    bond_share = Decimal("0.35") if account == RETIREMENT else Decimal(0)
    budget = books.cash[account] - reserve - cents(total * Decimal("0.01"))
    if bond_share:
        gap = total * bond_share - held.get(BOND_FUND, 0) * close[BOND_FUND]
        if gap > total * Decimal("0.02") and budget > 0:
            q = int(min(gap, budget - fee) / close[BOND_FUND])
            if q > 0:
                books.add(day, account, "buy", symbol=BOND_FUND, quantity=Decimal(q),
                          price=close[BOND_FUND], fee=fee, note="rule: bond share")
                budget -= q * close[BOND_FUND] + fee
    names = [s for s in held if s != BOND_FUND]
    for _, sym in ranked:
        if len(names) >= HOLD:
            break
        if sym not in names:
            names.append(sym)
    target = total * (1 - bond_share) * Decimal("0.99") / HOLD
    wants = sorted(((target - held.get(s, 0) * close[s]), s) for s in names)
    for gap, sym in reversed(wants):
        if gap < max(close[sym], 20 * fee) or budget <= fee:
            continue
        q = int(min(gap, budget - fee) / close[sym])
        if q <= 0:
            continue
        books.add(day, account, "buy", symbol=sym, quantity=Decimal(q), price=close[sym], fee=fee,
                  note=f"rule: P/E rank {rank[sym] + 1} ({pe_of[sym]})")
        budget -= q * close[sym] + fee


def simulate(days, closes, pit, dist_rows, universe):
    books = Books()
    split_on = {}
    for sym, day, ratio in SPLITS:
        split_on.setdefault(day, []).append((sym, ratio))
    ex_on, pay_on = {}, {}
    for ex, pay, sym, per_share in dist_rows:
        ex_on.setdefault(ex, []).append((pay, sym, per_share))
    for n, day in enumerate(days):
        close = closes[day]
        for sym, ratio in split_on.get(day, ()):
            for account in books.units:
                if sym in books.units[account]:
                    books.units[account][sym] *= ratio
        # Entitled: units held at the end of the day before the ex-date.
        for pay, sym, per_share in ex_on.get(day, ()):
            for account in books.units:
                q = books.units[account].get(sym, 0)
                if q:
                    pay_on.setdefault(pay, []).append((account, sym, cents(q * per_share)))
        for account, sym, amount in pay_on.pop(day, ()):
            if amount > 0:
                books.add(day, account, "dividend", symbol=sym, amount=amount)
                tax = cents(amount * WITHHOLDING)
                if tax > 0:
                    books.add(day, account, "tax", symbol=sym, amount=tax, note="withheld 15 %")
        first_of_month = n == 0 or days[n - 1].month != day.month
        if not first_of_month:
            continue
        for account in (TAXABLE, RETIREMENT):
            amount = OPENING[account] if n == 0 else MONTHLY[account]
            books.add(day, account, "deposit", amount=amount,
                      note="opening deposit" if n == 0 else "monthly contribution")
        if day.month == 1 and n > 0:
            books.add(day, RETIREMENT, "fee", amount=Decimal("25"), note="yearly account fee")
        reserve = {TAXABLE: Decimal(0), RETIREMENT: Decimal(0)}
        if day == TRANSFER[0]:
            reserve[TAXABLE] += TRANSFER[1]
        if day == WITHDRAWAL[0]:
            reserve[TAXABLE] += WITHDRAWAL[1]
        rebalance(books, TAXABLE, day, close, pit, universe, reserve[TAXABLE])
        if day == TRANSFER[0]:
            books.add(day, TAXABLE, "transfer_out", amount=TRANSFER[1], to_account=RETIREMENT,
                      note="top up retirement")
        if day == WITHDRAWAL[0]:
            books.add(day, TAXABLE, "withdrawal", amount=WITHDRAWAL[1], note="new roof")
        rebalance(books, RETIREMENT, day, close, pit, universe, Decimal(0))
    kinds = {kind for _, _, kind, _ in books.rows}
    assert {"transfer_out", "withdrawal"} <= kinds, "scheduled days must be first business days"
    return books


def write(path, header, rows):
    with open(path, "w", newline="") as f:
        f.write(header + "\n")
        for r in rows:
            f.write(",".join(quote(str(x)) for x in r) + "\n")


def quote(text):
    if any(c in text for c in ',"\n\r'):
        return '"' + text.replace('"', '""') + '"'
    return text


def main():
    here = os.path.dirname(os.path.abspath(__file__))
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", default=os.path.join(here, "data"), help="folder to write into")
    ap.add_argument("--scale", type=int, default=1,
                    help="universe of 40 x SCALE stocks (default 1; larger for benchmarks)")
    ap.add_argument("--seed", type=int, default=20160104)
    a = ap.parse_args()
    if a.scale < 1:
        ap.error("--scale must be 1 or more")
    rng = random.Random(a.seed)
    universe = Universe(rng, a.scale)
    days, closes, pe_rows, dist_rows = model(rng, universe)
    pit = PointInTime(pe_rows)
    books = simulate(days, closes, pit, dist_rows, universe)
    os.makedirs(a.out, exist_ok=True)
    out = lambda name: os.path.join(a.out, name)

    write(out("accounts.csv"), "name,currency,basis,allow_negative_cash",
          [(TAXABLE, "USD", "fifo", "no"), (RETIREMENT, "USD", "hifo", "no")])
    secs = [(s, n, "stock", "USD", 1, sec) for s, n, sec in universe.stocks]
    secs.append((BOND_FUND, "Fenmoor Aggregate Bond Fund", "fund", "USD", 1, "Bonds"))
    secs.append((BENCHMARK, "Zanthe Total Return Index", "index", "USD", 1, ""))
    write(out("securities.csv"), "symbol,name,kind,currency,lot_size,sector", sorted(secs))
    symbols = sorted(closes[days[0]])
    write(out("prices.csv"), "date,symbol,close",
          ((d, s, closes[d][s]) for d in days for s in symbols))
    write(out("metrics.csv"), "date,symbol,metric,value,known_on",
          sorted((me, s, "pe", pe, k) for me, s, pe, k in pe_rows))
    write(out("distributions.csv"), "ex_date,pay_date,symbol,per_share",
          sorted(dist_rows))
    write(out("splits.csv"), "date,symbol,ratio", sorted((d, s, r) for s, d, r in SPLITS))
    cols = ["symbol", "quantity", "price", "amount", "fee", "ref", "note", "to_account"]
    txn = []
    for day, account, kind, f in books.rows:
        fee = f.get("fee")
        f = dict(f, fee=fee if fee else "")
        txn.append([day, account, kind] + [f.get(c, "") for c in cols])
    write(out("transactions.csv"), "date,account,kind," + ",".join(cols), txn)
    with open(out("scenario.toml"), "w", newline="") as f:
        f.write("# The invented demo scenario; written by examples/demo/generate.py.\n")
        f.write('household = "the Ardwyn household of Thistlecombe (invented)"\n')
        f.write(f'first_day = "{START.isoformat()}"\n')
        f.write(f'last_day = "{END.isoformat()}"\n')
        f.write(f'benchmark = "{BENCHMARK}"\n')
        f.write(f'accounts = ["{TAXABLE}", "{RETIREMENT}"]\n')


if __name__ == "__main__":
    main()
