"""keel demo: the invented scenario of examples/demo.

- The generator is deterministic: run again, it writes the committed files
  byte for byte.
- keel demo builds a fresh ledger and shows its reports; the printed holdings
  total is what `keel holdings --json` says, the total is cash plus positions,
  and positions and cash (per currency) are what an independent replay of the
  scenario's transactions.csv and splits.csv (below, in Python's decimal)
  gives. A name priced in euros or pounds is worth its local value at the
  rate rates.csv holds for the day, rounded half to even to the cent.
- The household holds names abroad: the printed holdings show their local
  price and the rate used, lots list them, and the year's statement shows a
  currency gain on foreign cash (realized and unrealized, both non-zero) and
  the price and currency parts of a sale abroad.
- The scenario is built into keel: the demo imports exactly the committed
  files (their SHA-256 in the import log) and writes the committed rule file
  beside its ledger, the one its proposal uses.
- Refusals: a missing scenario folder or file, a folder already holding a
  ledger or a rule file (left untouched), and a scenario whose transactions
  keel refuses (no ledger is left behind).
"""
import filecmp
import hashlib
import json
import os
import re
import shutil
import sqlite3
import subprocess
import sys
import tempfile
import time
from collections import defaultdict
from decimal import ROUND_HALF_EVEN, Decimal, getcontext

getcontext().prec = 50

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import KEEL, SOURCE, check, equal  # noqa: E402

DATA = os.path.join(SOURCE, "examples", "demo", "data")
FILES = ["accounts.csv", "securities.csv", "prices.csv", "rates.csv", "metrics.csv",
         "distributions.csv", "splits.csv", "transactions.csv", "scenario.toml"]
ABROAD = {"QZBN": "GBP", "XJKA": "EUR", "ZJHW": "GBP"}  # held on the last day
work = tempfile.TemporaryDirectory(prefix="keel-demo-e2e-")


def keel(*args):
    p = subprocess.run([KEEL, *args], capture_output=True, text=True, timeout=300,
                       env=dict(os.environ, NO_COLOR="1"))
    return p.returncode, p.stdout, p.stderr


# --- the generator writes the committed data again, byte for byte ---
again = os.path.join(work.name, "generated")
subprocess.run(["/usr/bin/python3", os.path.join(SOURCE, "examples", "demo", "generate.py"),
                "--out", again], check=True, timeout=300)
equal(sorted(os.listdir(again)), sorted(FILES), "files the generator writes")
equal(sorted(os.listdir(DATA)), sorted(FILES), "files committed")
for name in FILES:
    check(filecmp.cmp(os.path.join(again, name), os.path.join(DATA, name), shallow=False),
          f"{name}: the generator no longer writes the committed bytes")

# --- the demo itself ---
demo_dir = os.path.join(work.name, "demo")
started = time.monotonic()
code, out, err = keel("demo", "--dir", demo_dir)
elapsed = time.monotonic() - started
equal(code, 0, f"keel demo exit status (stderr: {err})")
equal(err, "", "keel demo stderr")
ledger = os.path.join(demo_dir, "keel.db")
check(f"Demo ledger: {ledger}\n" in out, "the demo prints where its ledger is")
for what in ("accounts", "securities", "prices", "metrics", "distributions", "splits",
             "transactions"):
    check(re.search(rf"^imported {what} +\d+ rows from {what}\.csv$", out, re.M),
          f"the demo imports {what}")
check(re.search(r"^imported fx +\d+ rows from rates\.csv$", out, re.M),
      "the demo imports the exchange rates")
rule = os.path.join(demo_dir, "rule.toml")
check(filecmp.cmp(rule, os.path.join(SOURCE, "examples", "demo", "rule.toml"), shallow=False),
      "the demo writes the committed rule file beside its ledger")
check(f"(keel propose --rule {rule} --as-of 2025-12-31)" in out, "the proposal uses that rule file")
with sqlite3.connect(f"file:{ledger}?mode=ro", uri=True) as log:
    imported = dict(log.execute("SELECT file_name, file_sha256 FROM import_run"))
equal(sorted(imported), sorted(f for f in FILES if f.endswith(".csv")), "files in the import log")
for name, digest in imported.items():
    with open(os.path.join(DATA, name), "rb") as f:
        equal(digest, hashlib.sha256(f.read()).hexdigest(), f"SHA-256 of the built-in {name}")
sections = dict(re.findall(r"^== (.+?) \(keel [^)]*\) ==\n(.*?)(?=^== |\nCautions\n)", out,
                           re.M | re.S))
