"""Corporate actions end to end through the keel binary: each kind recorded (or imported),
its lots, costs, dates and realized gains worked out by hand below, listed, voided, and
checked by `keel verify`. All companies and figures are invented."""
import os
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, check, equal, ledger_digest  # noqa: E402


def lots(led, symbol):
    return [(l["account"], l["lot"], l["acquired"], l["quantity"], l["cost"])
            for l in led.json("lots")["lots"] if l["symbol"] == symbol]


def gains(led):
    return [(g["account"], g["symbol"], g["lot"], g.get("action"), g["acquired"], g["disposed"],
             g["quantity"], g["proceeds"], g["cost"], g["gain"]) for g in led.json("gains")["gains"]]


def cash(led, account):
    for c in led.json("holdings")["cash"]:
        if c["account"] == account:
            return c["amount"]
    raise AssertionError(f"no account {account} in holdings")


def verified(led):
    code, out, err = led.run("verify")
    equal(code, 0, f"keel verify: {out}{err}")


led = Ledger()
led.ok("account", "add", "Rowan")
led.ok("account", "add", "Sorrel", "--basis", "lifo")
for symbol, name in [("PLOV", "Plover Rigging"), ("TERN", "Tern Works"), ("SKUA", "Skua Mills"),
                     ("GULL", "Gull Freight"), ("KITE", "Kite Optics"), ("WREN", "Wren Ceramics"),
                     ("RAIL", "Rail Ferries")]:
    led.ok("security", "add", symbol, "--name", name, "--kind", "stock")
led.ok("record", "deposit", "--date", "2024-01-02", "--account", "Rowan", "--amount", "50000")
led.ok("record", "deposit", "--date", "2024-01-02", "--account", "Sorrel", "--amount", "50000")

# --- reverse split with cash in lieu ------------------------------------------------------
# Rowan: 125 PLOV for 1000 (lot 3). One for ten -> 12.5; the 0.5 is paid at 85:
# proceeds 42.50, cost 1000 x 0.5 / 12.5 = 40, gain 2.50; the lot keeps 12 units and 960.
led.ok("record", "buy", "--date", "2024-01-03", "--account", "Rowan", "--symbol", "PLOV",
       "--quantity", "125", "--price", "8")
out = led.ok("record", "split", "--date", "2024-03-01", "--symbol", "PLOV", "--ratio", "0.1",
             "--cash-in-lieu", "85")
equal(out, "action 1 posted: split of PLOV x0.1 on 2024-03-01, fractions paid at 85\n",
      "split with cash in lieu")
equal(lots(led, "PLOV"), [("Rowan", 3, "2024-01-03", "12", "960")], "PLOV lots after the split")
equal(gains(led), [("Rowan", "PLOV", 3, 1, "2024-01-03", "2024-03-01", "0.5", "42.5", "40", "2.5")],
      "the fraction is a disposal")

# --- merger, cash and stock, default cost split -------------------------------------------
# Sorrel: 200 TERN for 3000 (lot 4). TERN -> 0.5 SKUA + 4.00 cash; SKUA closed at 20, so the
# stock part is worth 10 a unit: 10 / 14 = 71.428571 % of cost goes to SKUA. Cash 800, its
# cost 3000 x 800 / 2800 = 857.14, gain -57.14; SKUA lot 4: 100 units, 2142.86, 2024-01-05.
led.ok("record", "buy", "--date", "2024-01-05", "--account", "Sorrel", "--symbol", "TERN",
       "--quantity", "200", "--price", "15")
prices = os.path.join(led.dir.name, "skua.csv")
with open(prices, "w") as f:
    f.write("date,symbol,close\n2024-06-28,SKUA,20\n")
led.ok("import", "prices", prices)
out = led.ok("record", "merger", "--date", "2024-07-01", "--symbol", "TERN", "--into", "SKUA",
             "--ratio", "0.5", "--cash", "4")
equal(out, "action 2 posted: merger of TERN on 2024-07-01\n71.428571% of each lot's cost goes to "
           "the SKUA units, by market value on the day (give --cost-percent to state it)\n",
      "merger output")
equal(lots(led, "TERN"), [], "no TERN left")
equal(lots(led, "SKUA"), [("Sorrel", 4, "2024-01-05", "100", "2142.86")], "SKUA carries the lot")
check(("Sorrel", "TERN", 4, 2, "2024-01-05", "2024-07-01", "200", "800", "857.14", "-57.14")
      in gains(led), "the cash part is realized")

