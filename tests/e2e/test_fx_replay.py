"""A euro household holding dollar stocks and dollar cash, checked against an independent replay.

The ledger is built the way a person would: exchange rates imported with `keel import fx`
(exactly once: the same file again adds nothing; a different rate for a stored day is refused
unless --replace), the trades imported from a CSV with currency and rate columns, one exchange
recorded by hand. Its holdings and realized gains (each with its price and currency part) must
match tests/reference/fx_reference.py (Python's decimal and pandas) to the cent, exactly.
"""
import os
import sys
from decimal import Decimal

sys.path.insert(0, os.path.dirname(__file__))
sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "reference"))
from keel_cli import Ledger, check, csv_text, equal  # noqa: E402
import fx_reference  # noqa: E402

RATES = [  # EUR/USD, invented
    ("2024-01-02", "1.1050"), ("2024-02-01", "1.0875"), ("2024-03-01", "1.0820"),
    ("2024-04-02", "1.0790"), ("2024-05-02", "1.0710"), ("2024-06-03", "1.0850"),
    ("2024-07-01", "1.0720"), ("2024-08-01", "1.0815"), ("2024-09-02", "1.1045"),
    ("2024-10-01", "1.1130"), ("2024-11-01", "1.0860"), ("2024-12-02", "1.0500"),
    ("2024-12-31", "1.0389"),
]
CURRENCIES = {"HLX": "USD", "ORV": "USD", "MRL": "EUR"}
CLOSES = {"HLX": Decimal("64.10"), "ORV": Decimal("92.75"), "MRL": Decimal("24.05")}
COLUMNS = ["date", "account", "kind", "symbol", "quantity", "price", "amount", "fee", "ref",
           "currency", "rate", "to_currency"]
ROWS = [  # (date, account, kind, symbol, quantity, price, amount, fee, currency, rate, to)
    ("2024-01-02", "Main", "deposit", "", "", "", "20000", "", "", "", ""),
    ("2024-01-02", "Second", "deposit", "", "", "", "5000", "", "", "", ""),
    ("2024-01-03", "Main", "exchange", "", "", "", "8000", "4.00", "EUR", "1.1040", "USD"),
    ("2024-01-10", "Main", "buy", "HLX", "60", "52.35", "", "1.50", "", "", ""),
    ("2024-01-15", "Main", "buy", "ORV", "40", "88.10", "", "", "", "1.1000", ""),
    ("2024-02-05", "Main", "buy", "MRL", "100", "21.40", "", "2", "", "", ""),
    ("2024-03-15", "Main", "dividend", "HLX", "", "", "42.00", "", "", "", ""),
    ("2024-03-15", "Main", "tax", "HLX", "", "", "6.30", "", "", "", ""),
    ("2024-04-10", "Main", "buy", "HLX", "30", "55.80", "", "", "", "", ""),
    ("2024-06-12", "Main", "sell", "HLX", "70", "61.25", "", "1.50", "", "", ""),
    ("2024-07-20", "Main", "sell", "ORV", "15", "95.40", "", "", "", "1.0700", ""),
    ("2024-09-10", "Main", "exchange", "", "", "", "2000", "", "USD", "0.9050", "EUR"),
    ("2024-10-15", "Second", "buy", "MRL", "50", "23.10", "", "", "", "", ""),
    ("2024-11-20", "Main", "withdrawal", "", "", "", "500", "", "USD", "", ""),
]


led = Ledger(currency="EUR")
for name in ("Main", "Second"):
    led.ok("account", "add", name)
led.ok("security", "add", "HLX", "--name", "Helixor Tools", "--kind", "stock", "--currency", "USD")
led.ok("security", "add", "ORV", "--name", "Orvane Foods", "--kind", "stock", "--currency", "USD")
led.ok("security", "add", "MRL", "--name", "Merlo Rail", "--kind", "stock")

# Rates: imported once; the same file again adds nothing; a changed rate is refused.
rates_file = os.path.join(led.dir.name, "rates.csv")
with open(rates_file, "w") as f:
    f.write(csv_text(["date", "base", "quote", "rate"], [(d, "EUR", "USD", r) for d, r in RATES]))
equal(led.ok("import", "fx", rates_file, "--quiet"),
      f"{rates_file}: 13 rows read; added 13, 0 unchanged\n", "import fx")
again = led.ok("import", "fx", rates_file, "--quiet")
check(again.startswith(f"{rates_file}: 13 rows read; added 0, 13 unchanged\n"), again)
changed = os.path.join(led.dir.name, "changed.csv")
with open(changed, "w") as f:
    f.write("date,base,quote,rate\n2024-01-02,EUR,USD,1.2\n")
