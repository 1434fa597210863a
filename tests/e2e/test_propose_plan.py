"""End to end: `keel propose --plan` on an invented household, checked by hand.

The household (all names invented) keeps a taxable and a retirement account in one pool:
70 % under a value rule (the two cheapest of six stocks by P/E, equal weights) and 30 % in a
fixed bond sleeve (GBND 60 %, HBND 40 % of the sleeve). The retirement account also holds a
mixed fund that no part manages. Every order below is worked out by hand in the comments
(whole units, no fees, no reserve: the rule's defaults), not read back from keel.
"""
import os
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, check, equal, ledger_digest  # noqa: E402

SECURITIES = """symbol,name,kind,currency,lot_size,sector
AAVO,Aavo Kitchens,stock,USD,1,Consumer
BRIQ,Briquette Works,stock,USD,1,Industry
CELT,Celta Ferries,stock,USD,1,Transport
DUNE,Dune Glassmakers,stock,USD,1,Industry
EMBR,Ember Heating,stock,USD,1,Utilities
FOXL,Foxlight Optics,stock,USD,1,Technology
GBND,Granite Treasury Bond Fund,bond,USD,1,
HBND,Heron Municipal Bond Fund,bond,USD,1,
ZMIX,Zephyr Mixed Fund,fund,USD,1,
"""
CLOSES = {"AAVO": 50, "BRIQ": 40, "CELT": 100, "DUNE": 60, "EMBR": 70, "FOXL": 80,
          "GBND": 100, "HBND": 50, "ZMIX": 44}
PE = {"AAVO": 8, "BRIQ": 10, "CELT": 15, "DUNE": 20, "EMBR": 25, "FOXL": 30}
VALUE_RULE = """name = "value"
[scope]
accounts = ["Taxable"]
symbols = ["AAVO", "BRIQ", "CELT", "DUNE", "EMBR", "FOXL"]
[select]
by = "count"
count = 2
"""
PLAN = """name = "Household"

[pools.family]
accounts = ["Taxable", "Retirement"]
{unmanaged}
[[part]]
rule = "rules/value.toml"
pool = "family"
share_pct = 70

[[part]]
name = "bonds"
pool = "family"
share_pct = 30
fixed = {{ GBND = 60, HBND = 40 }}
"""


def write(path, text):
    os.makedirs(os.path.dirname(path), exist_ok=True)
    with open(path, "w", encoding="utf-8") as f:
        f.write(text)
    return path


led = Ledger()
D = led.dir.name
led.ok("import", "securities", write(os.path.join(D, "securities.csv"), SECURITIES), "--quiet")
led.ok("import", "prices", write(os.path.join(D, "prices.csv"), "date,symbol,close\n" + "".join(
    f"2026-01-30,{s},{c}\n" for s, c in CLOSES.items())), "--quiet")
led.ok("import", "metrics", write(os.path.join(D, "metrics.csv"),
                                  "date,symbol,metric,value,known_on\n" + "".join(
                                      f"2025-12-31,{s},pe,{v},2026-01-15\n"
                                      for s, v in PE.items())), "--quiet")
led.ok("account", "add", "Taxable")
led.ok("account", "add", "Retirement")
led.ok("record", "deposit", "--date", "2026-01-02", "--account", "Taxable", "--amount", "60000")
led.ok("record", "buy", "--date", "2026-01-05", "--account", "Taxable", "--symbol", "CELT",
       "--quantity", "100", "--price", "100")
led.ok("record", "deposit", "--date", "2026-01-02", "--account", "Retirement", "--amount", "42000")
led.ok("record", "buy", "--date", "2026-01-05", "--account", "Retirement", "--symbol", "ZMIX",
       "--quantity", "50", "--price", "40")
write(os.path.join(D, "rules", "value.toml"), VALUE_RULE)
plan = write(os.path.join(D, "household.toml"), PLAN.format(unmanaged=""))
before = ledger_digest(led.path)

