"""A two-account household, taxable and tax-deferred, through the command line: the gains
report and the statement list only taxable events and put the retirement account's apart;
a dated change of tax status moves later sales only; the repurchase window flags a loss
just inside the window and not one just outside; withholding is summed per country."""
import os
import sys
from decimal import Decimal

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, check, equal, ledger_digest  # noqa: E402

led = Ledger()
equal(led.ok("account", "add", "Taxable"), "account 1 'Taxable' added (USD, fifo)\n", "taxable")
equal(led.ok("account", "add", "Retirement", "--tax-status", "tax-deferred"),
      "account 2 'Retirement' added (USD, fifo, tax-deferred)\n", "tax-deferred")
led.ok("security", "add", "ORWL", "--name", "Orwell Dredging", "--kind", "stock", "--country", "nl")
led.ok("security", "add", "KRMB", "--name", "Karamba Foods", "--kind", "stock")
equal([(s["symbol"], s["country"]) for s in led.json("security", "list")["securities"]],
      [("KRMB", None), ("ORWL", "NL")], "the issuer's country, in capitals")
for account in ("Taxable", "Retirement"):
    led.ok("record", "deposit", "--date", "2025-01-02", "--account", account, "--amount", "10000")


def trade(kind, day, account, symbol, quantity, price):
    led.ok("record", kind, "--date", day, "--account", account, "--symbol", symbol, "--quantity",
           quantity, "--price", price)


trade("buy", "2025-02-03", "Taxable", "ORWL", "10", "100")
trade("sell", "2025-03-03", "Taxable", "ORWL", "10", "80")       # loss 200
trade("buy", "2025-02-03", "Retirement", "KRMB", "20", "50")
trade("sell", "2025-04-01", "Retirement", "KRMB", "20", "65")    # gain 300, not taxable here
trade("buy", "2025-04-02", "Retirement", "ORWL", "10", "82")     # 30 days after the loss

# The gains report: the taxable account's lines and totals; the retirement account apart.
g = led.json("gains", "--year", "2025")
equal([(x["account"], x["gain"], x["tax_status"]) for x in g["gains"]],
      [("Taxable", "-200", "taxable")], "taxable lines")
equal(g["total"], "-200", "the taxable total leaves the retirement account out")
equal([(x["account"], x["gain"], x["tax_status"]) for x in g["not_taxable"]],
      [("Retirement", "300", "tax-deferred")], "listed apart")
check("repurchase" not in g["gains"][0], "the repurchase window is off by default")
text = led.ok("gains", "--year", "2025")
check("Not a taxable event here (tax-deferred and tax-exempt accounts):" in text, text)
check(text.index("Taxable") < text.index("Not a taxable event here") < text.index("Retirement"),
      text)

# The window: the buy 30 days after is inside a 30-day window and outside a 29-day one.
inside = led.json("gains", "--year", "2025", "--repurchase-window", "30")
equal(inside["gains"][0]["repurchase"], {"buy": 7, "account": "Retirement", "date": "2025-04-02"},
      "flagged just inside the window")
outside = led.json("gains", "--year", "2025", "--repurchase-window", "29")
check("repurchase" not in outside["gains"][0], "not flagged just outside the window")
text = led.ok("gains", "--year", "2025", "--repurchase-window", "30")
check("Repurchase: ORWL lot 3 in Taxable, sold 2025-03-03 at a loss of 200.00; bought again on "
      "2025-04-02\n  in Retirement (buy 7), within 30 days: the loss may be disallowed under local "
      "rules.\n" in text, text)
check(text.endswith("Tax treatment depends on local rules; check with your tax authority or a "
                    "licensed professional.\n"), text)

# Withholding, taxable and not, and the statement's lists.
for account, amount, tax in (("Taxable", "50", "7.5"), ("Retirement", "40", "6")):
    led.ok("record", "dividend", "--date", "2025-06-02", "--account", account, "--symbol", "ORWL",
           "--amount", amount)
    led.ok("record", "tax", "--date", "2025-06-02", "--account", account, "--symbol", "ORWL",
           "--amount", tax)
