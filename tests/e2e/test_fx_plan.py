"""`keel propose --plan` across currencies: a euro account and a dollar account in one pool.

The household uses examples/currency (invented names, closes and rates). Every figure of the
proposal is worked out here by hand with Python's decimal, by the rules stated in
src/rules/fx_orders.h and src/rules/engine.h (the default trading settings: no fees, no
minimum trade, no reserve). The JSON is also checked against docs/schema/plan-proposal.json.
"""
import json
import os
import sys
from decimal import Decimal as D

import jsonschema

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import SOURCE, Ledger, check, equal  # noqa: E402

EX = os.path.join(SOURCE, "examples", "currency")

led = Ledger(currency="EUR")
led.ok("account", "add", "Euro Depot")
led.ok("account", "add", "Dollar Depot", "--currency", "USD")
for kind, name in (("securities", "securities.csv"), ("prices", "closes.csv"),
                   ("fx", "rates.csv")):
    led.ok("import", kind, os.path.join(EX, name), "--quiet")
led.ok("record", "deposit", "--date", "2025-01-02", "--account", "Euro Depot", "--amount", "6000")
led.ok("record", "deposit", "--date", "2025-01-02", "--account", "Dollar Depot",
       "--amount", "5000")
plan = os.path.join(led.dir.name, "plan.toml")
with open(plan, "w") as f:
    f.write('name = "Two currencies"\n[pools.home]\naccounts = ["Euro Depot", "Dollar Depot"]\n'
            '[[part]]\nname = "core"\npool = "home"\nshare_pct = 100\n'
            'fixed = { ARDN = 50, CALV = 50 }\n')
ARGS = ("propose", "--plan", plan, "--as-of", "2025-06-30", "--deposit", "Dollar Depot=1000")

# By hand. On 2025-06-30 the stored rate is EUR/USD 1.25: a dollar is 1 / 1.25 = 0.8 EUR
# (inverted). The planned 1000 is in the dollar account's own currency: about 800 EUR.
usd = 1 / D("1.25")
eur_cash, usd_cash = D(6000), D(5000) + 1000
pool = eur_cash + usd_cash * usd
equal(pool, D(10800), "pool by hand, in the ledger's euros")
# Half each: 5400 EUR. ARDN (40 EUR) and CALV (110 USD = 88 EUR) are bought in the account
# with the most cash to spend first: ARDN in Euro Depot (6000 against 4800 EUR), CALV in
# Dollar Depot, and the rest of CALV with what Euro Depot has left.
target = pool / 2
ardn = int(target / 40)                          # 135 in Euro Depot, 600 EUR left
calv_usd_acct = int(usd_cash * usd / 88)         # 54 in Dollar Depot
calv_eur_acct = int((eur_cash - ardn * 40) / 88)  # 6 in Euro Depot
equal((ardn, calv_usd_acct, calv_eur_acct), (135, 54, 6), "units by hand")
# Dollar Depot pays 54 x 110 = 5940 USD from its dollars; Euro Depot's 6 x 110 = 660 USD
# settle in euros for about 660 x 0.8 = 528 EUR: one conversion, fee 0 (no fee model).
settled = calv_eur_acct * 110
equal((settled, settled * usd), (660, D(528)), "the conversion by hand")
cash_eur_acct = eur_cash - ardn * 40 - settled * usd          # 72 EUR
cash_usd_acct = (usd_cash - calv_usd_acct * 110) * usd         # 60 USD = 48 EUR
equal((cash_eur_acct, cash_usd_acct), (D(72), D(48)), "cash after by hand")

p = led.json(*ARGS)
with open(os.path.join(SOURCE, "docs", "schema", "plan-proposal.json")) as f:
    jsonschema.validate(p, json.load(f))
equal([(c["account"], D(c["amount"]), c["currency"], D(c["converted"])) for c in
       p["planned_cash"]], [("Dollar Depot", D(1000), "USD", 1000 * usd)],
      "the deposit in dollars, converted")
home = p["pools"][0]
equal((home["currency"], D(home["pool_value"])), ("EUR", pool), "pool in euros")
equal([(o["account"], o["symbol"], D(o["quantity"]), D(o["value"])) for o in home["orders"]],
      [("Euro Depot", "ARDN", ardn, ardn * 40),
       ("Euro Depot", "CALV", calv_eur_acct, calv_eur_acct * 88),
       ("Dollar Depot", "CALV", calv_usd_acct, calv_usd_acct * 88)], "orders in euros")
fx = [o["fx"] for o in home["orders"]]
equal(fx[0], None, "a euro name in the euro account needs no conversion")
equal((fx[1]["currency"], D(fx[1]["local_price"]), D(fx[1]["rate"]), fx[1]["rate_derived"],
       fx[1]["settles_in"], D(fx[1]["local_settled"]), D(fx[1]["settled"])),
      ("USD", D(110), usd, True, "EUR", D(settled), settled * usd),
      "CALV in the euro account settles in euros")
equal((D(fx[2]["from_cash"]), fx[2]["settles_in"]), (D(calv_usd_acct * 110), None),
      "CALV in the dollar account is paid from its dollars")
equal([(c["account"], c["from"], c["to"], D(c["amount"]), D(c["about"]), D(c["fee"]))
       for c in home["conversions"]],
      [("Euro Depot", "EUR", "USD", D(settled), settled * usd, D(0))], "one conversion")
equal([(c["account"], D(c["cash"])) for c in home["cash_after_by_account"]],
      [("Euro Depot", cash_eur_acct), ("Dollar Depot", cash_usd_acct)], "cash after, in euros")
equal([o["fx"] is not None for o in p["parts"][0]["orders"]], [False, True, True],
      "the part's orders carry the same currency side")

text = led.ok(*ARGS)
check("Planned, not booked: deposit 1000.00 USD to Dollar Depot (about 800.00 EUR)\n" in text,
      text)
check("value 10800.00 EUR (other currencies converted at the latest rates on or before "
      "2025-06-30)" in text, text)
check("settles in EUR: 660 USD for about 528 EUR" in text, text)
check("  Euro Depot: about 528 EUR into 660 USD at EUR/USD 1.25 (2025-06-30); est. fee 0.00 EUR"
      in text, text)

# In dollars on request: the same pool at 1.25 USD per EUR.
u = led.json(*ARGS, "--currency", "USD")
equal((u["pools"][0]["currency"], D(u["pools"][0]["pool_value"])), ("USD", pool * D("1.25")),
      "pool in dollars")
print("propose --plan across currencies: a euro and a dollar account, checked by hand")