doc = led.json("propose", "--plan", plan, "--deposit", "Taxable=1000")
equal(doc["schema"], {"name": "keel.plan-proposal", "version": 4}, "schema tag")
equal(doc["as_of"], "2026-01-30", "as of the latest close")
equal(doc["planned_cash"], [{"account": "Taxable", "amount": "1000", "currency": "USD",
                              "converted": None, "booked": False}],
      "the deposit is planned, not booked")
equal(ledger_digest(led.path), before, "proposing a plan writes nothing (not even the deposit)")

# The pool's managed value:
#   Taxable cash 60000 - 10000 (CELT) + 1000 planned = 51000
#   CELT 100 x 100                                    = 10000
#   Retirement cash 42000 - 2000 (ZMIX)               = 40000
#   total                                             = 101000 (ZMIX is unmanaged, outside)
pool = doc["pools"][0]
equal(pool["name"], "family", "one pool")
equal(pool["pool_value"], "101000", "managed value of the pool")
equal(doc["unmanaged"], [{"pool": "family", "account": "Retirement", "symbol": "ZMIX",
                          "quantity": "50", "price": "44", "value": "2200", "action": "keep"}],
      "ZMIX: outside every part, 50 x 44 = 2200, left alone")

# The value rule picks the two lowest P/E (AAVO 8, BRIQ 10), each 50 % of its 70 % = 35 %;
# the sleeve gives GBND 60 % x 30 % = 18 % and HBND 40 % x 30 % = 12 %.
parts = {p["name"]: p for p in doc["parts"]}
equal(sorted(parts), ["bonds", "value"], "both parts under their own names")
equal([(t["symbol"], t["weight"]) for t in parts["value"]["targets"]],
      [("AAVO", "0.35"), ("BRIQ", "0.35"), ("CELT", "0")], "value targets, share applied")
equal([(t["symbol"], t["weight"]) for t in parts["bonds"]["targets"]],
      [("GBND", "0.18"), ("HBND", "0.12")], "sleeve targets, share applied")
equal([l["symbol"] for l in parts["value"]["screen"] if l["selected"]], ["AAVO", "BRIQ"],
      "the value part's screen")
equal(parts["bonds"]["screen"], None, "a fixed sleeve has no screen")

# The orders, by hand (sells first, then buys; cash is per account):
#   CELT: not selected, held 100 in Taxable -> sell 100 x 100 = 10000; Taxable cash 61000
#   AAVO: 0.35 x 101000 = 35350 / 50 = 707 -> Taxable 707 x 50 = 35350; Taxable left 25650
#   BRIQ: 0.35 x 101000 = 35350 / 40 = 883.75 -> 883 (whole units) x 40 = 35320 in Retirement;
#         Retirement left 40000 - 35320 = 4680
#   GBND: 0.18 x 101000 = 18180 / 100 = 181.8 -> 181 x 100 = 18100 in Taxable; left 7550
#   HBND: 0.12 x 101000 = 12120 / 50 = 242.4 -> 242: Taxable's 7550 / 50 = 151 units, and
#         Retirement's 242 - 151 = 91 units x 50 = 4550; Retirement left 4680 - 4550 = 130
orders = [(o["account"], o["symbol"], o["side"], o["quantity"], o["value"]) for o in pool["orders"]]
equal(orders, [("Taxable", "CELT", "sell", "100", "10000"),
               ("Taxable", "AAVO", "buy", "707", "35350"),
               ("Retirement", "BRIQ", "buy", "883", "35320"),
               ("Taxable", "GBND", "buy", "181", "18100"),
               ("Taxable", "HBND", "buy", "151", "7550"),
               ("Retirement", "HBND", "buy", "91", "4550")], "the pool's orders, by hand")
equal(len({(o[0], o[1]) for o in orders}), len(orders), "one order per account and security")
equal(pool["cash_after_by_account"],
      [{"account": "Taxable", "cash": "0", "reserve": "0"},
       {"account": "Retirement", "cash": "130", "reserve": "0"}], "cash after, by hand")