# --- spin-off ------------------------------------------------------------------------------
# Rowan: 90 GULL for 4500 (lot 5). 0.25 KITE per GULL, 20 % of cost to KITE: GULL keeps 3600;
# KITE 22.5 units at 900, the 0.5 paid at 12 = 6.00 with cost 20 (gain -14); KITE keeps 22 at 880.
led.ok("record", "buy", "--date", "2024-02-01", "--account", "Rowan", "--symbol", "GULL",
       "--quantity", "90", "--price", "50")
led.ok("record", "spinoff", "--date", "2024-04-01", "--symbol", "GULL", "--into", "KITE",
       "--ratio", "0.25", "--cost-percent", "20", "--cash-in-lieu", "12")
equal(lots(led, "GULL"), [("Rowan", 5, "2024-02-01", "90", "3600")], "GULL after the spin-off")
equal(lots(led, "KITE"), [("Rowan", 5, "2024-02-01", "22", "880")], "KITE lot, date carried")
check(("Rowan", "KITE", 5, 3, "2024-02-01", "2024-04-01", "0.5", "6", "20", "-14") in gains(led),
      "the KITE fraction is a disposal")

# --- return of capital, imported ------------------------------------------------------------
# Sorrel: 100 WREN for 500 (lot 6). 3.00 a unit lowers the cost to 200; then 4.00 a unit:
# 400 received, 200 of it past the cost, a realized gain on no units; the lot stays at 0.
led.ok("record", "buy", "--date", "2024-02-02", "--account", "Sorrel", "--symbol", "WREN",
       "--quantity", "100", "--price", "5")
actions = os.path.join(led.dir.name, "actions.csv")
with open(actions, "w") as f:
    f.write("date,symbol,action,into,ratio,cash,cost_percent,cash_in_lieu,note\n"
            "2024-03-04,WREN,return_of_capital,,,3,,,first\n"
            "2024-06-03,WREN,return_of_capital,,,4,,,second\n")
led.ok("import", "actions", actions)
equal(lots(led, "WREN"), [("Sorrel", 6, "2024-02-02", "100", "0")], "WREN cost used up")
check(("Sorrel", "WREN", 6, 5, "2024-02-02", "2024-06-03", "0", "200", "0", "200") in gains(led),
      "the excess is a realized gain")
before = ledger_digest(led.path)
again = led.fails("import", "actions", actions)
check("already a return-of-capital of WREN on that day" in again, f"a second import: {again}")
equal(ledger_digest(led.path), before, "a refused import changes nothing")

# --- stock dividend ---------------------------------------------------------------------------
# Rowan: 100 RAIL for 1000 (lot 7); 0.1 new per unit -> 110 units, cost 1000, date kept. Selling
# 10 at 11 takes cost 1000 x 10 / 110 = 90.91: gain 19.09.
led.ok("record", "buy", "--date", "2024-02-05", "--account", "Rowan", "--symbol", "RAIL",
       "--quantity", "100", "--price", "10")
led.ok("record", "stock-dividend", "--date", "2024-05-01", "--symbol", "RAIL", "--ratio", "0.1")
equal(lots(led, "RAIL"), [("Rowan", 7, "2024-02-05", "110", "1000")], "RAIL after the dividend")
led.ok("record", "sell", "--date", "2024-06-03", "--account", "Rowan", "--symbol", "RAIL",
       "--quantity", "10", "--price", "11")
check(("Rowan", "RAIL", 7, None, "2024-02-05", "2024-06-03", "10", "110", "90.91", "19.09")
      in gains(led), "a sale after the stock dividend")

# --- delisting, voided and recorded again -------------------------------------------------------
# Rowan holds 12 PLOV (cost 960). Delisted at 0.35: proceeds 4.20, gain -955.80; the position is
# gone from holdings and lots.
wrong = led.ok("record", "delisting", "--date", "2024-10-01", "--symbol", "PLOV", "--cash", "3.5")
equal(wrong, "action 7 posted: delisting of PLOV on 2024-10-01\n", "delisting")
equal(led.ok("action", "void", "7", "--reason", "final amount mistyped"),
      "void 8 recorded: corporate action 7 is out of the books\n", "void of an action")
equal(lots(led, "PLOV"), [("Rowan", 3, "2024-01-03", "12", "960")], "PLOV back after the void")
led.ok("record", "delisting", "--date", "2024-10-01", "--symbol", "PLOV", "--cash", "0.35")
equal(lots(led, "PLOV"), [], "PLOV gone")
check(("Rowan", "PLOV", 3, 9, "2024-01-03", "2024-10-01", "12", "4.2", "960", "-955.8")
      in gains(led), "the delisting disposes of the lot")

