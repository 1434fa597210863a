#!/usr/bin/python3
"""Writes keel's invented demo scenario as canonical CSV files.

The Ardwyn household of Thistlecombe (invented, like everything here) keeps two
accounts, a joint taxable one and a retirement one, from 2016-01-04 to
2025-12-31. Each month they pay in, and on the first business day they follow
a written rule: hold the ten dollar stocks of the universe with the lowest
positive price/earnings figure that could be known that day, keep a name while
it stays in the best sixteen, sell it when it drops out or reports a loss. The
retirement account also keeps about a third in a bond fund. A third account, in
dollars too, holds four names priced in euros and pounds from 2021 (see
overseas()).

Every security, name, symbol, price and figure below is invented: a random
model with a market factor, sector factors, a slowly mean-reverting valuation
and, for some cyclical stocks, years of losses (negative P/E).

Output (keel's layouts, docs/import-formats.md), into --out:
  accounts.csv       the three accounts
  securities.csv     40 x scale dollar stocks in eight sectors, four stocks in
                     euros and pounds, a bond fund, a total-return index (kind
                     index) in dollars used as benchmark
  prices.csv         a close per security per business day
  rates.csv          dollars per euro and per pound each business day
  metrics.csv        monthly 'pe' figures known 30 to 45 days after the month
                     ends; some restated later (a second row, later known_on)
  distributions.csv  quarterly cash distributions
  splits.csv         two splits
  transactions.csv   deposits, trades, dividends with 15 % withholding tax,
                     an account fee, a transfer between the accounts and a
                     withdrawal, each with a ref, simulated so that no sell
                     takes more than is held and no day ends with negative cash
                     (in any currency); abroad, trades settled in dollars at a
                     rate, exchanges, trades and dividends in euros and pounds
  scenario.toml      what the demo command needs to know about the scenario

Same arguments, same bytes: one random.Random(seed), money in decimal.Decimal
rounded half to even; Python standard library only.
"""
import argparse
import datetime as dt
import math
import os
import random
from decimal import ROUND_HALF_EVEN, Decimal, getcontext

START = dt.date(2016, 1, 4)
END = dt.date(2025, 12, 31)
TAXABLE = "Ardwyn Joint Taxable"
RETIREMENT = "Ardwyn Retirement"
BENCHMARK = "ZXTR"
BOND_FUND = "XJBF"
WITHHOLDING = Decimal("0.15")
CENT = Decimal("0.01")
getcontext().prec = 50  # settlements divide; round once, to the cent

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

# Four invented names abroad, priced in euros and pounds, and the household's
# third account, in dollars, that holds them (the monthly rule above keeps to
# the dollar stocks). Their prices and the exchange rates come from a
# random.Random of their own, so the dollar scenario is the same with or
# without them.
ABROAD = [("ZQEO", "Eloquarz Optics", "Technology", "EUR"),
          ("XJKA", "Kajvenne Chemicals", "Materials", "EUR"),
          ("QZBN", "Benzquell Insurance", "Financials", "GBP"),
          ("ZJHW", "Hawjerin Water", "Utilities", "GBP")]
FIRST_RATE = {"EUR": 1.09, "GBP": 1.45}  # dollars per unit on the first day (invented)
OVERSEAS = "Ardwyn Overseas"
OVERSEAS_OPENS = dt.date(2021, 3, 1)
OVERSEAS_FEE = Decimal("5")          # a trade's fee, in the trade's currency
EXCHANGE_FEE = Decimal("2.50")       # a conversion's fee, in the currency sold
SPREAD = Decimal("0.0025")           # the broker's margin on a conversion


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


def dollar_stocks(scale):
    """(symbol, name, sector) of the 40 x scale dollar stocks."""
    stocks = [(sym, name, sector) for sector, names in SECTORS.items() for sym, name in names]
    sectors = list(SECTORS)
    taken = {s for s, _, _ in stocks}
    for i, sym in enumerate(s for s in extra_symbols(40 * scale) if s not in taken):
        if len(stocks) >= 40 * scale:
            break
        stocks.append((sym, f"Invented Holding {sym.title()}", sectors[i % len(sectors)]))
    return stocks