check(all(o["reason"].startswith("value: ") for o in parts["value"]["orders"]),
      "value orders name their rule")
check(all(o["reason"].startswith("bonds: ") for o in parts["bonds"]["orders"]),
      "sleeve orders name their part")
equal(sum(len(p["orders"]) for p in doc["parts"]), len(pool["orders"]),
      "every order belongs to one part")
check(not any(o["symbol"] == "ZMIX" for o in pool["orders"]), "the unmanaged fund is never sold")
equal(doc["cautions"][0], "This is the output of your own rule applied to your own data; it is "
      "not investment advice.", "the proposal's cautions")

# The text says the deposit is planned and lists the unmanaged fund.
text = led.ok("propose", "--plan", plan, "--deposit", "Taxable=1000")
check("Planned, not booked: deposit 1000.00 to Taxable" in text, text)
check("family  Retirement  ZMIX          50     44  2200.00  left alone" in text, text)
check("Part 'bonds': fixed sleeve, 30.00% of pool 'family'" in text, text)
check("Cautions:" in text and "not investment advice" in text, "text cautions")

# Without the deposit: 100000 managed; AAVO 35000 / 50 = 700 units in Taxable.
doc = led.json("propose", "--plan", plan)
equal(doc["pools"][0]["pool_value"], "100000", "without the planned deposit")
equal(doc["pools"][0]["orders"][1]["quantity"], "700", "AAVO: 0.35 x 100000 / 50 = 700")

# A withdrawal of 1000 from Retirement: 100000 managed (101000 - 1000 - 1000 + 1000).
doc = led.json("propose", "--plan", plan, "--deposit", "Taxable=1000", "--withdraw",
               "Retirement=2000")
equal(doc["pools"][0]["pool_value"], "99000", "51000 + 10000 + 38000")
equal([c["amount"] for c in doc["planned_cash"]], ["1000", "-2000"], "planned deposit, withdrawal")

# unmanaged = "sell": ZMIX joins the pool (101000 + 2200 = 103200) and is sold.
write(plan, PLAN.format(unmanaged='unmanaged = "sell"\n'))
doc = led.json("propose", "--plan", plan, "--deposit", "Taxable=1000")
equal(doc["pools"][0]["pool_value"], "103200", "the unmanaged fund counts when it is sold")
zmix = [o for o in doc["pools"][0]["orders"] if o["symbol"] == "ZMIX"]
equal([(o["side"], o["quantity"]) for o in zmix], [("sell", "50")], "ZMIX sold whole")
check(zmix[0]["reason"].startswith("unmanaged: "), zmix[0]["reason"])
equal(doc["unmanaged"][0]["action"], "sell", "listed as sold")

# A part with accounts of its own: the rule's scope.accounts.
write(os.path.join(D, "own.toml"), 'name = "Own"\n[[part]]\nrule = "rules/value.toml"\n')
doc = led.json("propose", "--plan", os.path.join(D, "own.toml"))
equal([(p["name"], p["accounts"]) for p in doc["pools"]], [("value", ["Taxable"])],
      "a part of its own keeps the rule's accounts")
equal(doc["pools"][0]["pool_value"], "60000", "Taxable alone: 50000 cash + CELT 10000")

# Refusals change nothing.
write(os.path.join(D, "overlap.toml"), PLAN.format(unmanaged="").replace(
    "GBND = 60", "CELT = 60"))
err = led.fails("propose", "--plan", os.path.join(D, "overlap.toml"))
equal(err, f"keel: error: {D}/overlap.toml:15:9: key 'part.fixed': 'CELT' is managed by both part "
      "'value' and part 'bonds' in pool 'family'; a security belongs to one part of a pool",
      "a name in two parts of one pool")
err = led.fails("propose", "--plan", plan, "--withdraw", "Retirement=50000")
equal(err, "keel: error: --withdraw: account 'Retirement' holds 40000 in cash and 2200 in holdings "
      "to sell on 2026-01-30; it cannot give 50000", "a withdrawal larger than cash and holdings")
