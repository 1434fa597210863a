"""Broker files as they come: the three invented layouts in examples/import
each book the same ledger as the same trades typed by hand (compared table by
table, leaving out what only says when and how a row arrived: ids, times,
refs, content keys and the import records); an OFX statement does too. A
changed line is refused, then booked as a correction; reconcile explains a
ledger with a dividend, a fee and a split left out, records a match, and the
period lock refuses until the period is reopened.
"""
import os
import sqlite3
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, SOURCE, check, equal  # noqa: E402

EX = os.path.join(SOURCE, "examples", "import")
B = "Brokerage"


def ex(name):
    return os.path.join(EX, name)


def new_ledger():
    led = Ledger()
    led.ok("account", "add", B, "--currency", "EUR")
    for sym, name in (("QRX", "Quarry Rex"), ("VLM", "Vellum Mills")):
        led.ok("security", "add", sym, "--name", name, "--kind", "stock", "--currency", "EUR")
    return led


def booked(led):
    """The ledger's content, without ids, times, refs, row hashes and import records."""
    con = sqlite3.connect(led.path)
    rows = con.execute(
        "SELECT a.name, t.date, t.kind, s.symbol, t.quantity, t.price, t.amount, t.fee, t.note, "
        "t.voids_id IS NOT NULL FROM txn t JOIN account a ON a.id = t.account_id LEFT JOIN "
        "security s ON s.id = t.security_id WHERE t.id NOT IN (SELECT voids_id FROM txn WHERE "
        "voids_id IS NOT NULL) AND t.kind <> 'void' ORDER BY t.date, t.kind, t.quantity, "
        "t.amount").fetchall()
    splits = con.execute("SELECT security_id, date, ratio FROM split ORDER BY 1, 2").fetchall()
    con.close()
    return rows, splits


def by_hand(kinds):
    led = new_ledger()
    rows = {
        "deposit": ("deposit", "--date", "2024-01-02", "--account", B, "--amount", "200000"),
        "buy": ("buy", "--date", "2024-01-08", "--account", B, "--symbol", "QRX", "--quantity",
                "100", "--price", "1234.5", "--fee", "4.95"),
        "sell": ("sell", "--date", "2024-01-15", "--account", B, "--symbol", "QRX", "--quantity",
                 "40", "--price", "1250", "--fee", "4.95"),
        "dividend": ("dividend", "--date", "2024-01-20", "--account", B, "--symbol", "QRX",
                     "--amount", "120"),
        "tax": ("tax", "--date", "2024-01-20", "--account", B, "--symbol", "QRX", "--amount", "18"),
        "fee": ("fee", "--date", "2024-01-25", "--account", B, "--symbol", "QRX", "--amount",
                "2.5"),
    }
    for k in kinds:
        led.ok("record", *rows[k])
    return led


ALL = ["deposit", "buy", "sell", "dividend", "tax", "fee"]

# --- one file per kind ---------------------------------------------------------
per_kind = new_ledger()
per_kind.ok("record", "deposit", "--date", "2024-01-02", "--account", B, "--amount", "200000")
per_kind.ok("import", "transactions", ex("broker-trades.csv"), "--map", ex("broker-trades.toml"))
per_kind.ok("import", "transactions", ex("broker-income.csv"), "--map", ex("broker-income.toml"))
per_kind.ok("import", "transactions", ex("broker-income.csv"), "--map", ex("broker-tax.toml"))
equal(booked(per_kind), booked(by_hand(["deposit", "buy", "sell", "dividend", "tax"])),
      "one file per kind books what was typed by hand")

# --- one mixed file, signed amounts ----------------------------------------------
mixed = new_ledger()
out = mixed.ok("import", "transactions", ex("mixed-signed.csv"), "--map", ex("mixed-signed.toml"))
equal(out.splitlines()[-1].split(": ", 1)[1],
      "6 rows read; added 6, 0 already booked; skipped 2 (Sweep 1, Journal 1)",
      "the summary counts skipped rows per action")
equal(booked(mixed), booked(by_hand(ALL)), "the mixed signed file books what was typed by hand")
out = mixed.ok("import", "transactions", ex("mixed-signed.csv"), "--map", ex("mixed-signed.toml"))
check("added 0, 6 already booked" in out, f"a second import adds nothing: {out}")

# --- one mixed file, debit and credit columns, decimal comma ----------------------
dc = new_ledger()
dc.ok("import", "transactions", ex("debit-credit.csv"), "--map", ex("debit-credit.toml"))
equal(booked(dc), booked(by_hand(ALL)), "the debit/credit file books what was typed by hand")

# --- errors name the file's own column and value ------------------------------------
bad = new_ledger()
bad_csv = os.path.join(bad.dir.name, "broker.csv")
with open(ex("mixed-signed.csv")) as f:
    text = f.read().replace("Tax Withheld,QRX,,,,-18.00", "Tax Withheld,QRX,,,,18.00")
with open(bad_csv, "w") as f:
    f.write(text)
err = bad.fails("import", "transactions", bad_csv, "--map", ex("mixed-signed.toml"))
equal(err.splitlines()[0],
      f"{bad_csv}:6: column 'Net Amount' = 18.00: a tax row's amount is written negative in this "
      "file (the mapping's rule on line 45); a positive one is not a tax",
      "a figure of the wrong sign is named by the file's column and value")

# --- corrections -------------------------------------------------------------------------
changed = os.path.join(mixed.dir.name, "changed.csv")
with open(ex("mixed-signed.csv")) as f:
    text = f.read().replace("Sell,QRX,-40,1250.00,-4.95", "Sell,QRX,-40,1252.50,-5.95")
with open(changed, "w") as f:
    f.write(text)
