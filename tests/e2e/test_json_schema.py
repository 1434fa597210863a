"""Every report's --json carries its schema tag and validates against docs/schema/<report>.json.

Validation is done by python3-jsonschema (Debian), an implementation of JSON Schema 2020-12
that is not keel's. Every `--json` of the reference (docs/commands.md) is covered, except
`keel export`, whose JSON is ledger data in keel's import layout rather than a report; every
schema file in docs/schema/ is used, so none can go stale unnoticed.
"""
import json
import os
import re
import sys

import jsonschema

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import SOURCE, Ledger, check, equal  # noqa: E402

SCHEMA_DIR = os.path.join(SOURCE, "docs", "schema")

led = Ledger(currency="EUR")
work = led.dir.name
led.ok("account", "add", "Tamsin Brokerage")
led.ok("account", "add", "Tamsin Pension", "--basis", "hifo", "--tax-status", "tax-deferred")
led.ok("security", "add", "ORLQ", "--name", "Orlique Textiles", "--kind", "stock", "--sector",
       "Consumer")
led.ok("security", "add", "BRNV", "--name", "Brenvaal Shipping", "--kind", "stock", "--country",
       "NL")
led.ok("record", "deposit", "--date", "2024-01-02", "--account", "Tamsin Brokerage", "--amount",
       "20000")
led.ok("record", "buy", "--date", "2024-01-03", "--account", "Tamsin Brokerage", "--symbol", "ORLQ",
       "--quantity", "100", "--price", "41.17", "--fee", "1.05", "--ref", "T-1")
led.ok("record", "sell", "--date", "2024-05-06", "--account", "Tamsin Brokerage", "--symbol",
       "ORLQ", "--quantity", "40", "--price", "44.3", "--fee", "0.95")
led.ok("record", "deposit", "--date", "2024-05-07", "--account", "Tamsin Brokerage", "--amount",
       "5")
led.ok("void", "4", "--reason", "typed by mistake")
led.ok("record", "transfer_out", "--date", "2024-06-03", "--account", "Tamsin Brokerage",
       "--amount", "500", "--to-account", "Tamsin Pension")
with open(os.path.join(work, "prices.csv"), "w") as f:
    f.write("date,symbol,close\n2024-06-28,ORLQ,44.2\n2024-06-28,BRNV,6.9\n")
led.ok("import", "prices", os.path.join(work, "prices.csv"), "--quiet")
# A broker's statement that differs from the ledger by one unit: reconcile prints its JSON and
# exits non-zero, as its text form does.
with open(os.path.join(work, "statement.csv"), "w") as f:
    f.write("account,symbol,quantity,cost_basis,currency,cash\nTamsin Brokerage,ORLQ,59,,,\n")
# A corporate action and a renamed security, for their lists.
led.ok("record", "return-of-capital", "--date", "2024-07-01", "--symbol", "ORLQ", "--cash", "0.5")
led.ok("security", "change", "BRNV", "--name", "Brenvaal Shipping Lines", "--date", "2024-07-02")

# The demo scenario's files (invented) in a ledger of their own, for the reports of a rule.
demo = Ledger(currency=None)
demo.import_demo()
RULE = os.path.join(SOURCE, "examples", "demo", "rule.toml")
TRACK_RULE = os.path.join(SOURCE, "examples", "demo", "rule-track-record.toml")
demo.ok("propose", "--rule", RULE, "--as-of", "2025-11-28", "--save", "--deposit",
        "Ardwyn Retirement=250")
PLAN = os.path.join(demo.dir.name, "plan.toml")
with open(PLAN, "w") as f:
    f.write(f'[pools.both]\naccounts = ["Ardwyn Joint Taxable", "Ardwyn Retirement"]\n'
            f'[[part]]\nrule = "{RULE}"\npool = "both"\nshare_pct = 100\n')

# Each report, the arguments that make it print JSON, and its schema's name.
REPORTS = {
    "holdings": ["holdings", "--as-of", "2024-06-30"],
    "lots": ["lots", "--as-of", "2024-06-30"],
    "gains": ["gains", "--year", "2024"],
    "history": ["history"],
    "accounts": ["account", "list"],
    "securities": ["security", "list"],
    "imports": ["imports"],
    "verify": ["verify"],
    "returns": ["returns", "--year", "2025", "--benchmark", "ZXTR"],
    "propose": ["propose", "--rule", RULE, "--as-of", "2025-12-31"],
    "plan-proposal": ["propose", "--plan", PLAN, "--as-of", "2025-12-31", "--deposit",
                      "Ardwyn Retirement=500"],
    "proposals-list": ["proposals", "list"],
    "proposal": ["proposals", "show", "1"],
    "backtest": ["backtest", "--rule", RULE, "--from", "2024-01-01", "--to", "2025-12-31",
                 "--benchmark", "ZXTR"],
    "compare": ["compare", RULE, os.path.join(SOURCE, "examples", "compare", "five.toml"),
                "--from", "2024-01-01", "--to", "2025-12-31", "--benchmark", "ZXTR",
                "--hold-months", "6"],
    "signal": ["signal", "--rule", RULE, "--from", "2024-01-01", "--to", "2025-12-31"],
    "sweep": ["sweep", "--rule", RULE, "--from", "2024-01-01", "--to", "2025-12-31", "--vary",
              "select.count=10,12", "--walk-forward", "12:6"],
    "statement": ["statement", "--year", "2025", "--benchmark", "ZXTR"],
    "actions": ["action", "list"],
    "reconcile": ["reconcile", os.path.join(work, "statement.csv"), "--date", "2024-06-30"],
    "changes": ["changes"],
}
# More runs of the same reports, each validated too: other options, other members.
MORE = {
    "returns": [["returns", "--year", "2025", "--monthly"],
                ["returns", "--from", "2025-12-01", "--to", "2025-12-31", "--account",
                 "Ardwyn Retirement", "--method", "dietz"],
                ["returns", "--year", "2025", "--local", "--benchmark", "ZXTR"]],
    "propose": [["propose", "--rule", RULE, "--as-of", "2025-12-31", "--save"],
                ["propose", "--rule", TRACK_RULE, "--as-of", "2025-12-31"]],
    "backtest": [["backtest", "--rule", RULE, "--from", "2024-01-01", "--to", "2025-12-31",
                  "--frictionless"]],
    "statement": [["statement", "--year", "2016"]],
    "signal": [["signal", "--rule", RULE, "--from", "2022-01-01", "--to", "2025-12-31",
                "--by-name", "--horizons", "1,12"]],
    "sweep": [["sweep", "--rule", RULE, "--from", "2025-11-01", "--to", "2025-12-31", "--vary",
               "select.count=10", "--frictionless"]],
    "compare": [["compare", RULE, os.path.join(SOURCE, "examples", "compare", "quarterly.toml"),
                 "--from", "2024-01-01", "--to", "2025-12-31", "--frictionless"]],
}
# Documents whose members changed since their first version.
VERSIONS = {"holdings": 2, "lots": 2, "gains": 2, "backtest": 2, "propose": 4, "plan-proposal": 3,
            "proposal": 3, "proposals-list": 2, "returns": 3, "signal": 3, "statement": 3}