equal(ledger_digest(led.path), before, "refused plans write nothing")
print("propose --plan: household checked by hand")

# ---------------------------------------------------------------- tax keys
# A second invented household: Brokerage (taxable) and Retirement (tax-deferred), on 2026-06-30.
#   Brokerage: cash 10000; ACRN lot 1: 100 bought 2024-01-10 at 40 (long-term, gain 60 a unit),
#              ACRN lot 2: 50 bought 2026-03-02 at 120 (short-term, loss 20 a unit).
#   Retirement: cash 6000; ACRN 50 bought 2024-01-10 at 80.
# Closes: ACRN 100, BOLT 50, GBND 100. Pool 10000 + 6000 + 200 x 100 = 36000.
# Plan: stocks 50 % (ACRN 20 %, BOLT 80 % of the part), bonds 50 % (GBND), bonds placed in
# tax-deferred accounts first; sells from tax-deferred accounts first.
# Targets: ACRN 10 % = 3600, BOLT 40 % = 14400, GBND 50 % = 18000 (no fees, no reserve).
tax = Ledger()
T = tax.dir.name
tax.ok("import", "securities", write(os.path.join(T, "securities.csv"),
       "symbol,name,kind,currency,lot_size,sector\nACRN,Acorn Rail,stock,USD,1,\n"
       "BOLT,Boltwood Tools,stock,USD,1,\nGBND,Granite Treasury Bond Fund,bond,USD,1,\n"),
       "--quiet")
tax.ok("import", "prices", write(os.path.join(T, "prices.csv"), "date,symbol,close\n"
       "2026-06-30,ACRN,100\n2026-06-30,BOLT,50\n2026-06-30,GBND,100\n"), "--quiet")
tax.ok("account", "add", "Brokerage")
tax.ok("account", "add", "Retirement", "--tax-status", "tax-deferred")
for account, amount in (("Brokerage", "20000"), ("Retirement", "10000")):
    tax.ok("record", "deposit", "--date", "2024-01-02", "--account", account, "--amount", amount)
for date, account, qty, price in (("2024-01-10", "Brokerage", "100", "40"),
                                  ("2026-03-02", "Brokerage", "50", "120"),
                                  ("2024-01-10", "Retirement", "50", "80")):
    tax.ok("record", "buy", "--date", date, "--account", account, "--symbol", "ACRN",
           "--quantity", qty, "--price", price)
TAX_PLAN = """name = "Tax household"
[tax]
sell_from = "tax-deferred-first"
{cap}
[pools.home]
accounts = ["Brokerage", "Retirement"]

[[part]]
name = "stocks"
pool = "home"
share_pct = 50
fixed = {{ ACRN = 20, BOLT = 80 }}

[[part]]
name = "bonds"
pool = "home"
share_pct = 50
fixed = {{ GBND = 100 }}
place = "tax-deferred-first"
"""
tax_plan = write(os.path.join(T, "tax.toml"), TAX_PLAN.format(cap=""))
before = ledger_digest(tax.path)


def orders_of(doc):
    return [(o["account"], o["symbol"], o["side"], o["quantity"], o["reason"])
            for o in doc["pools"][0]["orders"]]


# ACRN: 20000 now, 3600 target: sell 164. Retirement's 50 first (no tax event), then 114 in
# Brokerage (highest cost first: lot 2's 50, then 64 of lot 1). Cash: Retirement 6000 + 5000 =
# 11000, Brokerage 10000 + 11400 = 21400, together 32400 = 14400 + 18000: every buy fits.
# GBND buys first, Retirement first: 11000 / 100 = 110 there, the other 7000 (70) in Brokerage;
# BOLT then takes Brokerage's 14400 (288).
doc = tax.json("propose", "--plan", tax_plan)
F20, F80, F100 = ("stocks: fixed at 20% of the part", "stocks: fixed at 80% of the part",
                  "bonds: fixed at 100% of the part")
