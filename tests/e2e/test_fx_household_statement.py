"""The statement of a household whose accounts keep different currencies (a euro account and a
dollar account), in a third currency (pounds), checked figure by figure against an independent
replay with Python's decimal and pandas.

Source of the expected figures: tests/reference/fx_reference.py (Rates: the latest stored rate on
or before a day, by pandas' Series.asof; money rounded half to even to the cent once per
conversion) and the method of docs/methods-ledger.md ("A statement in another currency"): each
row as booked in its account's own currency, converted at the rate of its day; values at the
rate of the day valued; a lot's cost at the rate of its acquisition day; translation is what is
left. The translation line is also recomputed by its own route: the pound worth of each
account's own cash changes only with the rate, so translation = the sum over the days between
rate changes of the cash balance times the rate's change (IAS 21, "The Effects of Changes in
Foreign Exchange Rates": translation differences arise from translating at different rates,
from memory), to within the rounding of the conversions (half a penny each).
"""
import json
import os
import sys
from decimal import Decimal

import jsonschema

sys.path.insert(0, os.path.dirname(__file__))
sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "reference"))
from keel_cli import SOURCE, Ledger, check, equal, write_csv_files  # noqa: E402
from fx_reference import Rates, q  # noqa: E402

# Pounds per unit, invented.
EUR_GBP = [("2023-12-01", "0.8600"), ("2023-12-29", "0.8650"), ("2024-02-01", "0.8550"),
           ("2024-03-15", "0.8540"), ("2024-05-20", "0.8520"), ("2024-06-10", "0.8450"),
           ("2024-07-01", "0.8460"), ("2024-09-02", "0.8420"), ("2024-10-15", "0.8380"),
           ("2024-12-31", "0.8290")]
USD_GBP = [("2023-12-01", "0.7900"), ("2023-12-29", "0.7850"), ("2024-02-01", "0.7880"),
           ("2024-05-20", "0.7860"), ("2024-07-01", "0.7910"), ("2024-10-15", "0.7660"),
           ("2024-12-31", "0.7980")]
ACCOUNTS = {"Euro": "EUR", "Dollar": "USD"}
SECURITIES = {"KVA": ("Kavanta Mills", "EUR"), "BRN": ("Bryndle Labs", "USD")}
CLOSES = {("2023-12-29", "KVA"): Decimal("82"), ("2024-12-31", "KVA"): Decimal("101"),
          ("2023-12-29", "BRN"): Decimal("125"), ("2024-12-31", "BRN"): Decimal("150")}
ROWS = [  # (date, account, kind, symbol, quantity, price, amount, fee)
    ("2023-12-01", "Euro", "deposit", "", "", "", "10000", ""),
    ("2023-12-01", "Dollar", "deposit", "", "", "", "8000", ""),
    ("2023-12-04", "Euro", "buy", "KVA", "50", "80", "", "2"),
    ("2023-12-05", "Dollar", "buy", "BRN", "30", "120", "", "1"),
    ("2024-02-01", "Dollar", "deposit", "", "", "", "2000", ""),
    ("2024-03-15", "Euro", "dividend", "KVA", "", "", "60", ""),
    ("2024-03-15", "Euro", "tax", "KVA", "", "", "9", ""),
    ("2024-05-20", "Dollar", "sell", "BRN", "10", "140", "", "1"),
    ("2024-06-10", "Euro", "sell", "KVA", "20", "95", "", "2"),
    ("2024-07-01", "Dollar", "fee", "", "", "", "15", ""),
    ("2024-09-02", "Euro", "withdrawal", "", "", "", "1000", ""),
    ("2024-10-15", "Dollar", "dividend", "BRN", "", "", "24", ""),
]
OPENING, CLOSING, START = "2023-12-31", "2024-12-31", "2024-01-01"

led = Ledger(currency="EUR")
for name, code in ACCOUNTS.items():
    led.ok("account", "add", name, "--currency", code)
for symbol, (name, code) in SECURITIES.items():
    led.ok("security", "add", symbol, "--name", name, "--kind", "stock", "--currency", code)
files = write_csv_files(led.dir.name, (
    ("rates.csv", ["date", "base", "quote", "rate"],
     [(d, "EUR", "GBP", r) for d, r in EUR_GBP] + [(d, "USD", "GBP", r) for d, r in USD_GBP]),
    ("closes.csv", ["date", "symbol", "close"], [(d, s, str(c)) for (d, s), c in CLOSES.items()]),
    ("trades.csv", ["date", "account", "kind", "symbol", "quantity", "price", "amount", "fee"],
     ROWS)))
