"""The year-end statement of a euro account holding dollar stocks and dollar cash, checked against
an independent replay with Python's decimal (and pandas for the rate look-up).

Source of the expected figures: tests/reference/fx_reference.py, which follows the method of
docs/methods-ledger.md ("Foreign currencies") by its own route, from the rows below alone. Income
and withholding are converted here at the rate given on the row, else at the latest stored rate
on or before the day, rounded half to even to the cent (Python's decimal). The year summary's
identity (docs/statement.md) is then added up from those independent figures and must give the
closing value exactly; keel's `statement --json` must agree with every figure to the cent and
validate against docs/schema/statement.json (python3-jsonschema).
"""
import json
import os
import sys
from decimal import Decimal

import jsonschema

sys.path.insert(0, os.path.dirname(__file__))
sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "reference"))
from keel_cli import SOURCE, Ledger, check, equal, write_csv_files  # noqa: E402
import fx_reference  # noqa: E402

RATES = [  # EUR/USD, dollars per euro, invented
    ("2024-01-02", "1.1050"), ("2024-02-01", "1.0875"), ("2024-03-01", "1.0820"),
    ("2024-05-02", "1.0710"), ("2024-06-03", "1.0850"), ("2024-07-01", "1.0720"),
    ("2024-08-01", "1.0815"), ("2024-09-02", "1.1045"), ("2024-11-01", "1.0860"),
    ("2024-12-31", "1.0389"),
]
CURRENCIES = {"HLX": "USD", "ORV": "USD"}
CLOSES = {"HLX": Decimal("64.10"), "ORV": Decimal("92.75")}
COLUMNS = ["date", "account", "kind", "symbol", "quantity", "price", "amount", "fee", "ref",
           "currency", "rate", "to_currency"]
ROWS = [  # (date, kind, symbol, quantity, price, amount, fee, currency, rate, to)
    ("2024-01-02", "deposit", "", "", "", "20000", "", "", "", ""),
    ("2024-01-03", "exchange", "", "", "", "8000", "4.00", "EUR", "1.1040", "USD"),
    ("2024-01-10", "buy", "HLX", "60", "52.35", "", "1.50", "", "", ""),
    ("2024-01-15", "buy", "ORV", "40", "88.10", "", "", "", "1.1000", ""),
    ("2024-03-15", "dividend", "HLX", "", "", "42.00", "", "", "", ""),
    ("2024-03-15", "tax", "HLX", "", "", "6.30", "", "", "", ""),
    ("2024-05-15", "dividend", "ORV", "", "", "20.00", "", "", "1.0725", ""),
    ("2024-05-15", "tax", "ORV", "", "", "3.00", "", "", "1.0725", ""),
    ("2024-06-12", "sell", "HLX", "40", "61.25", "", "1.50", "", "", ""),
    ("2024-07-20", "sell", "ORV", "15", "95.40", "", "", "", "1.0700", ""),
    ("2024-08-05", "fee", "", "", "", "12.00", "", "USD", "", ""),
    ("2024-09-10", "exchange", "", "", "", "2000", "", "USD", "0.9050", "EUR"),
    ("2024-11-20", "withdrawal", "", "", "", "500", "", "USD", "", ""),
]

led = Ledger(currency="EUR")
led.ok("account", "add", "Main")
led.ok("security", "add", "HLX", "--name", "Helixor Tools", "--kind", "stock", "--currency", "USD")
led.ok("security", "add", "ORV", "--name", "Orvane Foods", "--kind", "stock", "--currency", "USD")
files = write_csv_files(led.dir.name, (
        ("rates.csv", ["date", "base", "quote", "rate"], [(d, "EUR", "USD", r) for d, r in RATES]),
        ("closes.csv", ["date", "symbol", "close"], [("2024-12-31", s, str(c))
                                                     for s, c in CLOSES.items()]),
        ("trades.csv", COLUMNS, [(d, "Main", k, s, qn, p, am, fe, "", c, r, to)
                                 for d, k, s, qn, p, am, fe, c, r, to in ROWS])))
led.ok("import", "fx", files["rates.csv"], "--quiet")
led.ok("import", "prices", files["closes.csv"], "--quiet")
led.ok("import", "transactions", files["trades.csv"])

# --- The independent replay (Python's decimal, pandas for the latest rate on or before a day).
ids = [t["id"] for t in led.json("history")["transactions"]]
ref_rows = [{"id": ids[i], "date": d, "account": "Main", "kind": k, "symbol": s or None,
             "quantity": qn, "price": p, "amount": am, "fee": fe, "currency": c or None,
             "rate": r or None, "to_currency": to or None}
            for i, (d, k, s, qn, p, am, fe, c, r, to) in enumerate(ROWS)]
fx_gains = []
books, gains, rates = fx_reference.replay(ref_rows, RATES, CURRENCIES, fx_gains)
positions, cash, total = fx_reference.holdings(books, rates, CLOSES, CURRENCIES, "2024-12-31")


def in_eur(row):
    """A row's amount in euros: at its own rate when it has one, else the day's stored rate."""
    amount = Decimal(row["amount"])
    if row["rate"]:
        return fx_reference.div(amount, Decimal(row["rate"])), "row", Decimal(row["rate"])
    return rates.to_eur(amount, row["date"]), "stored", rates.eur_usd(row["date"])