equal(orders_of(doc), [  # sells first; each name's orders in the pool's account order
    ("Brokerage", "ACRN", "sell", "114", F20 + ": trim to target"),
    ("Retirement", "ACRN", "sell", "50", F20 + ": trim to target; sold in Retirement: no tax event"),
    ("Brokerage", "BOLT", "buy", "288", F80 + ": new position"),
    ("Brokerage", "GBND", "buy", "70",
     F100 + ": new position; placed in Brokerage: no tax-deferred cash left"),
    ("Retirement", "GBND", "buy", "110",
     F100 + ": new position; placed in Retirement: tax-deferred first"),
], "tax keys: placement and selling order")
TAX_CAUTION = ("This plan places and sells by each account's recorded tax status: tax treatment "
               "depends on local rules; check it with your tax authority or a licensed "
               "professional.")
check(TAX_CAUTION in doc["cautions"], "the tax caution in JSON")
check(TAX_CAUTION in tax.ok("propose", "--plan", tax_plan), "the tax caution in text")

# A gain cap of 2000: lot 2's loss (50 x -20 = -1000) leaves room for 3000 of gain, 50 units of
# lot 1 at 60 a unit; the other 14 are kept.
write(tax_plan, TAX_PLAN.format(cap="gain_cap = 2000"))
doc = tax.json("propose", "--plan", tax_plan)
equal(orders_of(doc)[:2], [
    ("Brokerage", "ACRN", "sell", "100",
     F20 + ": trim to target; 14 kept in Brokerage: the gain cap of 2000.00 is reached"),
    ("Retirement", "ACRN", "sell", "50", F20 + ": trim to target; sold in Retirement: no tax event"),
], "tax keys: the gain cap cuts the Brokerage sell")
lots = doc["pools"][0]["orders"][0]["lots"]
equal(sum(int(l["est_gain"].split(".")[0]) for l in lots), 2000, "estimated gain at the cap")

equal(ledger_digest(tax.path), before, "tax-aware proposals write nothing")
print("propose --plan: tax-aware household checked by hand")

# ---------------------------------------------------------------- tax keys in one rule file
# The same household under one rule over both accounts: GBND a 50 % sleeve placed in
# tax-deferred accounts first; the screen picks the cheaper of ACRN (P/E 20) and BOLT (P/E 10).
# [tax] as the plan's, with a gain cap of 2000. Targets: GBND 18000, BOLT 18000, ACRN 0 (exit).
# ACRN sells all 200: Retirement's 50 first (no tax event); in Brokerage lot 2 (50 at a loss of
# 1000) leaves room for 3000 of gain, 50 units of lot 1 at 60 a unit; its other 50 are kept.
# Cash to spend: Retirement 6000 + 5000 = 11000, Brokerage 10000 + 10000 = 20000; 31000 of the
# 36000 wanted, each buy gets 31/36 of its 18000 = 15500 first. GBND (placed) buys first:
# Retirement's 11000 (110), then 4500 in Brokerage (45); BOLT takes Brokerage's 15500 (310).
tax.ok("import", "metrics", write(os.path.join(T, "metrics.csv"),
       "date,symbol,metric,value,known_on\n2026-03-31,ACRN,pe,20,2026-05-15\n"
       "2026-03-31,BOLT,pe,10,2026-05-15\n"), "--quiet")
