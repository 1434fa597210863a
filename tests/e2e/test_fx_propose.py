"""`keel propose` across currencies: a euro account holding a dollar name and dollar cash.

The household (examples/currency: invented names, closes, P/E figures and rates) and every
figure of its proposal are worked out here by hand with Python's decimal, from the rows alone,
by the rules stated in src/rules/fx_orders.h and src/rules/engine.h. The JSON is also checked
against docs/schema/propose.json.
"""
import json
import os
import sys
from decimal import Decimal as D

import jsonschema

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import SOURCE, Ledger, check, equal  # noqa: E402

EX = os.path.join(SOURCE, "examples", "currency")
RULE = os.path.join(EX, "rule.toml")

led = Ledger(currency="EUR")
led.ok("account", "add", "Depot")
for kind, name in (("securities", "securities.csv"), ("prices", "closes.csv"),
                   ("metrics", "pe.csv"), ("fx", "rates.csv")):
    led.ok("import", kind, os.path.join(EX, name), "--quiet")
led.ok("record", "deposit", "--date", "2025-01-02", "--account", "Depot", "--amount", "10000")
led.ok("record", "exchange", "--date", "2025-01-02", "--account", "Depot", "--amount", "2000",
       "--to-currency", "USD", "--rate", "1.20")
led.ok("record", "buy", "--date", "2025-01-03", "--account", "Depot", "--symbol", "CALV",
       "--quantity", "10", "--price", "100")
led.ok("record", "buy", "--date", "2025-01-03", "--account", "Depot", "--symbol", "BEXO",
       "--quantity", "40", "--price", "24")

# By hand. Cash: 10000 - 2000 - 40 x 24 = 7040 EUR; 2000 x 1.20 - 10 x 100 = 1400 USD.
eur_cash, usd_cash = D(10000) - 2000 - 40 * 24, D(2000) * D("1.20") - 10 * 100
# On 2025-06-30 the stored rate is EUR/USD 1.25, so a dollar is 1 / 1.25 = 0.8 EUR (inverted).
usd = 1 / D("1.25")
equal(usd, D("0.8"), "the dollar in euros")
# Pool: the cash, CALV 10 x 110 USD, BEXO 40 x 25 EUR.
pool = eur_cash + usd_cash * usd + 10 * 110 * usd + 40 * 25
equal(pool, D(10040), "pool by hand")
# GLAN (GBP) has no rate: out. The three lowest P/E of ARDN 8, CALV 9, DURM 10, BEXO 20 are
# held at a third each; BEXO leaves. Four orders at 1 EUR each (the rule's fee_fixed):
# the invested target is 10040 - 4, a third of it to the cent each.
target = ((pool - 4) / 3).quantize(D("0.01"))
equal(target, D("3345.33"), "each target")
ardn = int(target / 40)                    # 83
calv = int((target - 10 * 110 * usd) / (110 * usd))  # (3345.33 - 880) / 88 -> 28
durm = int(target / (50 * usd))            # 83
equal((ardn, calv, durm), (83, 28, 83), "units by hand")
# CALV: 28 x 110 = 3080 USD, 1400 from the dollar cash, 1680 settles at about 1680 x 0.8 EUR.
calv_settled = 28 * 110 - usd_cash
# DURM: 83 x 50 = 4150 USD, all of it settles (the dollars are spent).
durm_settled = D(83 * 50)
conversion = calv_settled + durm_settled
equal((calv_settled, conversion, conversion * usd), (D(1680), D(5830), D(4664)),
      "settled by hand")
# Cash after, in euros: the cash, the sale less its fee, the buys and their fees, and the
# conversion's estimated fee (1 EUR: the rule's fee model on its value).
cash_after = (eur_cash + usd_cash * usd + 40 * 25 - 1 - ardn * 40 - 1 - calv * 88 - 1
              - durm * 40 - 1 - 1)
equal(cash_after, D(51), "cash after by hand")

p = led.json("propose", "--rule", RULE)
with open(os.path.join(SOURCE, "docs", "schema", "propose.json")) as f:
    jsonschema.validate(p, json.load(f))
equal((p["currency"], D(p["pool_value"])), ("EUR", pool), "pool in euros")
glan = [x for x in p["screen"] if x["symbol"] == "GLAN"][0]
equal(glan["excluded_reason"], "no exchange rate for GBP/EUR on or before 2025-06-30",
      "a name without a rate is left out, naming the pair and the day")
orders = [(o["symbol"], o["side"], D(o["quantity"]), D(o["value"]), D(o["fee"]))
          for o in p["orders"]]
equal(orders, [("BEXO", "sell", 40, D(1000), 1), ("ARDN", "buy", ardn, D(ardn * 40), 1),
               ("CALV", "buy", calv, D(calv * 88), 1), ("DURM", "buy", durm, D(durm * 40), 1)],
      "orders in euros")
fx = {o["symbol"]: o["fx"] for o in p["orders"]}
equal((fx["BEXO"], fx["ARDN"]), (None, None), "euro names need no conversion")
c = fx["CALV"]
equal((c["currency"], D(c["local_price"]), D(c["rate"]), c["rate_derived"], c["rate_source"]),
      ("USD", D(110), usd, True, "USD/EUR 0.8 (2025-06-30, inverted from EUR/USD)"),
      "CALV's local price and the derived rate")
equal((D(c["local_value"]), D(c["from_cash"]), c["settles_in"], D(c["local_settled"]),
       D(c["settled"])), (D(3080), usd_cash, "EUR", calv_settled, calv_settled * usd),
      "CALV: the dollar cash first, the rest settles in euros")
d = fx["DURM"]
equal((D(d["from_cash"]), D(d["local_settled"]), D(d["settled"])),
      (D(0), durm_settled, durm_settled * usd), "DURM: all of it settles in euros")
equal([(x["from"], x["to"], D(x["amount"]), D(x["about"]), D(x["fee"])) for x in p["conversions"]],
      [("EUR", "USD", conversion, conversion * usd, D(1))], "one conversion with its fee")
equal((D(p["cash_after"]), D(p["estimated_fees"])), (cash_after, D(5)), "cash after and fees")

text = led.ok("propose", "--rule", RULE)
check("Accounts: Depot; pool value 10040.00 EUR (other currencies converted at the latest rates "
      "on or before 2025-06-30)" in text, text)
check("  Depot: about 4664 EUR into 5830 USD at EUR/USD 1.25 (2025-06-30); est. fee 1.00 EUR"
      in text, text)
check("1400 USD from USD cash; settles in EUR: 1680 USD for about 1344 EUR" in text, text)
check("rate USD/EUR 0.8 (2025-06-30, inverted from EUR/USD)\n* derived from the stored rates, "
      "not stored itself\n" in text, text)

# In dollars on request: the same pool at 1.25 USD per EUR.
u = led.json("propose", "--rule", RULE, "--currency", "USD")
equal((u["currency"], D(u["pool_value"])), ("USD", pool * D("1.25")), "pool in dollars")

# Saved, the foreign orders keep their own prices for the review.
saved = led.json("propose", "--rule", RULE, "--save")
shown = led.json("proposals", "show", str(saved["proposal_id"]))
equal([(x["symbol"], D(x["est_price"])) for x in shown["lines"]],
      [("BEXO", D(25)), ("ARDN", D(40)), ("CALV", D(110)), ("DURM", D(50))],
      "proposals show: local prices")
print("propose across currencies: a euro account with dollar holdings and cash, checked by hand")