class Universe:
    def __init__(self, rng, stocks):
        self.stocks = stocks  # (symbol, name, sector)
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
    """Whole-share positions and cash per account, checked as keel checks them.

    A row with a `currency` (its figures' currency, not the account's) settles
    in the account's dollars at its `rate` (units of the currency per dollar,
    rounded half to even to the cent, as keel settles it), or without a rate
    moves the account's cash in that currency; an `exchange` sells `amount`
    (plus `fee`) of its currency for `to_currency` at `rate`.
    """

    def __init__(self, accounts, prefix):
        self.cash = {a: Decimal(0) for a in accounts}
        self.units = {a: {} for a in accounts}
        self.foreign = {a: {} for a in accounts}  # account -> currency -> units of cash
        self.rows = []
        self.prefix = prefix

    def add(self, day, account, kind, **f):
        self.rows.append((day, account, kind, f))
        ref = f"{self.prefix}-{len(self.rows):05d}"
        f["ref"] = ref
        sym, q, price = f.get("symbol"), f.get("quantity"), f.get("price")
        amount, fee = f.get("amount"), f.get("fee", Decimal(0))
        currency, rate = f.get("currency"), f.get("rate")
        foreign = self.foreign[account]

        def move(x, into=currency):
            if into is None or into == "USD":
                self.cash[account] += x
            elif rate is not None and kind != "exchange":
                self.cash[account] += cents(x / rate)
            else:
                foreign[into] = foreign.get(into, 0) + x

        if kind == "buy":
            move(-(q * price + fee))
            self.units[account][sym] = self.units[account].get(sym, 0) + q
        elif kind == "sell":
            assert self.units[account].get(sym, 0) >= q, (day, account, sym)
            move(q * price - fee)
            self.units[account][sym] -= q
            if self.units[account][sym] == 0:
                del self.units[account][sym]
        elif kind in ("deposit", "dividend"):
            move(amount)
        elif kind in ("withdrawal", "tax", "fee"):
            move(-amount)
        elif kind == "exchange":
            move(-(amount + fee))
            move(cents(amount * rate), f["to_currency"])
        elif kind == "transfer_out":
            self.cash[account] -= amount
            self.cash[f["to_account"]] += amount
        assert self.cash[account] >= 0, (day, account, kind, self.cash[account])
        assert all(x >= 0 for x in foreign.values()), (day, account, kind, foreign)

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
    books = Books(OPENING, "AW")
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


def exchange_rates(rng, days):
    """Dollars per euro and per pound each business day, {day: {currency: Decimal}}:
    a random walk in the logarithm, pulled slowly back to its first level."""
    first = {c: math.log(r) for c, r in FIRST_RATE.items()}
    level = dict(first)
    rates = {}
    for day in days:
        for c in sorted(level):
            level[c] += (first[c] - level[c]) / 500 + rng.gauss(0, 0.005)
        rates[day] = {c: places(math.exp(x), 4) for c, x in level.items()}
    return rates


def broker_rate(per_unit, currency_bought):
    """The broker's rate for a conversion between dollars and a currency worth
    `per_unit` dollars, its margin taken: units of the row's currency per
    dollar when buying that currency (USD units sold), else when selling it."""
    mid = 1 / per_unit
    rate = mid * (1 - SPREAD) if currency_bought else mid * (1 + SPREAD)
    return rate.quantize(Decimal("0.0001"), rounding=ROUND_HALF_EVEN)


