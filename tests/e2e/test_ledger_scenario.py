"""End to end: an invented household's first year, driven through the keel binary.

Every expected figure below is worked out by hand in the comments.
"""
import sys
import os

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, equal, check  # noqa: E402

k = Ledger()
k.ok("account", "add", "Brightwater Taxable", "--currency", "EUR")
k.ok("account", "add", "Brightwater Pension", "--currency", "EUR", "--basis", "hifo")
k.ok("security", "add", "KESTR", "--name", "Kestrel Looms", "--kind", "stock", "--currency", "EUR")
k.ok("security", "add", "ORIOL", "--name", "Oriole Ferries", "--kind", "stock", "--currency", "EUR")

T, P = "Brightwater Taxable", "Brightwater Pension"
k.ok("record", "deposit", "--date", "2025-01-02", "--account", T, "--amount", "20000", "--ref", "dep-1")
# Lot A: 100 KESTR @ 50.00 + 10 fee -> cost 5010
k.ok("record", "buy", "--date", "2025-01-06", "--account", T, "--symbol", "KESTR",
     "--quantity", "100", "--price", "50", "--fee", "10")
# Lot B: 50 KESTR @ 62.50 + 7.50 fee -> cost 3132.50
k.ok("record", "buy", "--date", "2025-03-03", "--account", T, "--symbol", "KESTR",
     "--quantity", "50", "--price", "62.5", "--fee", "7.5")
# Lot C: 200 ORIOL @ 12.34 + 0 fee -> cost 2468
k.ok("record", "buy", "--date", "2025-03-03", "--account", T, "--symbol", "ORIOL",
     "--quantity", "200", "--price", "12.34")
# Dividend 1.20 x 150 = 180 gross, 27 withheld (15 %).
k.ok("record", "dividend", "--date", "2025-04-15", "--account", T, "--symbol", "KESTR", "--amount", "180")
k.ok("record", "tax", "--date", "2025-04-15", "--account", T, "--symbol", "KESTR", "--amount", "27")
# Two-for-one split of KESTR on 2025-06-02: lot A 200 units (cost 5010), lot B 100 (cost 3132.50).
k.ok("record", "split", "--date", "2025-06-02", "--symbol", "KESTR", "--ratio", "2")
# FIFO sell of 250 KESTR @ 40 with a 12 fee: proceeds 250 x 40 - 12 = 9988.
#   part 1: lot A, 200 units, cost 5010, proceeds 9988 x 200/250 = 7990.40, gain 2980.40
#   part 2: lot B,  50 units, cost 3132.50 x 50/100 = 1566.25,
#           proceeds 9988 - 7990.40 = 1997.60, gain 431.35
k.ok("record", "sell", "--date", "2025-09-10", "--account", T, "--symbol", "KESTR",
     "--quantity", "250", "--price", "40", "--fee", "12")
# Move 100 ORIOL (part of lot C, cost 2468 x 100/200 = 1234) to the pension account.
k.ok("record", "transfer_out", "--date", "2025-10-01", "--account", T, "--to-account", P,
     "--symbol", "ORIOL", "--quantity", "100")
k.ok("record", "fee", "--date", "2025-12-01", "--account", T, "--amount", "15")
# A mistaken interest line, then voided.
k.ok("record", "interest", "--date", "2025-12-15", "--account", T, "--amount", "999", "--ref", "int-x")
hist = k.json("history")["transactions"]
mistaken = [t["id"] for t in hist if t["ref"] == "int-x"][0]
k.ok("void", str(mistaken), "--reason", "posted to the wrong household")

# Cash in Taxable:
#  20000 - 5010 - 3132.50 - 2468 + 180 - 27 + 9988 - 15 = 19515.50
# Holdings at 2025-12-31 with no closes stored: valued at last trade prices.
#  KESTR: 50 units (rest of lot B), cost 1566.25, last trade 40 -> value 2000, gain 433.75
#  ORIOL in Taxable: 100 units, cost 1234, last trade 12.34 -> 1234, gain 0
#  ORIOL in Pension: 100 units, the carried cost 1234, ORIOL's last trade 12.34 -> 1234
h = k.json("holdings", "--as-of", "2025-12-31")
positions = {(p["account"], p["symbol"]): p for p in h["positions"]}
equal(positions[(T, "KESTR")]["quantity"], "50", "KESTR quantity")
equal(positions[(T, "KESTR")]["cost_basis"], "1566.25", "KESTR cost basis")
equal(positions[(T, "KESTR")]["market_value"], "2000", "KESTR value")
equal(positions[(T, "KESTR")]["unrealized_gain"], "433.75", "KESTR unrealized")
equal(positions[(T, "ORIOL")]["cost_basis"], "1234", "ORIOL cost in Taxable")
equal(positions[(P, "ORIOL")]["cost_basis"], "1234", "ORIOL cost carried to Pension")
equal(positions[(P, "ORIOL")]["quantity"], "100", "ORIOL quantity in Pension")
equal(positions[(P, "ORIOL")]["market_value"], "1234", "ORIOL value in Pension")
# Total: 19515.50 cash + 2000 + 1234 + 1234 = 23983.50
equal(h["total_value"], "23983.5", "total value")
cash = {c["account"]: c["amount"] for c in h["cash"]}
equal(cash[T], "19515.5", "Taxable cash")
equal(cash[P], "0", "Pension cash")

g = k.json("gains", "--year", "2025")
parts = [(x["lot"], x["quantity"], x["proceeds"], x["cost"], x["gain"], x["term"]) for x in g["gains"]]
equal(len(parts), 2, "number of realized parts")
equal(parts[0][1:], ("200", "7990.4", "5010", "2980.4", "short"), "first part (lot A)")
equal(parts[1][1:], ("50", "1997.6", "1566.25", "431.35", "short"), "second part (lot B)")
equal(g["total"], "3411.75", "total realized gain")

# Errors a person can make: each exits non-zero, says what is wrong, changes nothing.
before = k.ok("history", "--json")
err = k.fails("record", "sell", "--date", "2025-12-20", "--account", T, "--symbol", "KESTR",
              "--quantity", "51", "--price", "40")
equal(err, "keel: error: the new sell on 2025-12-20 in 'Brightwater Taxable': cannot take 51 units; only 50 held",
      "oversell message")
err = k.fails("record", "deposit", "--date", "2025-02-30", "--account", T, "--amount", "1")
equal(err, "keel: error: --date: '2025-02-30' is not a calendar date", "bad date message")
err = k.fails("record", "deposit", "--date", "2025-02-03", "--account", T, "--amount", "1,5")
equal(err, "keel: error: --amount: '1,5' is not a decimal number: unexpected character ','", "bad amount")
err = k.fails("record", "deposit", "--date", "2025-02-03", "--account", T, "--amount", "100", "--ref", "dep-1")
equal(err, "keel: error: reference 'dep-1' is already booked in account 'Brightwater Taxable'", "duplicate ref")
err = k.fails("record", "deposit", "--date", "2025-02-03", "--account", "Nobody", "--amount", "100")
check(err.startswith("keel: error: unknown account 'Nobody'"), err)
err = k.fails("void", str(mistaken), "--reason", "again")
check("already void" in err, err)
equal(k.ok("history", "--json"), before, "ledger unchanged after refused commands")

code, _, err = Ledger().run("record", "buy", "--symbol", "KESTR")  # --account missing: usage error
equal(code, 2, "usage errors exit 2")
print("ledger scenario: all checks passed")