equal(sorted(sections), sorted(["The last month's transactions", "Holdings on the last day",
                                "The year's returns against the benchmark",
                                "Next month's proposal under the example rule",
                                "The year-end statement"]), "demo sections")
proposal = sections["Next month's proposal under the example rule"]
check(re.search(r"^\S.*\s(buy|sell)\s+\d+\s", proposal, re.M), "the demo's proposal has orders")
html = os.path.join(demo_dir, "statement-2025.html")
check(os.path.getsize(html) > 10000, "the demo writes the year's statement as HTML")
pdf = os.path.join(demo_dir, "statement-2025.pdf")
if shutil.which("chromium"):
    check(open(pdf, "rb").read(5) == b"%PDF-", "with Chromium on PATH the demo also writes a PDF")
    check(f"wrote PDF {pdf}" in out, "the demo prints the PDF's path")
else:
    check(not os.path.exists(pdf), "without Chromium the demo writes no PDF")
statement = json.loads(subprocess.run([KEEL, "--db", ledger, "statement", "--year", "2025", "--json"],
                                      capture_output=True, text=True, check=True).stdout)
equal(statement["summary"]["difference"], "0", "the demo statement reconciles to the cent")
equal(statement["summary"]["explained_closing"], statement["summary"]["closing_value"],
      "the year's pieces add up to the closing value")
printed_total = re.search(r"^total\s+(\S+)\s*$", sections["Holdings on the last day"], re.M)
check(printed_total, "the holdings table ends with a total")
returns = sections["The year's returns against the benchmark"]
check(re.search(r"^\s*benchmark ZXTR\s+-?\d+\.\d\d%", returns, re.M), "returns name the benchmark")
check("Returns of all accounts in USD from 2025-01-01 to 2025-12-31" in returns, "returns cover 2025")
for caution in ("it gives no investment advice", "do not predict future returns",
                "overfit", "licensed professional", "Everything above is invented"):
    check(caution in out, f"the demo cautions: {caution}")

h = json.loads(keel("--db", ledger, "holdings", "--as-of", "2025-12-31", "--json")[1])
total = Decimal(h["total_value"])
equal(printed_total.group(1), f"{total:.2f}", "printed holdings total vs holdings --json")
parts = sum(Decimal(p["market_value"]) for p in h["positions"]) + sum(
    Decimal(c.get("value", c["amount"])) for c in h["cash"])  # foreign cash: its worth in USD
equal(parts, total, "holdings total = cash + positions")

def rows(name):
    import csv
    with open(os.path.join(DATA, name), newline="") as f:
        return list(csv.DictReader(f))


# Dollars per unit of each currency on the last day, from the committed rates.
last_rate = {}
for r in rows("rates.csv"):
    equal(r["quote"], "USD", "rates.csv quotes every rate in dollars")
    if r["date"] <= "2025-12-31":
        last_rate[r["base"]] = Decimal(r["rate"])
for p in h["positions"]:
    local = Decimal(p["quantity"]) * Decimal(p["price"])
    if p["symbol"] in ABROAD:
        equal(p["currency"], ABROAD[p["symbol"]], f"currency of {p['symbol']}")
        equal(Decimal(p["local_value"]), local, f"local value of {p['symbol']}")
        # rates.csv gives dollars per unit; keel shows the inverse, units per dollar
        equal(f"{(last_rate[p['currency']] * local).quantize(Decimal('0.01'))}",
              f"{Decimal(p['market_value']):.2f}", f"market value of {p['symbol']} in USD")
        check(p["rate"]["pair"] == f"USD/{p['currency']}", f"rate of {p['symbol']}: {p['rate']}")
    else:
        equal(local, Decimal(p["market_value"]), f"market value of {p['symbol']}")
equal(sorted(p["symbol"] for p in h["positions"] if "currency" in p), sorted(ABROAD),
      "the names held abroad on the last day")
held_text = sections["Holdings on the last day"]
for sym, cur in ABROAD.items():
    p = next(p for p in h["positions"] if p["symbol"] == sym)
    check(re.search(rf"^Ardwyn Overseas +{sym} +\d+ +[\d.]+ +{re.escape(p['price'])} {cur} "
                    rf"+{re.escape(p['market_value'])} ", held_text, re.M),
          f"the printed holdings show {sym} at its local price in {cur} and its value in USD")
    check(re.search(rf"^converted at USD/{cur} [\d.]+ \(2025-12-31, inverted from {cur}/USD\)$",
                    held_text, re.M), f"the printed holdings name the rate for {cur}")
