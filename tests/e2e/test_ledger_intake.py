"""Importing and exporting the ledger itself: accounts and transactions.

Round trip (export, then import into an empty ledger, gives identical holdings,
lots and gains), exactly-once re-imports, all-or-nothing refusals with every
error listed, and the invented broker layout in examples/import.
"""
import datetime
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
lots = a.json("lots", "--account", P)["lots"]
a.ok("record", "sell", "--date", "2024-04-01", "--account", P, "--symbol", "QRX", "--quantity", "5",
     "--price", "120", "--lots", f"{lots[-1]['lot']}:5")
a.ok("record", "dividend", "--date", "2024-05-01", "--account", T, "--symbol", "QRX", "--amount", "25",
     "--ref", "div-1")
a.ok("record", "interest", "--date", "2024-05-02", "--account", T, "--amount", "7")
wrong = a.json("history")["transactions"][-1]["id"]
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
            "withdrawal, buy, sell, dividend, interest, tax, fee, transfer_in, transfer_out, "
            "exchange",
            f"keel: error: {bad}: 3 errors; nothing was changed"]
equal(err.splitlines(), expected, "error list")
oversell = os.path.join(d, "oversell.csv")
with open(oversell, "w", encoding="utf-8") as f:
    f.write("date,account,kind,symbol,quantity,price\n2024-06-05,Alder Taxable,sell,QRX,26,100\n")
err = b.fails("import", "transactions", oversell)
equal(err.splitlines()[0], f"{oversell}:2: sell on 2024-06-05 in 'Alder Taxable': cannot take 26 "
      "units; only 25 held", "oversell names the line")
equal(b.ok("export", "transactions"), before, "ledger unchanged after refused imports")

# Void and put back: the void command shows the rows it takes out or puts back; a voided
# row stays booked for imports (the same line is not booked again), and voiding the void
# brings it back everywhere: holdings, history, export.
v = Ledger()
v.ok("account", "add", "Main", "--currency", "EUR")
one = os.path.join(v.dir.name, "one.csv")
with open(one, "w") as f:
    f.write("date,account,kind,amount,note\n2024-03-01,Main,deposit,40,march\n")
v.ok("import", "transactions", one)
cash = lambda: v.json("holdings", "--as-of", "2024-12-31")["cash"][0]["amount"]  # noqa: E731
equal(v.ok("void", "1", "--reason", "not ours"),
      "void entry 2 recorded; this is now out of the books:\n"
      "id  date        account  kind     symbol  quantity  price  amount  fee  ref  note\n"
      "-----------------------------------------------------------------------------------------\n"
      " 1  2024-03-01  Main     deposit                               40            [void] march\n"
      "To put it back, void 2.\n", "void output")
equal(cash(), "0", "cash after the void")
out = v.ok("import", "transactions", one)
check("added 0, 1 already booked" in out, f"a voided line is still booked: {out}")
equal(v.ok("void", "2", "--reason", "ours after all"),
      "void entry 3 recorded; this is back in the books:\n"
      "id  date        account  kind     symbol  quantity  price  amount  fee  ref  note\n"
      "----------------------------------------------------------------------------------\n"
      " 1  2024-03-01  Main     deposit                               40            march\n"
      "To take it out again, void 3.\n", "void of the void output")
equal(cash(), "40", "cash after putting the deposit back")
out = v.ok("import", "transactions", one)
check("added 0, 1 already booked" in out, f"a line put back is booked once: {out}")
equal([(t["id"], t["kind"], t["voided"], t["voids"]) for t in v.json("history")["transactions"]],
      [(1, "deposit", False, None), (2, "void", True, 1), (3, "void", False, 2)],
      "history keeps the deposit, its void and the void of the void")
check("2024-03-01,Main,deposit,,,,40,,,march" in v.ok("export", "transactions"),
      "the deposit put back is exported")
code, out, err = v.run("verify")
equal(code, 0, f"verify after void and put back: {err}")

# Dates after today (the local calendar day, as keel and Python both take it from TZ): a
# posting or an imported row is refused unless --allow-future-date; verify then warns.
fut = Ledger()
fut.ok("account", "add", "Main", "--currency", "EUR")
today = datetime.date.today()
tomorrow = (today + datetime.timedelta(days=1)).isoformat()
err = fut.fails("record", "deposit", "--date", tomorrow, "--account", "Main", "--amount", "1")
equal(err, f"keel: error: deposit: --date {tomorrow} is after today ({today.isoformat()}); give "
      "--allow-future-date to post it anyway", "tomorrow refused")
fut.ok("record", "deposit", "--date", today.isoformat(), "--account", "Main", "--amount", "1")
ahead = os.path.join(fut.dir.name, "ahead.csv")
with open(ahead, "w") as f:
    f.write(f"date,account,kind,amount\n{tomorrow},Main,deposit,2\n")
err = fut.fails("import", "transactions", ahead)
check(f"column 'date': {tomorrow} is after today" in err, err)
out = fut.ok("import", "transactions", ahead, "--allow-future-date")
check("added 1" in out, out)
code, out, err = fut.run("verify")
equal(code, 0, f"verify with a row after today: {err}")
check(f"warning: transaction 2 (deposit) is dated {tomorrow}, after today ({today.isoformat()})"
      in out, out)

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