# A rule over both accounts of a household, screening ACRN and BOLT, keeping the `count`
# cheapest; `rest` adds tables.
TWO_NAMES = """name = "{name}"
[scope]
accounts = ["Brokerage", "Retirement"]
symbols = ["ACRN", "BOLT"]
[screen]
min_names = 2
[select]
by = "count"
count = {count}
{rest}"""
tax_rule = write(os.path.join(T, "tilted.toml"), TWO_NAMES.format(name="tilted", count=1, rest="""[[sleeve]]
symbol = "GBND"
weight_pct = 50
place = "tax-deferred-first"
[tax]
sell_from = "tax-deferred-first"
gain_cap = 2000
"""))
before = ledger_digest(tax.path)
doc = tax.json("propose", "--rule", tax_rule)
OUT, IN, SLEEVE = "z = 0.71, rank 2 > 1", "z = -0.71, rank 1 <= 1", "sleeve at 50.00%"
equal([(o["account"], o["symbol"], o["side"], o["quantity"], o["reason"]) for o in doc["orders"]], [
    ("Brokerage", "ACRN", "sell", "100",
     OUT + ": sell all; 50 kept in Brokerage: the gain cap of 2000.00 is reached"),
    ("Retirement", "ACRN", "sell", "50", OUT + ": sell all; sold in Retirement: no tax event"),
    ("Brokerage", "GBND", "buy", "45",
     SLEEVE + ": new position; placed in Brokerage: no tax-deferred cash left"),
    ("Retirement", "GBND", "buy", "110",
     SLEEVE + ": new position; placed in Retirement: tax-deferred first"),
    ("Brokerage", "BOLT", "buy", "310", IN + ": new position"),
], "one rule file: placement, selling order and gain cap as in a plan")
equal([(l["lot"], l["quantity"], l["est_gain"]) for l in doc["orders"][0]["lots"]],
      [(4, "50", "-1000"), (3, "50", "3000")], "the lots within the gain cap")
RULE_CAUTION = TAX_CAUTION.replace("This plan", "This rule")
check(RULE_CAUTION in doc["cautions"], "the rule's tax caution in JSON")
check(RULE_CAUTION in tax.ok("propose", "--rule", tax_rule), "the rule's tax caution in text")
# In a plan the plan's [tax] applies: the rule file's is not used, and a note says so; the
# sleeve's place is used, so the plan's proposal has the tax caution.
in_plan = write(os.path.join(T, "tilted-plan.toml"), 'name = "Tilted plan"\n[[part]]\n'
                'rule = "tilted.toml"\n')
doc = tax.json("propose", "--plan", in_plan)
check(f"part 'tilted': the [tax] table of rule file {T}/tilted.toml is not used in a plan; the "
      "plan's [tax] applies" in doc["notes"], doc["notes"])
check(TAX_CAUTION in doc["cautions"], "a placed sleeve in a plan's rule part: the tax caution")
equal([(o["account"], o["symbol"], o["side"], o["quantity"]) for o in doc["pools"][0]["orders"]
       if o["symbol"] == "ACRN"], [("Brokerage", "ACRN", "sell", "150"),
                                   ("Retirement", "ACRN", "sell", "50")],
      "without the plan's [tax], no gain cap: all of ACRN is sold")
equal(ledger_digest(tax.path), before, "a rule's tax-aware proposal writes nothing")
print("propose --rule: tax keys in one rule file checked by hand")

# ---------------------------------------------------------------- saved, filled, at rest
# The plan without the cap is saved with a planned deposit and withdrawal; the cash and the
# orders are booked three days later (the orders as filled at the estimated prices, with the
# lots it named); proposing again proposes nothing new.
write(tax_plan, TAX_PLAN.format(cap=""))
first = tax.json("propose", "--plan", tax_plan, "--save", "--deposit", "Brokerage=1000",
                 "--withdraw", "Retirement=500")
equal(first["proposal_id"], 1, "saved as proposal 1")
shown = tax.json("proposals", "show", "1")
equal(shown["schema"], {"name": "keel.proposal", "version": 3}, "the saved proposal's schema")
equal(shown["planned_cash"], [
    {"account": "Brokerage", "planned": "1000", "booked_since": "0", "status": "not booked"},
    {"account": "Retirement", "planned": "-500", "booked_since": "0", "status": "not booked"},
], "the saved proposal keeps its planned cash")
tax.ok("record", "deposit", "--date", "2026-07-03", "--account", "Brokerage", "--amount", "1000")
tax.ok("record", "withdrawal", "--date", "2026-07-03", "--account", "Retirement", "--amount",
       "500")
