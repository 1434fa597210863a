"""Importing and exporting the ledger itself: accounts and transactions.

Round trip (export, then import into an empty ledger, gives identical holdings,
lots and gains), exactly-once re-imports, all-or-nothing refusals with every
error listed, and the invented broker layout in examples/import.
"""
import os
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, SOURCE, check, equal  # noqa: E402

a = Ledger()
a.ok("account", "add", "Alder Taxable", "--currency", "EUR")
a.ok("account", "add", "Alder Pension", "--currency", "EUR", "--basis", "specific")
for sym in ("QRX", "VLM"):
    a.ok("security", "add", sym, "--name", f"{sym} invented", "--kind", "stock", "--currency", "EUR")
T, P = "Alder Taxable", "Alder Pension"
a.ok("record", "deposit", "--date", "2024-01-02", "--account", T, "--amount", "50000")
a.ok("record", "buy", "--date", "2024-01-03", "--account", T, "--symbol", "QRX", "--quantity", "30",
     "--price", "101.25", "--fee", "3.5", "--note", "first, with a comma")
a.ok("record", "buy", "--date", "2024-02-03", "--account", T, "--symbol", "QRX", "--quantity", "20",
     "--price", "99")
a.ok("record", "transfer_out", "--date", "2024-03-01", "--account", T, "--to-account", P,
     "--symbol", "QRX", "--quantity", "25")
lots = a.json("lots", "--account", P)
a.ok("record", "sell", "--date", "2024-04-01", "--account", P, "--symbol", "QRX", "--quantity", "5",
     "--price", "120", "--lots", f"{lots[-1]['lot']}:5")
a.ok("record", "dividend", "--date", "2024-05-01", "--account", T, "--symbol", "QRX", "--amount", "25",
     "--ref", "div-1")
a.ok("record", "interest", "--date", "2024-05-02", "--account", T, "--amount", "7")
wrong = a.json("history")[-1]["id"]
a.ok("void", str(wrong), "--reason", "not ours")

d = a.dir.name
for what in ("accounts", "securities", "transactions"):
    a.ok("export", what, "--out", os.path.join(d, f"{what}.csv"))

b = Ledger()
for what in ("accounts", "securities", "transactions"):
    b.ok("import", what, os.path.join(d, f"{what}.csv"))
for report in (("holdings", "--as-of", "2024-12-31"), ("lots", "--as-of", "2024-12-31"),
               ("gains",)):
    equal(b.json(*report), a.json(*report), f"{report[0]} after the round trip")
equal(b.ok("export", "transactions"), a.ok("export", "transactions"), "transactions export again")

# Exactly once: the same file again books nothing; so does a file overlapping it.
out = b.ok("import", "transactions", os.path.join(d, "transactions.csv"))
check("added 0," in out and "already booked" in out, out)
out = a.ok("import", "transactions", os.path.join(d, "transactions.csv"))
check("added 0," in out, f"re-import into the original ledger booked rows: {out}")

# All or nothing: every error listed by line and column, nothing written.
bad = os.path.join(d, "bad.csv")
with open(bad, "w", encoding="utf-8", newline="") as f:
    f.write("date,account,kind,symbol,quantity,price,amount\r\n"
            "2024-06-01,Alder Taxable,deposit,,,,100\r\n"
            "2024-06-31,Alder Taxable,deposit,,,,100\r\n"
            "2024-06-02,Alder Taxable,buy,QRX,1,abc,\r\n"
            "2024-06-03,Alder Taxable,swap,,,,1\r\n")
before = b.ok("export", "transactions")
err = b.fails("import", "transactions", bad)
expected = [f"{bad}:3: column 'date': 2024-06-31 is not a day of the calendar",
            f"{bad}:4: column 'price': 'abc' is not a decimal number: expected digits",
            f"{bad}:5: column 'kind': unknown transaction kind 'swap'; expected one of: deposit, "
            "withdrawal, buy, sell, dividend, interest, tax, fee, transfer_in, transfer_out",
            f"keel: error: {bad}: 3 errors; nothing was changed"]
equal(err.splitlines(), expected, "error list")
oversell = os.path.join(d, "oversell.csv")
with open(oversell, "w", encoding="utf-8") as f:
    f.write("date,account,kind,symbol,quantity,price\n2024-06-05,Alder Taxable,sell,QRX,26,100\n")
err = b.fails("import", "transactions", oversell)
equal(err.splitlines()[0], f"{oversell}:2: sell on 2024-06-05 in 'Alder Taxable': cannot take 26 "
      "units; only 25 held", "oversell names the line")
equal(b.ok("export", "transactions"), before, "ledger unchanged after refused imports")

# The invented broker's own layout, read through its mapping file.
c = Ledger()
c.ok("account", "add", "Brokerage")
for sym in ("QRX", "VLM"):
    c.ok("security", "add", sym, "--name", f"{sym} invented", "--kind", "stock")
c.ok("record", "deposit", "--date", "2024-01-02", "--account", "Brokerage", "--amount", "200000")
ex = os.path.join(SOURCE, "examples", "import")
out = c.ok("import", "transactions", os.path.join(ex, "broker-trades.csv"), "--map",
           os.path.join(ex, "broker-trades.toml"))
check("2 rows read; added 2" in out, out)  # the cancelled fill is skipped by the mapping
h = c.json("holdings", "--as-of", "2024-12-31")
equal([(p["symbol"], p["quantity"], p["cost_basis"]) for p in h["positions"]],
      [("QRX", "60", "74072.97")],  # 100 @ 1234.50 + 4.95 = 123454.95; 60/100 of it = 74072.97
      "broker layout holdings")
print("ledger intake: all checks passed")