before = booked(mixed)
err = mixed.fails("import", "transactions", changed, "--map", ex("mixed-signed.toml"))
equal(err.splitlines()[0],
      f"{changed}:4: column 'Reference' = M-3: already booked as transaction 3 with other content: "
      "price 1250 -> 1252.5, fee 4.95 -> 5.95; to book the change, import with --book-corrections "
      "(voids 3 and books this row)", "a changed line is refused with each difference")
equal(booked(mixed), before, "the refused correction changed nothing")
out = mixed.ok("import", "transactions", changed, "--map", ex("mixed-signed.toml"),
               "--book-corrections")
check("added 0, 5 already booked, corrected 1" in out, f"the correction is booked: {out}")
con = sqlite3.connect(mixed.path)
roles = con.execute("SELECT role, count(*) FROM import_txn WHERE run_id = (SELECT max(id) FROM "
                    "import_run) GROUP BY role ORDER BY role").fetchall()
equal(roles, [("correction", 1), ("void", 1)], "the void and the new row are tied to the import")
equal(con.execute("SELECT voided_txn_id, ref FROM correction").fetchall(), [(3, "M-3")],
      "the correction keeps the reference")
con.close()
out = mixed.ok("import", "transactions", changed, "--map", ex("mixed-signed.toml"))
check("added 0, 6 already booked" in out, f"the corrected line is then booked: {out}")

# --- OFX --------------------------------------------------------------------------------
ofx = new_ledger()
out = ofx.ok("import", "transactions", ex("broker-statement.ofx"), "--account", B)
check("6 rows read; added 7, 0 already booked" in out, f"OFX import: {out}")
hand = by_hand(ALL)
hand.ok("record", "transfer_in", "--date", "2024-01-26", "--account", B, "--symbol", "VLM",
        "--quantity", "10", "--price", "98.1")
hand.ok("record", "fee", "--date", "2024-01-25", "--account", B, "--symbol", "QRX", "--amount",
        "0.01")  # replaced below: the OFX fee carries the statement's memo
ofx_rows, _ = booked(ofx)
hand_rows, _ = booked(hand)
equal([r[:8] for r in ofx_rows if r[2] != "fee"], [r[:8] for r in hand_rows if r[2] != "fee"],
      "the OFX statement books what was typed by hand")
equal([r[:9] for r in ofx_rows if r[2] == "fee"],
      [("Brokerage", "2024-01-25", "fee", "QRX", None, None, "2.5", "0", "Custody fee", 0)[:9]],
      "the OFX fee with its memo")
out = ofx.ok("import", "transactions", ex("broker-statement.ofx"), "--account", B)
check("added 0, 7 already booked" in out, f"an OFX statement imports exactly once: {out}")

# --- reconcile: a dividend, a fee and a split left out ----------------------------------
rec = new_ledger()
rec.ok("import", "transactions", ex("broker-statement.ofx"), "--account", B)
rec.ok("void", "3", "--reason", "left out")   # the dividend
rec.ok("void", "5", "--reason", "left out")   # the fee
code, out, err = rec.run("reconcile", ex("broker-statement.ofx"), "--account", B)
equal(code, 1, "reconcile exits non-zero on differences")
equal(out.splitlines()[2:], [
    "Brokerage QRX units: ledger 60, statement 120, difference 60",
    "  - a split of QRX with ratio 2 (2 new units per old unit) is not recorded",
    "Brokerage cash EUR: ledger 126522.1, statement 126639.6, difference 117.5",
    "  - together: transaction 3 (a dividend of 120 (QRX) on 2024-01-20) was voided; and "
    "transaction 5 (a fee of 2.5 (QRX) on 2024-01-25) was voided",
], "each difference with its explanation")
rec.ok("record", "split", "--symbol", "QRX", "--ratio", "2", "--date", "2024-01-29")
rec.ok("record", "dividend", "--date", "2024-01-20", "--account", B, "--symbol", "QRX",
       "--amount", "120")
rec.ok("record", "fee", "--date", "2024-01-25", "--account", B, "--symbol", "QRX", "--amount", "2.5")
out = rec.ok("reconcile", ex("broker-statement.ofx"), "--account", B)
check("matches: recorded as reconciliation 1" in out, f"a match is recorded: {out}")
con = sqlite3.connect(rec.path)
row = con.execute("SELECT day, file_name, length(file_sha256) FROM reconciliation").fetchall()
con.close()
equal(row, [("2024-01-31", "broker-statement.ofx", 64)], "the day, the file and its SHA-256")

# --- the period lock ----------------------------------------------------------------------
before = open(rec.path, "rb").read()
err = rec.fails("record", "fee", "--date", "2024-01-25", "--account", B, "--amount", "1")
equal(err, "keel: error: a fee dated 2024-01-25 would change 'Brokerage', which is reconciled "
      "through 2024-01-31; if the statement was wrong, reopen the period first: keel reopen "
      "--account 'Brokerage' --from 2024-01-25 --reason TEXT", "the lock refuses a posting")
err = rec.fails("void", "2", "--reason", "typo")
check("voiding transaction 2 (a sell dated 2024-01-15) would change 'Brokerage'" in err,
      f"the lock refuses a void: {err}")
rec.ok("reopen", "--account", B, "--from", "2024-01-25", "--reason", "late fee")
rec.ok("record", "fee", "--date", "2024-01-25", "--account", B, "--amount", "1")
out = rec.ok("verify")
check("reconciled: 'Brokerage' last on 2024-01-31 (reopened: locked through 2024-01-24)" in out,
      f"verify shows the reconciled day and the reopening: {out}")
con = sqlite3.connect(rec.path)
equal(con.execute("SELECT from_day, reason FROM period_reopening").fetchall(),
      [("2024-01-25", "late fee")], "the reopening is recorded")
con.close()
print("test_broker_files: ok")