equal(led.fails("import", "fx", changed, "--quiet"),
      f"{changed}:2: column 'rate': EUR/USD on 2024-01-02: the ledger already has rate 1.105; "
      f"use --replace to overwrite it\nkeel: error: {changed}: 1 error; nothing was changed",
      "a conflicting rate")
exported = led.ok("export", "fx")
equal(exported.splitlines()[:2], ["date,base,quote,rate", "2024-01-02,EUR,USD,1.105"], "export fx")
equal(len(exported.splitlines()), 14, "export fx rows")

# Trades: one file with currency and rate columns.
txn_file = os.path.join(led.dir.name, "trades.csv")
with open(txn_file, "w") as f:
    f.write(csv_text(COLUMNS, [(d, a, k, s, qn, p, am, fe, "", c, r, to)
                               for d, a, k, s, qn, p, am, fe, c, r, to in ROWS]))
led.ok("import", "transactions", txn_file)
prices_file = os.path.join(led.dir.name, "closes.csv")
with open(prices_file, "w") as f:
    f.write(csv_text(["date", "symbol", "close"], [("2024-12-31", s, str(c))
                                                   for s, c in CLOSES.items()]))
led.ok("import", "prices", prices_file, "--quiet")
verify = led.ok("verify")
check("problem" not in verify.lower() or "0 problems" in verify.lower(), verify)

# The independent replay.
ref_rows = []
ids = [t["id"] for t in led.json("history")["transactions"]]
for i, (d, a, k, s, qn, p, am, fe, c, r, to) in enumerate(ROWS):
    ref_rows.append({"id": ids[i], "date": d, "account": a, "kind": k, "symbol": s or None,
                     "quantity": qn, "price": p, "amount": am, "fee": fe,
                     "currency": c or None, "rate": r or None, "to_currency": to or None})
books, gains, rates = fx_reference.replay(ref_rows, RATES, CURRENCIES)
positions, cash, total = fx_reference.holdings(books, rates, CLOSES, CURRENCIES, "2024-12-31")

h = led.json("holdings", "--as-of", "2024-12-31")
equal([(p["account"], p["symbol"], Decimal(p["quantity"]), Decimal(p["cost_basis"]),
        Decimal(p["market_value"])) for p in h["positions"]],
      [(p["account"], p["symbol"], p["quantity"], p["cost_basis"], p["market_value"])
       for p in positions], "holdings: positions")
equal([(c["account"], c.get("currency", ""), Decimal(c["amount"]),
        Decimal(c.get("value", c["amount"]))) for c in h["cash"]],
      [(c["account"], c.get("currency", ""), c["amount"], c.get("value", c["amount"]))
       for c in cash], "holdings: cash in each currency")
equal(Decimal(h["total_value"]), total, "holdings: total in EUR")
usd_position = [p for p in h["positions"] if p["symbol"] == "ORV"][0]
equal(usd_position["rate"]["pair"], "EUR/USD", "the rate used is shown")
equal(usd_position["local_value"], str(Decimal("25") * CLOSES["ORV"]), "the local value is shown")

g = led.json("gains")["gains"]
fields = ["quantity", "proceeds", "cost", "gain", "local_proceeds", "local_cost", "price_part",
          "currency_part"]
equal([(x["symbol"], x["lot"], x["sell"]) + tuple(Decimal(x[k]) for k in fields)
       for x in g if "local_cost" in x],
      [(x["symbol"], x["lot"], x["sell"]) + tuple(x[k] for k in fields) for x in gains],
      "gains, with price and currency parts")
print("fx replay: holdings and gains match the decimal/pandas replay;",
      f"{len(gains)} gain parts, total {total} EUR")

# The household's statement converts as holdings and gains do (test_fx_statement.py checks
# each of its figures): the same realized parts and closing value, and its pieces add up.
st = led.json("statement", "--year", "2024")
equal([(x["symbol"], x["lot"]) + tuple(Decimal(x[k]) for k in fields) for x in st["realized"]
       if x["local_cost"] is not None],
      [(x["symbol"], x["lot"]) + tuple(x[k] for k in fields) for x in gains],
      "statement: realized gains with price and currency parts")
equal(Decimal(st["summary"]["closing_value"]), total, "statement: closing value in EUR")
equal(st["summary"]["difference"], "0", "statement: the pieces add up")

# Export and import again into an empty ledger: the same holdings and gains.
copy = Ledger(currency="EUR")
for what in ("accounts", "securities", "fx", "transactions", "prices"):
    f = os.path.join(led.dir.name, f"out-{what}.csv")
    led.ok("export", what, "--out", f)
    copy.ok("import", what, f, *(["--quiet"] if what not in ("accounts", "transactions") else []))
equal(copy.json("holdings", "--as-of", "2024-12-31"), h, "holdings after export and import")
equal(copy.json("gains")["gains"], g, "gains after export and import")
print("fx replay: the statement agrees; export and import keep holdings and gains")