lots = keel("--db", ledger, "lots", "--as-of", "2025-12-31", "--account", "Ardwyn Overseas")[1]
equal(sorted(set(re.findall(r"^Ardwyn Overseas +([A-Z]{4}) ", lots, re.M))), sorted(ABROAD),
      "lots list the names held abroad")

# The year's statement: currency gains on foreign cash, and a sale's parts.
summary = statement["summary"]
for key in ("fx_cash_realized", "fx_cash_unrealized_change"):
    check(Decimal(summary[key]) != 0, f"the demo statement's {key} is not zero: {summary[key]}")
text = keel("--db", ledger, "statement", "--year", "2025")[1]
for line, key in (("currency gain on foreign cash, realized", "fx_cash_realized"),
                  ("change in unrealized currency gain on foreign cash",
                   "fx_cash_unrealized_change")):
    shown = re.search(rf"^{re.escape(line)} +(-?\d+\.\d\d)$", text, re.M)
    check(shown, f"the printed statement has the line '{line}'")
    equal(Decimal(shown.group(1)), Decimal(summary[key]), f"'{line}' as in the JSON")
check("currency gain on foreign cash, realized" in open(html).read(),
      "the demo's HTML statement shows the currency gain")
check(re.search(r"^Ardwyn Overseas +ZQEO +\d+ +2025-06-02 .*-?\d+\.\d\d +-?\d+\.\d\d$",
                text, re.M), "the statement splits the sale abroad into price and currency parts")

# Independent replay of the scenario's files (quantities and cash only). A
# row in another currency settles in dollars at its rate (units of the row's
# currency per dollar: amount / rate, half to even, to the cent), or without
# a rate moves the account's cash in that currency; an exchange sells amount
# plus fee of its currency and receives amount x rate, to the cent.
CENT = Decimal("0.01")


def settle(account, currency, rate, x):
    if not currency or currency == "USD":
        cash[(account, "USD")] += x
    elif rate:
        cash[(account, "USD")] += (x / Decimal(rate)).quantize(CENT, rounding=ROUND_HALF_EVEN)
    else:
        cash[(account, currency)] += x


splits = sorted((r["date"], r["symbol"], Decimal(r["ratio"])) for r in rows("splits.csv"))
units = defaultdict(Decimal)
cash = defaultdict(Decimal)  # (account, currency) -> amount
applied = 0
for t in rows("transactions.csv"):
    while applied < len(splits) and splits[applied][0] <= t["date"]:
        _, sym, ratio = splits[applied]
        for key in [k for k in units if k[1] == sym]:
            units[key] *= ratio
        applied += 1
    a, kind, sym = t["account"], t["kind"], t["symbol"]
    q = Decimal(t["quantity"] or 0)
    price = Decimal(t["price"] or 0)
    amount = Decimal(t["amount"] or 0)
    fee = Decimal(t["fee"] or 0)
    currency, rate = t["currency"], t["rate"]
    if kind == "buy":
        units[(a, sym)] += q
        settle(a, currency, rate, -(q * price + fee))
    elif kind == "sell":
        units[(a, sym)] -= q
        check(units[(a, sym)] >= 0, f"{t['ref']}: the scenario oversells")
        settle(a, currency, rate, q * price - fee)
    elif kind in ("deposit", "dividend"):
        settle(a, currency, rate, amount)
    elif kind in ("withdrawal", "tax", "fee"):
        settle(a, currency, rate, -amount)
    elif kind == "exchange":
        cash[(a, currency or "USD")] -= amount + fee
        cash[(a, t["to_currency"])] += (amount * Decimal(rate)).quantize(CENT, ROUND_HALF_EVEN)
    elif kind == "transfer_out":
        cash[(a, "USD")] -= amount
        cash[(t["to_account"], "USD")] += amount
    else:
        raise AssertionError(f"{t['ref']}: kind {kind} not replayed here")
    check(min(cash.values()) >= 0, f"{t['ref']}: the scenario overspends its cash")
held = {(p["account"], p["symbol"]): Decimal(p["quantity"]) for p in h["positions"]}
equal(held, {k: v for k, v in units.items() if v != 0}, "positions vs replay of the CSV files")
equal({(c["account"], c.get("currency", "USD")): Decimal(c["amount"]) for c in h["cash"]},
      {k: v for k, v in cash.items() if v != 0}, "cash per currency vs replay")

kinds = {t["kind"] for t in rows("transactions.csv")}
check({"deposit", "buy", "sell", "dividend", "tax", "fee", "transfer_out", "withdrawal",
       "exchange"} <= kinds, f"the scenario books every kind it promises: {sorted(kinds)}")
