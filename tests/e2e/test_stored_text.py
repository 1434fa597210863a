"""Text put into a ledger by other means than keel: reports keep working and verify says where.

keel refuses text that is not UTF-8 at every way in, but a ledger file can be written by
another program, or by hand with sqlite3. Such bytes must not crash a report: JSON output
replaces each ill-formed byte with U+FFFD (compared with Python's own decoder,
bytes.decode("utf-8", "replace"), which substitutes maximal subparts as the Unicode Standard's
chapter 3 recommends), terminal output shows them as \\xNN, and `keel verify` names the table,
row and column of each. Also: a file name that is not UTF-8 is stored as text keel can show.
"""
import json
import os
import sqlite3
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, check, equal  # noqa: E402

led = Ledger()
led.ok("account", "add", "Main", "--currency", "USD")
led.ok("security", "add", "ZQA", "--name", "Zeqa Alloys", "--kind", "stock", "--currency", "USD")
led.ok("record", "deposit", "--date", "2024-01-02", "--account", "Main", "--amount", "100")

NOTE = b"caf\xe9 \xf1\x80\x80 end"    # a lone Latin-1 byte, a truncated 4-byte sequence
NAME = b"Odd \xff\xfe account"
SEC = b"Zeqa \xc0\xaf Alloys"          # an overlong encoding of '/'
con = sqlite3.connect(led.path)
con.execute("INSERT INTO txn (account_id, date, kind, amount, fee, note, recorded_at) "
            "VALUES (1, '2024-01-03', 'deposit', '5', '0', CAST(? AS TEXT), 'x')", (NOTE,))
con.execute("INSERT INTO account (name, currency, created_at) VALUES (CAST(? AS TEXT), 'USD', 'x')",
            (NAME,))
con.execute("UPDATE security SET name = CAST(? AS TEXT) WHERE symbol = 'ZQA'", (SEC,))
con.commit()
con.close()


def decoded(b):
    return b.decode("utf-8", "replace")


def escaped(b):
    return "".join(chr(c) if c < 0x80 else f"\\x{c:02x}" for c in b)


# Every JSON report and export runs, prints valid JSON, and replaces as Python does.
hist = led.json("history")["transactions"]
equal([t["note"] for t in hist], ["", decoded(NOTE)], "history --json note")
exported = json.loads(led.ok("export", "transactions", "--json"))
equal([t.get("note") for t in exported], [None, decoded(NOTE)], "export transactions --json note")
names = sorted(a["name"] for a in led.json("account", "list")["accounts"])
equal(names, sorted(["Main", decoded(NAME)]), "account list --json names")
equal(sorted(a["name"] for a in json.loads(led.ok("export", "accounts", "--json"))),
      sorted(["Main", decoded(NAME)]), "export accounts --json names")
equal([s["name"] for s in led.json("security", "list")["securities"]], [decoded(SEC)], "security list --json")
equal([s["name"] for s in json.loads(led.ok("export", "securities", "--json"))], [decoded(SEC)],
      "export securities --json")
held = led.json("holdings", "--as-of", "2024-12-31")
equal(sorted(c["account"] for c in held["cash"]), sorted(["Main", decoded(NAME)]),
      "holdings --json accounts")

# The terminal shows the bytes escaped.
text = led.ok("history")
check(escaped(NOTE) in text, f"history shows {escaped(NOTE)!r}: {text}")

# verify names each cell, as warnings: the figures are sound.
code, out, err = led.run("verify")
equal(code, 0, f"verify exit status ({err})")
warnings = [line for line in out.splitlines() if line.startswith("warning: ")]
equal(warnings, [
    f"warning: table account, row id 2, column name: '{escaped(NAME)}' is not valid UTF-8",
    f"warning: table security, row id 1, column name: '{escaped(SEC)}' is not valid UTF-8",
    f"warning: table txn, row id 2, column note: '{escaped(NOTE)}' is not valid UTF-8",
], "verify warnings")

# A file whose name is not UTF-8 imports, and the ledger keeps its name as text keel can show.
clean = Ledger()
clean.ok("security", "add", "ZQA", "--name", "Zeqa Alloys", "--kind", "stock", "--currency", "USD")
odd_file = os.path.join(clean.dir.name.encode(), b"closes-\xff.csv")
with open(odd_file, "wb") as f:
    f.write(b"date,symbol,close\n2024-01-02,ZQA,5\n")
code, out, err = clean.run("import", "prices", os.fsdecode(odd_file))
equal(code, 0, f"import from a file named with byte 0xff ({err})")
code, out, err = clean.run("verify")
equal((code, [l for l in out.splitlines() if l.startswith("warning")]), (0, []),
      "verify of a ledger that imported a file named with byte 0xff")
check("closes-\\xff.csv" in clean.ok("imports"), "the import log shows the byte escaped")
print("text from outside keel: JSON reports replace it as Python does, verify names 3 cells")