for o in first["pools"][0]["orders"]:
    lots = ",".join(f"{l['lot']}:{l['quantity']}" for l in o["lots"])
    tax.ok("record", o["side"], "--date", "2026-07-03", "--account", o["account"], "--symbol",
           o["symbol"], "--quantity", o["quantity"], "--price", o["price"],
           *(["--lots", lots] if lots else []))
again = tax.json("propose", "--plan", tax_plan)
equal(again["as_of"], "2026-07-03", "the default day takes in the fills")
equal(again["pools"][0]["orders"], [], "nothing proposed again once the orders are filled")
shown = tax.json("proposals", "show", "1")
equal(shown["kind"], "plan", "a plan's saved proposal")
equal([(l["part"], l["account"], l["symbol"], l["side"], l["status"]) for l in shown["lines"]], [
    ("stocks", "Brokerage", "ACRN", "sell", "done"),
    ("stocks", "Retirement", "ACRN", "sell", "done"),
    ("stocks", "Brokerage", "BOLT", "buy", "done"),
    ("bonds", "Brokerage", "GBND", "buy", "done"),
    ("bonds", "Retirement", "GBND", "buy", "done"),
], "each saved order under its part, done")
equal([(c["account"], c["status"]) for c in shown["planned_cash"]],
      [("Brokerage", "booked"), ("Retirement", "booked")], "the planned cash, booked since")
text = tax.ok("proposals", "show", "1")
check(text.startswith("Proposal 1 of plan 'Tax household' as of 2026-06-30, saved "), text)
check("\nPlanned cash, not booked when proposed\n" in text and
      "Retirement  withdraw   500.00        500.00  booked\n" in text, text)
check("\nPart 'stocks'\n" in text and "\nPart 'bonds'\n" in text, text)
listed = tax.json("proposals", "list")["proposals"]
equal([(p["id"], p["kind"], p["rule"], p["orders"]) for p in listed],
      [(1, "plan", "Tax household", 5)], "the list names the plan")
print("propose --plan --save: filled orders leave the plan at rest")

# ---------------------------------------------------------------- a withdrawal, netted
# A third invented household on 2026-06-30: Brokerage (taxable) cash 1000; Retirement
# (tax-deferred) cash 0, ACRN 20 bought at 40 (a gain) and BOLT 5 bought at 120 (a loss).
# Closes ACRN 100, BOLT 100. One rule over both accounts holds both names at 50 %, with a
# drift band of 20 points. Withdrawing 500 from Retirement: pool 1000 - 500 + 2000 + 500 =
# 3000, targets 1500 each. ACRN (66.67 %) is inside the band, BOLT (16.67 %) wants 1000.
# Retirement must raise 500: it sells 5 ACRN, the 500 above target (not its BOLT at a loss,
# which the pool buys); Brokerage's 1000 buys 10 BOLT. No name is both sold and bought.
net = Ledger()
N = net.dir.name
net.ok("import", "securities", write(os.path.join(N, "securities.csv"),
       "symbol,name,kind,currency,lot_size,sector\nACRN,Acorn Rail,stock,USD,1,\n"
       "BOLT,Boltwood Tools,stock,USD,1,\n"), "--quiet")
net.ok("import", "prices", write(os.path.join(N, "prices.csv"), "date,symbol,close\n"
       "2026-06-30,ACRN,100\n2026-06-30,BOLT,100\n"), "--quiet")
net.ok("import", "metrics", write(os.path.join(N, "metrics.csv"),
       "date,symbol,metric,value,known_on\n2026-03-31,ACRN,pe,20,2026-05-15\n"
       "2026-03-31,BOLT,pe,10,2026-05-15\n"), "--quiet")
