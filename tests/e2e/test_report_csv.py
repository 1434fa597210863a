"""--csv on the tabular reports: holdings, lots, gains, history, imports.

Each is read back with Python's csv module (an RFC 4180 reader that is not keel's) and must
hold the same rows and exact figures as the report's --json, under the JSON member names; a
cell a spreadsheet would run as a formula carries the export guard's apostrophe; a name with a
comma and a quote is quoted as RFC 4180 section 2 asks.
"""
import csv
import io
import os
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, check, equal  # noqa: E402

led = Ledger(currency="EUR")
work = led.dir.name
A = 'Corvin "Main", joint'
led.ok("account", "add", A)
led.ok("security", "add", "ORLQ", "--name", "Orlique Textiles", "--kind", "stock")
led.ok("record", "deposit", "--date", "2024-01-02", "--account", A, "--amount", "10000",
       "--note", "=HYPERLINK(\"http://example.invalid\")")
led.ok("record", "buy", "--date", "2024-01-03", "--account", A, "--symbol", "ORLQ", "--quantity",
       "30", "--price", "41.17", "--fee", "1.05", "--ref", "+A17")
led.ok("record", "sell", "--date", "2024-05-06", "--account", A, "--symbol", "ORLQ", "--quantity",
       "10", "--price", "44.3", "--fee", "0.95")
led.ok("record", "deposit", "--date", "2024-05-07", "--account", A, "--amount", "5")
led.ok("void", "4", "--reason", "typed by mistake")
with open(os.path.join(work, "prices.csv"), "w") as f:
    f.write("date,symbol,close\n2024-06-28,ORLQ,44.2\n")
led.ok("import", "prices", os.path.join(work, "prices.csv"), "--quiet")


def rows(*args):
    text = led.ok(*args, "--csv")
    check("\r" not in text and text.endswith("\n"), f"{args}: LF line ends")
    return list(csv.DictReader(io.StringIO(text, newline="")))


def json_rows(doc, member=None):
    return doc[member] if member else doc


# holdings: positions, then cash, with the JSON's names and exact figures.
h = rows("holdings", "--as-of", "2024-06-30")
hj = led.json("holdings", "--as-of", "2024-06-30")
equal(list(h[0]), ["account", "symbol", "quantity", "cost_basis", "price", "price_is_close",
                   "market_value", "unrealized_gain", "currency"], "holdings CSV headings")
p = hj["positions"][0]
equal(h[0], {"account": A, "symbol": "ORLQ", "quantity": p["quantity"],
             "cost_basis": p["cost_basis"], "price": p["price"], "price_is_close": "yes",
             "market_value": p["market_value"], "unrealized_gain": p["unrealized_gain"],
             "currency": ""},
      "holdings CSV position row against --json")
equal((h[1]["account"], h[1]["symbol"], h[1]["market_value"]),
      (A, "", hj["cash"][0]["amount"]), "holdings CSV cash row")
equal(len(h), 2, "no total row")

lots = rows("lots", "--as-of", "2024-06-30")
lj = led.json("lots", "--as-of", "2024-06-30")["lots"]
equal([{k: str(v) for k, v in x.items() if k != "schema"} for x in lj], lots,
      "lots CSV equals --json")

gains = rows("gains", "--year", "2024")
gj = led.json("gains", "--year", "2024")["gains"]
# The CSV has a column for the corporate action that disposed of a lot; a sale leaves it empty.
equal([{k: str(v) for k, v in x.items()} for x in gj],
      [{k: v for k, v in g.items() if (k, v) != ("action", "")} for g in gains],
      "gains CSV equals --json")
equal(gains[0]["gain"], "30", "gain 442.05 - 412.05: 10 x 44.3 - 0.95 less 10/30 of "
      "30 x 41.17 + 1.05 (by hand)")
equal(gains[0]["proceeds"], "442.05", "proceeds 10 x 44.3 - 0.95 (by hand)")

hist = rows("history")
hjs = led.json("history")["transactions"]
equal([x["id"] for x in hist], [str(x["id"]) for x in hjs], "history CSV rows")
equal(hist[0]["note"], "'=HYPERLINK(\"http://example.invalid\")",
      "a note that is a formula gets the guard's apostrophe")
equal(hist[1]["ref"], "'+A17", "a ref starting with + is guarded too")
equal(hist[1]["quantity"], "30", "numbers stay numbers")
equal([x["voided"] for x in hist], ["no", "no", "no", "yes", "no"], "the voided row is marked")
equal(hist[4]["voids"], "4", "the void names the row it voids")

runs = rows("imports")
ij = led.json("imports")["imports"]
equal([{k: str(v) for k, v in x.items()} for x in ij], runs, "imports CSV equals --json")

raw = led.ok("lots", "--as-of", "2024-06-30", "--csv").splitlines()[1]
check(raw.startswith('"Corvin ""Main"", joint",ORLQ,'),
      f"a field with a comma and quotes is quoted, quotes doubled (RFC 4180 2.6, 2.7): {raw}")
print("ok")
