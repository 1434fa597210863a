"""The read-only views for analysts (docs/schema.md), read with the sqlite3 shell and pandas.

posted_transactions: rows in force only (void rows and the rows they cancel left out, a void
of a void reinstates its row), with names and a signed cash effect whose sum per account is
the cash `keel holdings` shows. closes: prices with symbols. point_in_time_figures: each value
with the day it became known and the day a restatement replaced it. Views accept no writes.
Outside checks: the sqlite3 shell (Debian's sqlite3) and pandas.read_sql (python3-pandas).
"""
import os
import sqlite3
import subprocess
import sys
from decimal import Decimal

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, check, equal  # noqa: E402

led = Ledger(currency="EUR")
work = led.dir.name
led.ok("account", "add", "Vessa Main")
led.ok("account", "add", "Vessa Pension")
led.ok("security", "add", "ORLQ", "--name", "Orlique Textiles", "--kind", "stock")
led.ok("security", "add", "BRNV", "--name", "Brenvaal Shipping", "--kind", "stock")
led.ok("record", "deposit", "--date", "2024-01-02", "--account", "Vessa Main", "--amount",
       "10000")                                                                    # 1
led.ok("record", "buy", "--date", "2024-01-03", "--account", "Vessa Main", "--symbol", "ORLQ",
       "--quantity", "30", "--price", "41.17", "--fee", "1.05")                     # 2
led.ok("record", "sell", "--date", "2024-02-05", "--account", "Vessa Main", "--symbol", "ORLQ",
       "--quantity", "10", "--price", "44.3", "--fee", "0.95")                      # 3
led.ok("record", "dividend", "--date", "2024-02-20", "--account", "Vessa Main", "--symbol",
       "ORLQ", "--amount", "6.4")                                                   # 4
led.ok("record", "fee", "--date", "2024-02-28", "--account", "Vessa Main", "--amount", "2.5")  # 5
led.ok("record", "deposit", "--date", "2024-03-01", "--account", "Vessa Main", "--amount",
       "999", "--note", "typed twice")                                              # 6
led.ok("void", "6", "--reason", "entered twice")                                    # 7
led.ok("record", "withdrawal", "--date", "2024-03-04", "--account", "Vessa Main", "--amount",
       "120")                                                                       # 8
led.ok("void", "8", "--reason", "wrong account")                                    # 9
led.ok("void", "9", "--reason", "it was right after all")                          # 10
led.ok("record", "transfer_out", "--date", "2024-03-10", "--account", "Vessa Main", "--amount",
       "500", "--to-account", "Vessa Pension")                                      # 11, 12

with open(os.path.join(work, "prices.csv"), "w") as f:
    f.write("date,symbol,close\n2024-01-03,ORLQ,41.2\n2024-01-03,BRNV,7.015\n")
led.ok("import", "prices", os.path.join(work, "prices.csv"), "--quiet")
with open(os.path.join(work, "metrics.csv"), "w") as f:
    f.write("date,symbol,metric,value,known_on\n"
            "2023-12-31,ORLQ,pe,14.2,2024-02-10\n"
            "2023-12-31,ORLQ,pe,15.05,2024-04-02\n"
            "2023-12-31,BRNV,pe,9.8,2024-02-12\n")
led.ok("import", "metrics", os.path.join(work, "metrics.csv"), "--quiet")


def shell(sql):
    p = subprocess.run(["sqlite3", "-readonly", "-header", "-separator", "|", led.path, sql],
                       capture_output=True, text=True, timeout=60)
    return p.returncode, p.stdout, p.stderr


# The sqlite3 shell: rows in force, names, exact text figures, signed cash effect.
code, out, err = shell("SELECT id, date, account, kind, symbol, quantity, price, amount, fee, "
                       "round(cash_effect, 6) AS cash FROM posted_transactions ORDER BY id")
equal((code, err), (0, ""), "sqlite3 shell on posted_transactions")
lines = out.splitlines()
equal(lines[0], "id|date|account|kind|symbol|quantity|price|amount|fee|cash", "view columns")
equal([line.split("|")[0] for line in lines[1:]], ["1", "2", "3", "4", "5", "8", "11", "12"],
      "void rows and the row a void cancels are left out; a void of a void reinstates its row")
equal(lines[2], "2|2024-01-03|Vessa Main|buy|ORLQ|30|41.17||1.05|-1236.15",
      "a buy costs quantity x price + fee (30 x 41.17 + 1.05, by hand)")
equal(lines[3], "3|2024-02-05|Vessa Main|sell|ORLQ|10|44.3||0.95|442.05",
      "a sell brings quantity x price - fee (10 x 44.3 - 0.95, by hand)")
