"""keel demo: the invented scenario of examples/demo.

- The generator is deterministic: run again, it writes the committed files
  byte for byte.
- keel demo builds a fresh ledger and shows its reports; the printed holdings
  total is what `keel holdings --json` says, the total is cash plus positions,
  and positions and cash are what an independent replay of the scenario's
  transactions.csv and splits.csv (below, in Python's decimal) gives.
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
from decimal import Decimal

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import KEEL, SOURCE, check, equal  # noqa: E402

DATA = os.path.join(SOURCE, "examples", "demo", "data")
FILES = ["accounts.csv", "securities.csv", "prices.csv", "metrics.csv", "distributions.csv",
         "splits.csv", "transactions.csv", "scenario.toml"]
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
    Decimal(c["amount"]) for c in h["cash"])
equal(parts, total, "holdings total = cash + positions")
for p in h["positions"]:
    equal(Decimal(p["quantity"]) * Decimal(p["price"]), Decimal(p["market_value"]),
          f"market value of {p['symbol']}")

# Independent replay of the scenario's files (quantities and cash only).
def rows(name):
    import csv
    with open(os.path.join(DATA, name), newline="") as f:
        return list(csv.DictReader(f))


splits = sorted((r["date"], r["symbol"], Decimal(r["ratio"])) for r in rows("splits.csv"))
units = defaultdict(Decimal)
cash = defaultdict(Decimal)
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
    if kind == "buy":
        units[(a, sym)] += q
        cash[a] -= q * price + fee
    elif kind == "sell":
        units[(a, sym)] -= q
        check(units[(a, sym)] >= 0, f"{t['ref']}: the scenario oversells")
        cash[a] += q * price - fee
    elif kind in ("deposit", "dividend"):
        cash[a] += amount
    elif kind in ("withdrawal", "tax", "fee"):
        cash[a] -= amount
    elif kind == "transfer_out":
        cash[a] -= amount
        cash[t["to_account"]] += amount
    else:
        raise AssertionError(f"{t['ref']}: kind {kind} not replayed here")
held = {(p["account"], p["symbol"]): Decimal(p["quantity"]) for p in h["positions"]}
equal(held, {k: v for k, v in units.items() if v != 0}, "positions vs replay of the CSV files")
equal({c["account"]: Decimal(c["amount"]) for c in h["cash"]}, dict(cash), "cash vs replay")

kinds = {t["kind"] for t in rows("transactions.csv")}
check({"deposit", "buy", "sell", "dividend", "tax", "fee", "transfer_out", "withdrawal"} <= kinds,
      f"the scenario books every kind it promises: {sorted(kinds)}")
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
for name, header in (("metrics.csv", "date,symbol,metric,value,known_on"),
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