ON_DEMO = {"returns", "propose", "plan-proposal", "proposals-list", "proposal", "backtest", "compare", "signal", "sweep", "statement"}
# The commands of the reference each report stands for.
COMMANDS = {"holdings": "holdings", "lots": "lots", "gains": "gains", "history": "history",
            "accounts": "account list", "securities": "security list", "imports": "imports",
            "verify": "verify", "returns": "returns", "propose": "propose",
            "plan-proposal": "propose",
            "proposals-list": "proposals list", "proposal": "proposals show",
            "backtest": "backtest", "compare": "compare", "signal": "signal", "sweep": "sweep",
            "statement": "statement",
            "actions": "action list", "changes": "changes", "reconcile": "reconcile"}

runs = 0
for name, first in REPORTS.items():
    with open(os.path.join(SCHEMA_DIR, f"{name}.json")) as f:
        schema = json.load(f)
    jsonschema.Draft202012Validator.check_schema(schema)
    for args in [first, *MORE.get(name, [])]:
        if name == "reconcile":
            code, out, err = led.run(*args, "--json")
            equal((code, err.splitlines()[-1:]), (1, ["keel: error: 1 difference between the "
                  f"ledger and {args[1]}; nothing was recorded"]), "reconcile --json exit")
            document = json.loads(out)
        else:
            document = (demo if name in ON_DEMO else led).json(*args)
        equal(document.get("schema"), {"name": f"keel.{name}", "version": VERSIONS.get(name, 1)},
              f"keel {' '.join(args)} --json: its schema tag")
        errors = sorted(jsonschema.Draft202012Validator(schema).iter_errors(document),
                        key=lambda e: list(e.path))
        check(not errors, f"keel {' '.join(args)} --json against docs/schema/{name}.json: "
              + "; ".join(f"{list(e.path)}: {e.message}" for e in errors[:5]))
        runs += 1

# The documents are not trivially valid: each has rows, and a wrong member is caught.
holdings = led.json(*REPORTS["holdings"])
equal(len(holdings["positions"]), 1, "holdings has a position to validate")
with open(os.path.join(SCHEMA_DIR, "holdings.json")) as f:
    holdings_schema = json.load(f)
broken = dict(holdings, total_value=123.5)
check(not jsonschema.Draft202012Validator(holdings_schema).is_valid(broken),
      "a decimal written as a JSON number is refused by the schema")

# Holdings, lots and gains name the currency they report in: the ledger's, or --currency.
for name in ("holdings", "lots", "gains"):
    equal(led.json(*REPORTS[name])["currency"], "EUR", f"{name}: its reporting currency")
with open(os.path.join(work, "rates.csv"), "w") as f:
    f.write("date,base,quote,rate\n2024-01-02,EUR,USD,1.10\n")
led.ok("import", "fx", os.path.join(work, "rates.csv"), "--quiet")
for name in ("holdings", "lots", "gains"):
    equal(led.json(*REPORTS[name], "--currency", "USD")["currency"], "USD",
          f"{name} --currency USD: its reporting currency")
without = dict(holdings)
del without["currency"]
check(not jsonschema.Draft202012Validator(holdings_schema).is_valid(without),
      "holdings without its currency is refused by the schema")

# Every --json of the reference has a schema, and every schema file is used.
with open(os.path.join(SOURCE, "docs", "commands.md")) as f:
    reference = f.read()
with_json = set()
command = None
for line in reference.splitlines():
    m = re.match(r"## `keel (.+)`", line)
    if m:
        command = m.group(1)
    elif line.startswith("| `--json`") and command != "export":
        with_json.add(command)
covered = set(COMMANDS.values())
missing = sorted(with_json - covered)
equal(missing, [], "commands with --json but no schema test")
files = sorted(f[:-5] for f in os.listdir(SCHEMA_DIR) if f.endswith(".json"))
equal(files, sorted(REPORTS), "schema files in docs/schema/ and the reports tested")
print(f"json schema: {len(REPORTS)} reports, {runs} documents valid")