equal(lines[5], "5|2024-02-28|Vessa Main|fee||||2.5|0|-2.5", "a fee takes its amount")
equal(lines[6], "8|2024-03-04|Vessa Main|withdrawal||||120|0|-120.0",
      "the withdrawal whose void was voided is back")

# The cash effects add up to the cash keel shows for each account.
code, out, err = shell("SELECT account, round(sum(cash_effect), 6) FROM posted_transactions "
                       "GROUP BY account ORDER BY account")
equal(code, 0, err)
by_view = {row.split("|")[0]: Decimal(row.split("|")[1]) for row in out.splitlines()[1:]}
holdings = led.json("holdings", "--as-of", "2024-12-31")
by_keel = {c["account"]: Decimal(c["amount"]) for c in holdings["cash"]}
equal(by_view, by_keel, "sum of cash_effect per account against keel holdings' cash")

code, out, err = shell("SELECT * FROM closes ORDER BY date, symbol")
equal(out, "date|symbol|security_name|currency|close\n"
      "2024-01-03|BRNV|Brenvaal Shipping|EUR|7.015\n"
      "2024-01-03|ORLQ|Orlique Textiles|EUR|41.2\n", "closes through the sqlite3 shell")

code, out, err = shell("SELECT * FROM point_in_time_figures ORDER BY symbol, known_on")
equal(out, "symbol|figure|period_end|known_on|replaced_on|value\n"
      "BRNV|pe|2023-12-31|2024-02-12||9.8\n"
      "ORLQ|pe|2023-12-31|2024-02-10|2024-04-02|14.2\n"
      "ORLQ|pe|2023-12-31|2024-04-02||15.05\n", "figures with the day a restatement replaced them")
code, out, err = shell("SELECT value FROM point_in_time_figures WHERE symbol = 'ORLQ' AND "
                       "known_on <= '2024-03-01' AND (replaced_on IS NULL OR replaced_on > "
                       "'2024-03-01')")
equal(out, "value\n14.2\n", "the figure known on a day before the restatement")

# The views refuse writes, even on a connection that may write.
con = sqlite3.connect(led.path)
for sql in ["INSERT INTO posted_transactions (id) VALUES (99)", "DELETE FROM closes",
            "UPDATE point_in_time_figures SET value = '1'"]:
    try:
        con.execute(sql)
        raise AssertionError(f"{sql}: a view accepted a write")
    except sqlite3.OperationalError as e:
        check("cannot modify" in str(e), f"{sql}: {e}")
con.close()

# pandas.read_sql reads each view; its figures agree with the shell's.
import pandas  # noqa: E402

con = sqlite3.connect(f"file:{led.path}?mode=ro", uri=True)
frame = pandas.read_sql("SELECT * FROM posted_transactions ORDER BY id", con)
equal(list(frame.columns), ["id", "date", "account", "account_currency", "kind", "symbol",
                            "security_name", "quantity", "price", "amount", "fee", "cash_effect",
                            "ref", "note", "link_id", "currency", "rate", "to_currency"],
      "posted_transactions columns in pandas")
equal(list(frame["id"]), [1, 2, 3, 4, 5, 8, 11, 12], "posted_transactions rows in pandas")
sums = frame.groupby("account")["cash_effect"].sum().round(6)
equal({k: Decimal(repr(v)) for k, v in sums.items()}, by_keel, "pandas sums against keel's cash")
equal(frame.loc[frame["id"] == 2, "security_name"].item(), "Orlique Textiles", "security name")
equal(frame.loc[frame["id"] == 12, "link_id"].item(), 11, "a transfer's pair")
closes = pandas.read_sql("SELECT * FROM closes", con)
equal(len(closes), 2, "closes in pandas")
figures = pandas.read_sql("SELECT * FROM point_in_time_figures", con)
equal(sorted(figures["value"]), ["14.2", "15.05", "9.8"], "figures stay exact text in pandas")
con.close()
# Every SQL example of docs/schema.md runs on the ledger with the sqlite3 shell.
import re  # noqa: E402

from keel_cli import SOURCE  # noqa: E402

with open(os.path.join(SOURCE, "docs", "schema.md")) as f:
    examples = re.findall(r"```sql\n(.*?)```", f.read(), re.S)
check(len(examples) == 3, f"docs/schema.md has its three SQL examples ({len(examples)})")
for sql in examples:
    code, out, err = shell(sql)
    equal((code, err), (0, ""), f"docs/schema.md example: {sql}")
    check(len(out.splitlines()) >= 2, f"docs/schema.md example returns rows: {sql}")
print("ok")