income = []
for row in ref_rows:
    if row["kind"] == "dividend":
        gross, source, rate = in_eur(row)
        tax = [in_eur(t)[0] for t in ref_rows
               if t["kind"] == "tax" and t["date"] == row["date"] and t["symbol"] == row["symbol"]]
        income.append((row["date"], row["symbol"], gross, sum(tax, Decimal(0)), "USD",
                       Decimal(row["amount"]), source, rate))

deposits = sum((Decimal(r["amount"]) for r in ref_rows if r["kind"] == "deposit"), Decimal(0))
withdrawals = sum((in_eur(r)[0] for r in ref_rows if r["kind"] == "withdrawal"), Decimal(0))
dividends = sum((i[2] for i in income), Decimal(0))
withholding = sum((in_eur(r)[0] for r in ref_rows if r["kind"] == "tax"), Decimal(0))
fees = sum((in_eur(r)[0] for r in ref_rows if r["kind"] == "fee"), Decimal(0))
realized = sum((g["gain"] for g in gains), Decimal(0))
unrealized = sum((p["market_value"] - p["cost_basis"] for p in positions), Decimal(0))
fx_realized = sum((g["gain"] for g in fx_gains), Decimal(0))
fx_unrealized = sum((c["value"] - c["cost"] for c in cash if c.get("currency")), Decimal(0))
# The identity of docs/statement.md, from the independent figures (the ledger opens in the year).
explained = (deposits - withdrawals + dividends - withholding - fees + realized + unrealized
             + fx_realized + fx_unrealized)
equal(explained, total, "the independent figures add up to the independent closing value")

# --- keel's statement.
s = led.json("statement", "--year", "2024")
equal(s["schema"], {"name": "keel.statement", "version": 4}, "schema tag")
# Checked with python3-jsonschema (Debian) against docs/schema/statement.json, as every report is.
with open(os.path.join(SOURCE, "docs", "schema", "statement.json")) as f:
    errors = list(jsonschema.Draft202012Validator(json.load(f)).iter_errors(s))
check(not errors, "; ".join(f"{list(e.path)}: {e.message}" for e in errors[:5]))
equal(s["currency"], "EUR", "reporting currency")
y = s["summary"]
for key, want in (("opening_value", Decimal(0)), ("deposits", deposits),
                  ("withdrawals", withdrawals), ("dividends", dividends),
                  ("withholding", withholding), ("fees", fees), ("realized_gain", realized),
                  ("unrealized_closing", unrealized), ("fx_cash_realized", fx_realized),
                  ("fx_cash_unrealized_closing", fx_unrealized), ("closing_value", total),
                  ("transfers_in", Decimal(0)), ("transfers_out", Decimal(0)),
                  ("difference", Decimal(0))):
    equal(Decimal(y[key]), want, f"summary: {key}")
equal(Decimal(s["holdings_total"]), total, "holdings total")

equal([(h["symbol"], Decimal(h["quantity"]), Decimal(h["cost_basis"]), Decimal(h["market_value"]),
        h["currency"], h["rate"]["pair"], Decimal(h["rate"]["rate"]), h["rate"]["day"],
        Decimal(h["local_value"])) for h in s["holdings"]],
      [(p["symbol"], p["quantity"], p["cost_basis"], p["market_value"], "USD", "EUR/USD",
        Decimal("1.0389"), "2024-12-31", p["quantity"] * CLOSES[p["symbol"]])
       for p in positions], "positions: local price, rate used and converted value")
equal([(c["currency"], Decimal(c["amount"]), Decimal(c["value"]),
        None if c["cost"] is None else Decimal(c["cost"])) for c in s["cash"]],
      [(c.get("currency"), c["amount"], c.get("value", c["amount"]), c.get("cost"))
       for c in cash], "cash in each currency, with the cost of the dollars")

fields = ["quantity", "proceeds", "cost", "gain", "local_proceeds", "local_cost", "price_part",
          "currency_part"]
equal([(g["symbol"], g["lot"]) + tuple(Decimal(g[k]) for k in fields) for g in s["realized"]],
      [(g["symbol"], g["lot"]) + tuple(g[k] for k in fields) for g in gains],
      "realized gains with price part and currency part")
equal([(g["acquired"], g["disposed"]) + tuple(Decimal(g[k]) for k in
                                              ("amount", "proceeds", "cost", "gain"))
       for g in s["fx_cash_gains"]],
      [(g["acquired"], g["disposed"], g["amount"], g["proceeds"], g["cost"], g["gain"])
       for g in fx_gains], "currency gains realized on dollar cash, apart from price gains")
check(len(fx_gains) >= 4, f"the dollar cash was spent several times: {fx_gains}")

equal([(i["date"], i["symbol"], Decimal(i["gross"]), Decimal(i["withheld"]),
        i["converted"]["currency"], Decimal(i["converted"]["local_gross"]),
        i["converted"]["source"], Decimal(i["converted"]["rate"])) for i in s["income"]],
      income, "income and withholding converted at the row's rate, else the day's")
equal(s["withholding"]["total"], str(withholding), "withholding by security, converted")

# The text form names the rate, says which rate converted each payment, and adds up.
text = led.ok("statement", "--year", "2024")
for words in ("currency gain on foreign cash, realized",
              "Converted at EUR/USD 1.0389 (2024-12-31).",
              "Check: the pieces add up to the closing value exactly.",
              "Realized gains in other currencies: price part and currency part",
              "the row's rate", "stored, 2024-03-01", "Currency gains on foreign cash"):
    check(words in text, f"the statement's text lacks {words!r}")
print(f"fx statement: every figure matches the decimal replay; closing value {total} EUR")