s = led.json("statement", "--year", "2025")
equal([(x["account"], x["gain"]) for x in s["realized"]], [("Taxable", "-200")],
      "statement: realized gains of taxable accounts")
equal([(x["account"], x["kind"], x["amount"], x["withheld"]) for x in s["not_taxable"]],
      [("Retirement", "sale", "300", "0"), ("Retirement", "dividend", "40", "6")],
      "statement: not a taxable event here")
equal([(x["account"], x["gross"], x["withheld"]) for x in s["income"]],
      [("Taxable", "50", "7.5")], "statement: income of taxable accounts")
equal(s["withholding"]["by_country"], {"NL": "7.5"}, "withholding by the issuer's country")
equal(s["withholding"]["not_taxable"], "6", "withholding in the retirement account, apart")
equal(Decimal(s["summary"]["realized_gain"]), Decimal("100"), "the year's value counts both")
text = led.ok("statement", "--year", "2025")
check("Not a taxable event here" in text and "Withholding by security and issuer country" in text,
      text)

# A dated change: the taxable account becomes tax-exempt from July; March's sale stays taxable.
equal(led.ok("account", "tax-status", "Taxable", "tax-exempt", "--from", "2025-07-01"),
      "account 'Taxable' is tax-exempt from 2025-07-01\n", "a dated change")
equal([(a["name"], a["tax_status"], a["tax_status_history"]) for a in led.json("account", "list")["accounts"]],
      [("Retirement", "tax-deferred", [{"status": "tax-deferred", "from": None}]),
       ("Taxable", "tax-exempt", [{"status": "taxable", "from": None},
                                  {"status": "tax-exempt", "from": "2025-07-01"}])],
      "the history is kept")
trade("buy", "2025-07-03", "Taxable", "KRMB", "10", "60")
trade("sell", "2025-08-01", "Taxable", "KRMB", "10", "70")
g = led.json("gains", "--year", "2025")
equal([x["disposed"] for x in g["gains"]], ["2025-03-03"], "the earlier sale stays taxable")
equal([(x["account"], x["disposed"]) for x in g["not_taxable"]],
      [("Retirement", "2025-04-01"), ("Taxable", "2025-08-01")], "the later one is not")

# Refused changes leave the ledger as it was.
before = ledger_digest(led.path)
led.fails("account", "tax-status", "Taxable", "tax-exempt", "--from", "2025-09-01")
led.fails("account", "tax-status", "Taxable", "taxable", "--from", "2025-07-01")
led.fails("account", "add", "Third", "--tax-status", "sheltered")
equal(ledger_digest(led.path), before, "refusals change nothing")
# An import of accounts takes a tax_status column; an unknown one is refused at its line.
csv_path = os.path.join(led.dir.name, "accounts.csv")
with open(csv_path, "w") as f:
    f.write("name,currency,tax_status\nHealth Savings,USD,tax-exempt\nBrokerage,USD,\n")
led.ok("import", "accounts", csv_path)
equal({a["name"]: a["tax_status"] for a in led.json("account", "list")["accounts"]}, {"Retirement": "tax-deferred", "Taxable": "tax-exempt", "Health Savings": "tax-exempt",
             "Brokerage": "taxable"}, "imported with their tax status")
with open(csv_path, "w") as f:
    f.write("name,currency,tax_status\nOther,USD,pension\n")
before = ledger_digest(led.path)
err = led.fails("import", "accounts", csv_path)
check(f"{csv_path}:2: unknown tax status 'pension'; expected one of: taxable, tax-deferred, "
      "tax-exempt" in err, err)
equal(ledger_digest(led.path), before, "a refused import changes nothing")
print("household tax: ok")