led.ok("import", "fx", files["rates.csv"], "--quiet")
led.ok("import", "prices", files["closes.csv"], "--quiet")
led.ok("import", "transactions", files["trades.csv"])

# --- The independent replay: each account in its own currency, first in, first out.
rates = {"EUR": Rates(EUR_GBP), "USD": Rates(USD_GBP)}


def gbp(amount, code, day):
    return q(Decimal(amount) * rates[code].eur_usd(day))  # the pounds a unit buys on the day


def close(symbol, day):
    return max((d, c) for (d, s), c in CLOSES.items() if s == symbol and d <= day)[1]


cash = {a: Decimal(0) for a in ACCOUNTS}
lots = {a: [] for a in ACCOUNTS}  # [day, quantity, cost in the account's currency]
flows = {k: Decimal(0) for k in ("deposits", "withdrawals", "dividends", "withholding", "fees",
                                 "trade_fees")}
realized, income = [], []
cash_moves = []  # (account, day, change of own cash): the translation check below


def value(day, lines=None):
    """Holdings on `day` in pounds, line by line: (total, unrealized); each line appended to
    `lines` as (account, symbol or "cash", cost, value)."""
    lines = [] if lines is None else lines
    total = unrealized = Decimal(0)
    for a, code in ACCOUNTS.items():
        by_symbol = {}
        for lot in lots[a]:
            by_symbol.setdefault(lot[3], []).append(lot)
        for symbol, held in by_symbol.items():
            worth = gbp(sum(x[1] for x in held) * close(symbol, day), code, day)
            cost = sum(gbp(x[2], code, x[0]) for x in held)
            total += worth
            unrealized += worth - cost
            lines.append((a, symbol, cost, worth))
        total += gbp(cash[a], code, day)
        lines.append((a, "cash", None, gbp(cash[a], code, day)))
    return total, unrealized


opening = None
for day, account, kind, symbol, qty, price, amount, fee in ROWS:
    if day >= START and opening is None:
        opening = value(OPENING)
    code = ACCOUNTS[account]
    in_year = day >= START
    fee = Decimal(fee or 0)
    before = cash[account]
    if kind in ("deposit", "dividend"):
        cash[account] += Decimal(amount)
    elif kind in ("withdrawal", "tax", "fee"):
        cash[account] -= Decimal(amount)
    elif kind == "buy":
        cost = Decimal(qty) * Decimal(price) + fee
        cash[account] -= cost
        lots[account].append([day, Decimal(qty), cost, symbol])
    elif kind == "sell":
        lot = lots[account][0]  # one lot each here
        proceeds = Decimal(qty) * Decimal(price) - fee
        part_cost = q(lot[2] * Decimal(qty) / lot[1])
        realized.append((account, symbol, gbp(proceeds, code, day), gbp(part_cost, code, lot[0])))
        lot[1] -= Decimal(qty)
        lot[2] -= part_cost
        cash[account] += proceeds
    cash_moves.append((account, day, cash[account] - before))
    if not in_year:
        continue
    key = {"deposit": "deposits", "withdrawal": "withdrawals", "dividend": "dividends",
           "tax": "withholding", "fee": "fees"}.get(kind)
    if key:
        flows[key] += gbp(amount, code, day)
    if kind in ("buy", "sell"):
        flows["trade_fees"] += gbp(fee, code, day)
    if kind == "dividend":
        withheld = sum((gbp(r[6], code, r[0]) for r in ROWS if r[2] == "tax" and r[0] == day
                        and r[1] == account and r[3] == symbol), Decimal(0))
        income.append((account, day, symbol, gbp(amount, code, day), withheld, code,
                       Decimal(amount)))
closing_lines = []
closing = value(CLOSING, closing_lines)
gain = sum((p - c for _, _, p, c in realized), Decimal(0))
explained = (opening[0] + flows["deposits"] - flows["withdrawals"] + flows["dividends"]
             - flows["withholding"] - flows["fees"] + gain + closing[1] - opening[1])
translation = closing[0] - explained

# By its own route: each account's own cash times each change of its rate over the year.
by_route = Decimal(0)
for a, code in ACCOUNTS.items():
    days = sorted({d for d, _ in (EUR_GBP if code == "EUR" else USD_GBP) if OPENING < d
                   <= CLOSING} | {d for acc, d, _ in cash_moves if acc == a and d >= START})
    held = sum((c for acc, d, c in cash_moves if acc == a and d <= OPENING), Decimal(0))
    rate = rates[code].eur_usd(OPENING)
    for d in days:
        new_rate = rates[code].eur_usd(d)
        by_route += held * (new_rate - rate)  # the cash held before the day, at the new rate
        rate = new_rate
        held += sum((c for acc, dd, c in cash_moves if acc == a and dd == d), Decimal(0))
