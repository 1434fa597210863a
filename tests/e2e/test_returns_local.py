"""Returns in each account's own currency (returns --local) beside the reporting currency.

An invented euro account holds one dollar stock bought before the period and nothing else: no
cash and no flows in the period. Reported in dollars, its returns must then obey
(1 + r_reporting) = (1 + r_local) * (1 + r_fx), where r_fx is the change of the stored euro-dollar
rate over the period. The identity follows from the definitions of the returns: with no flows,
the time-weighted and the money-weighted return of a period are both closing value over opening
value less one, and the value in the reporting currency is the value in the local currency times
the rate of the day, so the ratio of values in dollars is the ratio in euros times the ratio of
the rates. keel rounds a converted value once to the minor unit of its currency
(src/perf/ledger_series.h), so the closes are chosen to make the opening and closing values
whole cents in both currencies (1000 USD = 800 EUR, 1210 USD = 1100 EUR); the values between
cancel out of a period without flows. A second account, in dollars, shows the household's one row per account.
"""
import os
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, check, equal, write_csv_files  # noqa: E402

RATES = [("2025-01-02", "1.25"), ("2025-04-01", "1.18"), ("2025-09-01", "1.30"),
         ("2025-12-31", "1.10")]  # USD per EUR
CLOSES = [("2025-01-02", "HLX", "100"), ("2025-03-31", "HLX", "105"),
          ("2025-06-30", "HLX", "95"), ("2025-12-31", "HLX", "121")]
PERIOD = ("--from", "2025-01-03", "--to", "2025-12-31")

led = Ledger(currency="EUR")
led.ok("account", "add", "Depot")
led.ok("account", "add", "Dollar Cash", "--currency", "USD")
led.ok("security", "add", "HLX", "--name", "Helixor Tools", "--kind", "stock", "--currency", "USD")
files = write_csv_files(led.dir.name, (
    ("rates.csv", ["date", "base", "quote", "rate"], [(d, "EUR", "USD", r) for d, r in RATES]),
    ("closes.csv", ["date", "symbol", "close"], CLOSES)))
led.ok("import", "fx", files["rates.csv"], "--quiet")
led.ok("import", "prices", files["closes.csv"], "--quiet")
# 800 EUR buys 10 HLX at 100 USD at 1.25 USD per EUR: no cash is left over.
led.ok("record", "deposit", "--date", "2025-01-02", "--account", "Depot", "--amount", "800")
led.ok("record", "buy", "--date", "2025-01-02", "--account", "Depot", "--symbol", "HLX",
       "--quantity", "10", "--price", "100", "--rate", "1.25")
led.ok("record", "deposit", "--date", "2025-01-02", "--account", "Dollar Cash", "--amount", "500")

one = led.json("returns", *PERIOD, "--account", "Depot", "--currency", "USD", "--local")
equal((one["currency"], [(x["account"], x["currency"]) for x in one["local"]]),
      ("USD", [("Depot", "EUR")]), "one account: its own currency beside the reporting one")
local = one["local"][0]
r_fx = 1.10 / 1.25 - 1  # the stored EUR/USD rate, 2025-01-02 to 2025-12-31
for name in ("twr", "mwr_period"):
    r_rep, r_loc = one[name], local[name]
    check(abs((1 + r_rep) - (1 + r_loc) * (1 + r_fx)) < 1e-9,
          f"{name}: 1 + {r_rep} against (1 + {r_loc}) (1 + {r_fx})")
check(abs(one["twr"] - 0.21) < 1e-12, f"in USD: 1210 / 1000 - 1, {one['twr']}")
check(abs(local["twr"] - 0.375) < 1e-12, f"in EUR: 1100 / 800 - 1, {local['twr']}")

# The local figures are the account's own report, exactly.
own = led.json("returns", *PERIOD, "--account", "Depot", "--currency", "EUR")
for name in ("opening_value", "closing_value", "inflows", "outflows", "twr", "twr_annualized",
             "mwr_period", "mwr_annualized"):
    equal(local[name], own[name], f"local {name} is the report in EUR")

# The household: one row per account, each equal to that account's row alone.
home = led.json("returns", *PERIOD, "--currency", "USD", "--local")
equal([(x["account"], x["currency"]) for x in home["local"]],
      [("Depot", "EUR"), ("Dollar Cash", "USD")], "household: one row per account")
equal(home["local"][0], local, "household row of Depot is its own")
equal((home["local"][1]["opening_value"], home["local"][1]["twr"]), ("500", 0.0),
      "the dollar cash account neither gains nor loses in dollars")
check("local" not in led.json("returns", *PERIOD), "without --local the document has no local")

text = led.ok("returns", *PERIOD, "--currency", "USD", "--local")
check("In each account's own currency:\n" in text and "Dollar Cash" in text, text)
check(text.endswith("Past results do not predict future returns; these figures describe what "
                    "happened, not what will.\n"), text)
print(f"returns --local: identity holds to 1e-9 (r_usd {one['twr']:.9f}, r_eur "
      f"{local['twr']:.9f}, r_fx {r_fx:.9f}); local rows equal the accounts' own reports")
