"""The ledger's own currency, and reports that never add amounts of two currencies.

No account or security silently becomes USD; the ledger's currency is the one given to `keel
init --currency`, else the first account's; accounts and securities added without --currency
take it. Holdings, returns and the statement of accounts that keep different currencies are in
the ledger's own currency (or --currency), converted at stored rates: without a rate they stop,
naming the pair and the day.
Refusals change nothing (SHA-256 of every table's rows before and after).
"""
import hashlib
import os
import sqlite3
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import SOURCE, Ledger, check, equal  # noqa: E402

# The newest schema version: the highest migration number.
SCHEMA = max(int(f[:4]) for f in os.listdir(os.path.join(SOURCE, "migrations")) if f.endswith(".sql"))


def digest(path):
    con = sqlite3.connect(f"file:{path}?mode=ro", uri=True)
    h = hashlib.sha256()
    # close_pack is derived from price (closes packed again): left out.
    for (name,) in con.execute("SELECT name FROM sqlite_master WHERE type = 'table' "
                               "AND name <> 'close_pack' ORDER BY name"):
        for row in con.execute(f'SELECT * FROM "{name}" ORDER BY 1'):
            h.update(repr((name, row)).encode())
    con.close()
    return h.hexdigest()


def refused(led, args, message):
    before = digest(led.path)
    equal(led.fails(*args), message, " ".join(args))
    equal(digest(led.path), before, f"{' '.join(args)} changed the ledger")


# No currency at init: the first account gives one; until then nothing defaults to USD.
led = Ledger(currency=None)
equal(led.ok("init"), f"ledger ready at {led.path} (schema version {SCHEMA}, currency: the first "
      "account's)\n", "init without a currency")
NO_CURRENCY = ("this ledger has no currency yet; give --currency (such as --currency EUR), or "
               "record one for the ledger with 'keel init --currency CODE'")
refused(led, ["account", "add", "Main"], f"keel: error: account add: {NO_CURRENCY}")
refused(led, ["security", "add", "ZQA", "--name", "Zeqa Alloys", "--kind", "stock"],
        f"keel: error: security add: {NO_CURRENCY}")
equal(led.ok("account", "add", "Main", "--currency", "eur"), "account 1 'Main' added (EUR, fifo)\n",
      "the first account")
equal(led.ok("init"), f"ledger ready at {led.path} (schema version {SCHEMA}, currency EUR)\n",
      "the first account's currency became the ledger's")
equal(led.ok("account", "add", "Second"), "account 2 'Second' added (EUR, fifo)\n",
      "an account without --currency takes the ledger's")
led.ok("security", "add", "ZQA", "--name", "Zeqa Alloys", "--kind", "stock")
equal([s["currency"] for s in led.json("security", "list")["securities"]], ["EUR"], "a security takes it too")
refused(led, ["init", "--currency", "USD"],
        "keel: error: --currency: the ledger's currency is EUR; it is set once and never changed "
        "(keel does not convert amounts already booked)")

# Accounts in two currencies: the household's holdings and returns are in euros, the ledger's
# own currency, and need a rate; so does the statement.
led.ok("account", "add", "Dollar", "--currency", "USD")
led.ok("record", "deposit", "--date", "2024-01-02", "--account", "Main", "--amount", "100")
led.ok("record", "deposit", "--date", "2024-01-02", "--account", "Dollar", "--amount", "100")
NO_RATE = ("no exchange rate for EUR/USD on or before 2024-12-31 (nor for USD/EUR, nor through a "
           "third currency); import one with 'keel import fx FILE.csv'")
refused(led, ["holdings", "--as-of", "2024-12-31"], f"keel: error: holdings: cash in USD: {NO_RATE}")
refused(led, ["returns", "--from", "2024-01-02", "--to", "2024-12-31"],
        f"keel: error: {NO_RATE.replace('2024-12-31', '2024-01-02')}")
refused(led, ["statement", "--year", "2024"],
        f"keel: error: {NO_RATE.replace('2024-12-31', '2024-01-02')}")
equal(led.json("holdings", "--as-of", "2024-12-31", "--account", "Dollar")["total_value"], "100",
      "one account at a time")
rates = os.path.join(led.dir.name, "rates.csv")
with open(rates, "w") as f:
    f.write("date,base,quote,rate\n2024-01-02,EUR,USD,1.25\n")
led.ok("import", "fx", rates, "--quiet")
# 100 EUR + 100 USD / 1.25 = 180 EUR (by hand); in dollars 125 + 100 = 225 USD.
equal(led.json("holdings", "--as-of", "2024-12-31")["total_value"], "180", "the household in EUR")
equal(led.json("holdings", "--as-of", "2024-12-31", "--currency", "USD")["total_value"], "225",
      "the household in USD")
equal(led.json("returns", "--from", "2024-01-02", "--to", "2024-12-31")["closing_value"], "180",
      "the household's returns in EUR")
print("currency: no silent USD; the first account's currency is the ledger's; a household in two "
      "currencies reports in the ledger's, converted")