def overseas(days, closes, rates, dist_rows):
    """The third account's story: opened with dollars in March 2021, one euro
    name bought at the broker's settlement rate, the rest paid from euros and
    pounds bought first; a top-up each March to 2024; dividends kept in their
    currency with 15 % withheld there; in 2025 the euro name sold at a
    settlement rate, half the first pound name sold into pounds and the pounds
    exchanged back into dollars."""
    books = Books([OVERSEAS], "AO")
    currency = {sym: c for sym, _, _, c in ABROAD}
    held = books.units[OVERSEAS]
    cash = books.foreign[OVERSEAS]
    marches = [d for n, d in enumerate(days) if d.month == 3 and days[n - 1].month != 3]
    opens = [d for d in marches if OVERSEAS_OPENS <= d <= dt.date(2024, 12, 31)]
    ex_on, pay_on = {}, {}
    for ex, pay, sym, per_share in dist_rows:
        ex_on.setdefault(ex, []).append((pay, sym, per_share))

    def buy_from_cash(day, syms, note):
        for i, sym in enumerate(syms):
            c = currency[sym]
            budget = cash.get(c, 0) / (len(syms) - i)
            q = int((budget - OVERSEAS_FEE) / closes[day][sym])
            if q > 0:
                books.add(day, OVERSEAS, "buy", symbol=sym, quantity=Decimal(q),
                          price=closes[day][sym], fee=OVERSEAS_FEE, note=note, currency=c)

    def exchange(day, amount, into, note):
        books.add(day, OVERSEAS, "exchange", amount=amount, fee=EXCHANGE_FEE, note=note,
                  rate=broker_rate(rates[day][into], True), to_currency=into)

    for day in days:
        if day < OVERSEAS_OPENS:
            continue
        for pay, sym, per_share in ex_on.get(day, ()):
            if held.get(sym):
                pay_on.setdefault(pay, []).append((sym, cents(held[sym] * per_share)))
        for sym, amount in pay_on.pop(day, ()):
            c = currency[sym]
            books.add(day, OVERSEAS, "dividend", symbol=sym, amount=amount, currency=c)
            books.add(day, OVERSEAS, "tax", symbol=sym, amount=cents(amount * WITHHOLDING),
                      note="withheld 15 %", currency=c)
        if day == OVERSEAS_OPENS:
            books.add(day, OVERSEAS, "deposit", amount=Decimal(20000), note="opening deposit")
            sym = "ZQEO"
            rate = broker_rate(rates[day]["EUR"], True)
            q = int((6000 * rate - OVERSEAS_FEE) / closes[day][sym])
            books.add(day, OVERSEAS, "buy", symbol=sym, quantity=Decimal(q),
                      price=closes[day][sym], fee=OVERSEAS_FEE, currency="EUR", rate=rate,
                      note="settled in dollars")
            exchange(day, Decimal(7000), "GBP", "pounds for the pound names")
            buy_from_cash(day, ["QZBN", "ZJHW"], "paid in pounds")
            exchange(day, Decimal(6000), "EUR", "euros for the euro names")
            buy_from_cash(day, ["XJKA"], "paid in euros")
        elif day in opens:
            books.add(day, OVERSEAS, "deposit", amount=Decimal(4000), note="yearly top-up")
            exchange(day, Decimal(2000), "EUR", "euros for the euro names")
            exchange(day, Decimal(2000), "GBP", "pounds for the pound names")
            buy_from_cash(day, ["XJKA", "ZQEO"], "paid in euros")
            buy_from_cash(day, ["QZBN", "ZJHW"], "paid in pounds")
        elif day == dt.date(2025, 6, 2):
            books.add(day, OVERSEAS, "sell", symbol="ZQEO", quantity=held["ZQEO"],
                      price=closes[day]["ZQEO"], fee=OVERSEAS_FEE, currency="EUR",
                      rate=broker_rate(rates[day]["EUR"], False), note="settled in dollars")
        elif day == dt.date(2025, 9, 1):
            q = held["QZBN"] // 2
            books.add(day, OVERSEAS, "sell", symbol="QZBN", quantity=q,
                      price=closes[day]["QZBN"], fee=OVERSEAS_FEE, currency="GBP",
                      note="kept in pounds")
            pounds = cash["GBP"] - EXCHANGE_FEE
            books.add(day, OVERSEAS, "exchange", amount=pounds, fee=EXCHANGE_FEE,
                      currency="GBP", to_currency="USD", note="pounds back into dollars",
                      rate=(rates[day]["GBP"] * (1 - SPREAD)).quantize(Decimal("0.0001")))
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
    universe = Universe(rng, dollar_stocks(a.scale))
    days, closes, pe_rows, dist_rows = model(rng, universe)
    pit = PointInTime(pe_rows)
    books = simulate(days, closes, pit, dist_rows, universe)
    abroad_rng = random.Random(a.seed + 1)
    abroad = Universe(abroad_rng, [(s, n, sec) for s, n, sec, _ in ABROAD])
    _, abroad_closes, abroad_pe, abroad_dist = model(abroad_rng, abroad)
    for day in days:  # the abroad model's own bond fund and index are not used
        closes[day].update((s, abroad_closes[day][s]) for s, _, _, _ in ABROAD)
    abroad_dist = [r for r in abroad_dist if r[2] != BOND_FUND]
    rates = exchange_rates(abroad_rng, days)
    third = overseas(days, closes, rates, abroad_dist)
    os.makedirs(a.out, exist_ok=True)
    out = lambda name: os.path.join(a.out, name)

    write(out("accounts.csv"), "name,currency,basis,allow_negative_cash",
          [(TAXABLE, "USD", "fifo", "no"), (RETIREMENT, "USD", "hifo", "no"),
           (OVERSEAS, "USD", "fifo", "no")])
    secs = [(s, n, "stock", "USD", 1, sec) for s, n, sec in universe.stocks]
    secs += [(s, n, "stock", c, 1, sec) for s, n, sec, c in ABROAD]
    secs.append((BOND_FUND, "Fenmoor Aggregate Bond Fund", "fund", "USD", 1, "Bonds"))
    secs.append((BENCHMARK, "Zanthe Total Return Index", "index", "USD", 1, ""))
    write(out("securities.csv"), "symbol,name,kind,currency,lot_size,sector", sorted(secs))
    symbols = sorted(closes[days[0]])
    write(out("prices.csv"), "date,symbol,close",
          ((d, s, closes[d][s]) for d in days for s in symbols))
    write(out("metrics.csv"), "date,symbol,metric,value,known_on",
          sorted((me, s, "pe", pe, k) for me, s, pe, k in pe_rows + abroad_pe))
    write(out("distributions.csv"), "ex_date,pay_date,symbol,per_share",
          sorted(dist_rows + abroad_dist))
    write(out("rates.csv"), "date,base,quote,rate",
          ((d, c, "USD", r) for d in days for c, r in sorted(rates[d].items())))
    write(out("splits.csv"), "date,symbol,ratio", sorted((d, s, r) for s, d, r in SPLITS))
    cols = ["symbol", "quantity", "price", "amount", "fee", "ref", "note", "to_account",
            "currency", "rate", "to_currency"]
    txn = []
    for day, account, kind, f in sorted(books.rows + third.rows, key=lambda r: r[0]):
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
        f.write(f'accounts = ["{TAXABLE}", "{RETIREMENT}", "{OVERSEAS}"]\n')


if __name__ == "__main__":
    main()