abroad = [t for t in rows("transactions.csv") if t["currency"] not in ("", "USD")]
check(any(t["kind"] == "buy" and t["rate"] for t in abroad), "a buy abroad settles at a rate")
check(any(t["kind"] == "buy" and not t["rate"] for t in abroad), "a buy abroad paid in its currency")
check(any(t["kind"] == "sell" and t["rate"] for t in abroad), "a sale abroad settles at a rate")
check({"EUR", "GBP"} <= {t["currency"] for t in abroad if t["kind"] == "tax"},
      "dividends in euros and pounds have tax withheld")
rates = rows("rates.csv")
equal({(r["base"], r["quote"]) for r in rates}, {("EUR", "USD"), ("GBP", "USD")}, "pairs of rates")
equal(sorted({r["date"] for r in rates}), sorted({r["date"] for r in rows("prices.csv")}),
      "a rate for each day with closes")
pe = [Decimal(r["value"]) for r in rows("metrics.csv")]
check(any(v < 0 for v in pe), "some P/E figures are negative (losses)")
keys = [(r["date"], r["symbol"]) for r in rows("metrics.csv")]
check(len(keys) > len(set(keys)), "some P/E figures are restated")

# --- refusals ---
code, _, err = keel("demo", "--data", os.path.join(work.name, "nowhere"))
equal((code, err.strip()), (1, f"keel: error: --data: '{work.name}/nowhere' is not a folder "
                               "holding the demo scenario"), "missing --data folder")

partial = os.path.join(work.name, "partial")
shutil.copytree(again, partial)
os.remove(os.path.join(partial, "splits.csv"))
code, _, err = keel("demo", "--data", partial, "--dir", os.path.join(work.name, "unused"))
equal((code, err.strip()), (1, f"keel: error: --data: '{partial}' has no splits.csv (run "
                               "examples/demo/generate.py to write it)"), "missing scenario file")
check(not os.path.exists(os.path.join(work.name, "unused")), "no folder made for a refused demo")

before = open(ledger, "rb").read()
code, _, err = keel("demo", "--dir", demo_dir)
equal((code, err.strip()), (1, f"keel: error: --dir: '{demo_dir}' already holds a ledger "
                               "(keel.db); the demo starts from an empty folder"),
      "a folder with a ledger")
check(open(ledger, "rb").read() == before, "the existing ledger is untouched")

with_rule = os.path.join(work.name, "with-rule")
os.makedirs(with_rule)
with open(os.path.join(with_rule, "rule.toml"), "w") as f:
    f.write("# my own rule\n")
code, _, err = keel("demo", "--dir", with_rule)
equal((code, err.strip()), (1, f"keel: error: --dir: '{with_rule}' already holds a rule file "
                               "(rule.toml); the demo starts from an empty folder"),
      "a folder with a rule file")
equal(sorted(os.listdir(with_rule)), ["rule.toml"], "nothing written beside the rule file")
equal(open(os.path.join(with_rule, "rule.toml")).read(), "# my own rule\n", "the rule file is kept")

bad = os.path.join(work.name, "bad")
os.makedirs(bad)
for name in ("accounts.csv", "securities.csv", "scenario.toml"):
    shutil.copy(os.path.join(DATA, name), bad)
with open(os.path.join(bad, "prices.csv"), "w") as f:
    f.write("date,symbol,close\n2016-01-04,QJTN,10\n")
for name, header in (("rates.csv", "date,base,quote,rate"),
                     ("metrics.csv", "date,symbol,metric,value,known_on"),
                     ("distributions.csv", "ex_date,pay_date,symbol,per_share"),
                     ("splits.csv", "date,symbol,ratio")):
    with open(os.path.join(bad, name), "w") as f:
        f.write(header + "\n")
with open(os.path.join(bad, "transactions.csv"), "w") as f:
    f.write("date,account,kind,symbol,quantity,price,amount,ref\n"
            "2016-01-04,Ardwyn Joint Taxable,deposit,,,,100,B-1\n"
            "2016-01-05,Ardwyn Joint Taxable,sell,QJTN,5,10,,B-2\n")
bad_dir = os.path.join(work.name, "bad-ledger")
code, _, err = keel("demo", "--data", bad, "--dir", bad_dir)
equal(code, 1, "a scenario keel refuses")
check(re.search(rf"^{re.escape(bad)}/transactions\.csv:3: ", err, re.M), f"names the row: {err}")
check(err.strip().endswith("nothing was changed"), f"says nothing was changed: {err}")
check(not os.path.exists(bad_dir), "a refused demo leaves no ledger or folder behind")

print(f"keel demo ran in {elapsed:.1f} s")