# --- cash from every action, and the listings ------------------------------------------------
# Rowan: 50000 - 1000 + 42.50 - 4500 + 6 - 1000 + 110 + 4.20 = 43662.70
# Sorrel: 50000 - 3000 + 800 - 500 + 300 + 400 = 48000
equal(cash(led, "Rowan"), "43662.7", "Rowan's cash")
equal(cash(led, "Sorrel"), "48000", "Sorrel's cash")
listing = led.json("action", "list")["actions"]
equal([(a["id"], a["action"], a["symbol"], a["voided_by"]) for a in listing],
      [(1, "split", "PLOV", None), (4, "return_of_capital", "WREN", None),
       (3, "spinoff", "GULL", None), (6, "stock_dividend", "RAIL", None),
       (5, "return_of_capital", "WREN", None), (2, "merger", "TERN", None),
       (7, "delisting", "PLOV", 8), (8, "void", "PLOV", None), (9, "delisting", "PLOV", None)],
      "action list, by date")
history = led.ok("history")
check("Corporate actions:" in history and "[void by 8]" in history, "history lists the actions")
# --- a symbol change: the old symbol still resolves in an import, with a note -------------------
led.ok("security", "change", "RAIL", "--symbol", "RLFY", "--date", "2024-07-01")
trades = os.path.join(led.dir.name, "trades.csv")
with open(trades, "w") as f:
    f.write("date,account,kind,symbol,quantity,price\n2024-07-02,Rowan,sell,RAIL,10,12\n")
out = led.ok("import", "transactions", trades)
equal(out.splitlines()[1], f"note: {trades}:2: 'RAIL' is a former symbol of 'RLFY'; booked to it",
      "the import's note")
equal(lots(led, "RLFY"), [("Rowan", 7, "2024-02-05", "90", "818.18")], "sold from the same lot")
check(" RAIL " in led.ok("history", "--from", "2024-06-03", "--to", "2024-06-03"),
      "history shows the symbol of the day")
verified(led)
# ...and in market imports: closes and distributions under the old symbol are the security's,
# with one note per symbol however many rows use it.
closes = os.path.join(led.dir.name, "closes.csv")
with open(closes, "w") as f:
    f.write("date,symbol,close\n2024-07-01,RAIL,12.5\n2024-07-02,RAIL,12.75\n")
out = led.ok("import", "prices", closes)
equal(out.splitlines()[1:],
      [f"note: {closes}:2: 'RAIL' is a former symbol of 'RLFY'; booked to it"],
      "the market import's note, once")
check(f"2024-07-02,RLFY,12.75" in led.ok("export", "prices"), "the close is RLFY's")
payouts = os.path.join(led.dir.name, "payouts.csv")
with open(payouts, "w") as f:
    f.write("ex_date,symbol,per_share\n2024-07-03,RAIL,0.1\n")
out = led.ok("import", "distributions", payouts)
check(f"'RAIL' is a former symbol of 'RLFY'" in out, out)
check("2024-07-03,2024-07-03,RLFY,0.1" in led.ok("export", "distributions"),
      "the distribution is RLFY's")

# --- the actions in force export in the layout `import actions` reads ---------------------------
# (the voided delisting and its void are left out; RAIL is exported under its new symbol; the
# merger's cost share is the one derived on its day)
equal(led.ok("export", "actions"),
      "date,symbol,action,into,ratio,cash,cost_percent,cash_in_lieu,note\n"
      "2024-03-01,PLOV,split,,0.1,,,85,\n"
      "2024-03-04,WREN,return_of_capital,,,3,,,first\n"
      "2024-04-01,GULL,spinoff,KITE,0.25,,20,12,\n"
      "2024-05-01,RLFY,stock_dividend,,0.1,,,,\n"
      "2024-06-03,WREN,return_of_capital,,,4,,,second\n"
      "2024-07-01,TERN,merger,SKUA,0.5,4,71.428571,,\n"
      "2024-10-01,PLOV,delisting,,,0.35,,,\n", "keel export actions")
exported = led.json("export", "actions")
equal([(a["date"], a["symbol"], a["action"]) for a in exported][-2:],
      [("2024-07-01", "TERN", "merger"), ("2024-10-01", "PLOV", "delisting")],
      "the JSON form, same rows")
equal(exported[-2].get("cost_percent"), "71.428571", "JSON: the merger's cost share")

# The year-end statement's pieces (realized gains from the actions, the change in unrealized
# gain, the cash they paid) add up to its closing value: the value series counts the units each
# action hands out or takes away (it once kept the units from before the action).
kite = os.path.join(led.dir.name, "kite.csv")
with open(kite, "w") as f:
    f.write("date,symbol,close\n2024-12-31,KITE,30\n")
led.ok("import", "prices", kite)
statement = led.ok("statement", "--year", "2024")
check("Check: the pieces add up to the closing value exactly." in statement, statement[:2000])
print("corporate actions: every kind recorded, imported, voided and verified")