net.ok("account", "add", "Brokerage")
net.ok("account", "add", "Retirement", "--tax-status", "tax-deferred")
net.ok("record", "deposit", "--date", "2024-01-02", "--account", "Brokerage", "--amount", "1000")
net.ok("record", "deposit", "--date", "2024-01-02", "--account", "Retirement", "--amount", "1400")
net.ok("record", "buy", "--date", "2024-01-10", "--account", "Retirement", "--symbol", "ACRN",
       "--quantity", "20", "--price", "40")
net.ok("record", "buy", "--date", "2026-03-02", "--account", "Retirement", "--symbol", "BOLT",
       "--quantity", "5", "--price", "120")
write(os.path.join(N, "rules", "both.toml"),
      TWO_NAMES.format(name="both", count=2, rest="[trading]\ndrift_pct_points = 20\n"))
net_plan = write(os.path.join(N, "net.toml"),
                 'name = "Netted"\n[[part]]\nrule = "rules/both.toml"\n')
doc = net.json("propose", "--plan", net_plan, "--withdraw", "Retirement=500")
equal([(o["account"], o["symbol"], o["side"], o["quantity"], o["reason"])
       for o in doc["pools"][0]["orders"]], [
    ("Retirement", "ACRN", "sell", "5",
     "both: z = 0.71, rank 2 <= 2: sold to raise the cash Retirement must give (500.00 short)"),
    ("Brokerage", "BOLT", "buy", "10", "both: z = -0.71, rank 1 <= 2: add to target"),
], "a withdrawal's sale is netted with the rebalance")
sides = {}
for o in doc["pools"][0]["orders"]:
    sides.setdefault(o["symbol"], set()).add(o["side"])
check(all(len(s) == 1 for s in sides.values()), f"no name both sold and bought: {sides}")
print("propose --plan --withdraw: the withdrawal's sale does the rebalance's work")

# The same rule proposed alone plans with the same withdrawal and nets it the same way; saved,
# its cash and orders booked as filled, it is at rest and its planned cash shows as booked.
both = os.path.join(N, "rules", "both.toml")
first = net.json("propose", "--rule", both, "--withdraw", "Retirement=500", "--save")
equal(first["schema"], {"name": "keel.propose", "version": 5}, "the rule proposal's schema")
equal(first["planned_cash"], [{"account": "Retirement", "amount": "-500", "currency": "USD",
                              "converted": None, "booked": False}],
      "a rule's planned withdrawal, not booked")
equal([(o["account"], o["symbol"], o["side"], o["quantity"]) for o in first["orders"]],
      [("Retirement", "ACRN", "sell", "5"), ("Brokerage", "BOLT", "buy", "10")],
      "a rule's withdrawal netted as the plan's")
text = net.ok("propose", "--rule", both, "--withdraw", "Retirement=500")
check("\nPlanned, not booked: withdraw 500.00 from Retirement\n" in text, text)
for o in first["orders"]:
    lots = ",".join(f"{l['lot']}:{l['quantity']}" for l in o["lots"])
    net.ok("record", o["side"], "--date", "2026-07-01", "--account", o["account"], "--symbol",
           o["symbol"], "--quantity", o["quantity"], "--price", o["price"],
           *(["--lots", lots] if lots else []))
net.ok("record", "withdrawal", "--date", "2026-07-01", "--account", "Retirement", "--amount", "500")
again = net.json("propose", "--rule", both)
equal(again["orders"], [], "nothing proposed again once the cash and the orders are booked")
shown = net.json("proposals", "show", str(first["proposal_id"]))
equal(shown["planned_cash"], [{"account": "Retirement", "planned": "-500",
                               "booked_since": "-500", "status": "booked"}],
      "the rule's planned withdrawal, booked since")
equal({l["status"] for l in shown["lines"]}, {"done"}, "every saved order done")
err = net.fails("propose", "--rule", both, "--deposit", "Retirment=10")
equal(err, "keel: error: --deposit: 'Retirment' is not an account of the rule (did you mean "
      "'Retirement'?)", "a rule's planned cash to an account outside it")
print("propose --rule --withdraw --save: planned cash kept, booked, at rest")