check(abs(translation - by_route) <= Decimal("0.05"),
      f"translation {translation} by the residual, {by_route} as cash times the rates' moves")

# --- keel's statement in pounds.
s = led.json("statement", "--year", "2024", "--currency", "GBP")
equal(s["schema"], {"name": "keel.statement", "version": 4}, "schema tag")
with open(os.path.join(SOURCE, "docs", "schema", "statement.json")) as f:
    errors = list(jsonschema.Draft202012Validator(json.load(f)).iter_errors(s))
check(not errors, "; ".join(f"{list(e.path)}: {e.message}" for e in errors[:5]))
equal((s["currency"], s["scope"]), ("GBP", "all accounts"), "reporting currency and scope")
y = s["summary"]
for key, want in (("opening_value", opening[0]), ("unrealized_opening", opening[1]),
                  ("deposits", flows["deposits"]), ("withdrawals", flows["withdrawals"]),
                  ("dividends", flows["dividends"]), ("withholding", flows["withholding"]),
                  ("fees", flows["fees"]), ("trade_fees", flows["trade_fees"]),
                  ("realized_gain", gain), ("unrealized_closing", closing[1]),
                  ("closing_value", closing[0]), ("translation", translation),
                  ("transfers_in", Decimal(0)), ("transfers_out", Decimal(0)),
                  ("unrealized_moved", Decimal(0)), ("fx_cash_realized", Decimal(0)),
                  ("fx_cash_unrealized_closing", Decimal(0)), ("difference", Decimal(0))):
    equal(Decimal(y[key]), want, f"summary: {key}")
equal(y["translated"], True, "the summary says it translated")
equal(sorted((g["account"], g["symbol"], Decimal(g["proceeds"]), Decimal(g["cost"]))
             for g in s["realized"]), sorted(realized), "realized gains in pounds")
equal([(i["account"], i["date"], i["symbol"], Decimal(i["gross"]), Decimal(i["withheld"]),
        i["converted"]["currency"], Decimal(i["converted"]["local_gross"])) for i in s["income"]],
      income, "income in pounds, with the amount booked in the account's currency")
equal(Decimal(s["withholding"]["total"]), flows["withholding"], "withholding in pounds")
equal(Decimal(s["holdings_total"]), closing[0], "holdings total")
equal(sorted([(h["account"], h["symbol"], Decimal(h["cost_basis"]), Decimal(h["market_value"]))
              for h in s["holdings"]] + [(c["account"], "cash", c["cost"], Decimal(c["value"]))
                                         for c in s["cash"]]),
      sorted(closing_lines), "each holding and each account's cash in pounds (cash has no cost)")

# Lots, holdings and gains name the currency they report in; the household's lots in pounds
# carry the same costs as the statement's holdings.
lots = led.json("lots", "--as-of", CLOSING, "--currency", "GBP")
equal((lots["currency"],
       sorted((x["account"], x["symbol"], Decimal(x["cost"])) for x in lots["lots"])),
      ("GBP", sorted((a, sym, cost) for a, sym, cost, _ in closing_lines if sym != "cash")),
      "lots in pounds")
equal([led.json(*args)["currency"] for args in (("lots",), ("holdings",), ("gains",),
                                                ("gains", "--account", "Dollar"))],
      ["EUR", "EUR", "EUR", "USD"],
      "the ledger's own currency for the household, else the account's")

# The default for the household is the ledger's own currency; one account's is its own.
eur = led.json("statement", "--year", "2024")
equal((eur["currency"], eur["summary"]["translated"], eur["summary"]["difference"]),
      ("EUR", True, "0"), "the household in the ledger's currency")
one = led.json("statement", "--year", "2024", "--account", "Dollar")
equal((one["currency"], one["summary"]["translated"], one["summary"]["translation"]),
      ("USD", False, "0"), "one account in its own currency: nothing to translate")

text = led.ok("statement", "--year", "2024", "--currency", "GBP")
for words in ("translation into GBP (rates moved)",
              "Check: the pieces add up to the closing value exactly.",
              "Every figure is in GBP, translated from each account's own currency"):
    check(words in text, f"the statement's text lacks {words!r}")
print(f"fx household statement: every figure matches the decimal replay; translation {translation}"
      f" GBP (cash times the rates' moves: {by_route})")
