"""Reports in a currency of one's choosing (--currency) and a benchmark in another currency.

An invented euro account holds a dollar stock bought and partly sold at the broker's settlement
rates. Expected figures are worked out here with Python's decimal from the rows alone, by the
rules stated in src/ledger/holdings.h: a lot's cost in the security's own currency is its local
cost; values convert at the rate of the day asked. The benchmark's return in euros is recomputed
from its definition for an unhedged index in another currency (common practice, no outside
source): each close divided by that day's dollars-per-euro rate, then end over start less one.
"""
import os
import sys
from decimal import Decimal

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, check, equal, write_csv_files  # noqa: E402

RATES = [("2025-01-02", "1.25"), ("2025-06-02", "1.20"), ("2025-12-31", "1.10")]  # USD per EUR
CLOSES = [("2025-01-02", "ZIX", "1000"), ("2025-12-31", "ZIX", "1100"),
          ("2025-12-31", "HLX", "110")]

led = Ledger(currency="EUR")
led.ok("account", "add", "Depot")
led.ok("security", "add", "HLX", "--name", "Helixor Tools", "--kind", "stock", "--currency", "USD")
led.ok("security", "add", "ZIX", "--name", "Zephyr Index", "--kind", "index", "--currency", "USD")
files = write_csv_files(led.dir.name, (
    ("rates.csv", ["date", "base", "quote", "rate"], [(d, "EUR", "USD", r) for d, r in RATES]),
    ("closes.csv", ["date", "symbol", "close"], CLOSES)))
led.ok("import", "fx", files["rates.csv"], "--quiet")
led.ok("import", "prices", files["closes.csv"], "--quiet")
led.ok("record", "deposit", "--date", "2025-01-02", "--account", "Depot", "--amount", "10000")
led.ok("record", "buy", "--date", "2025-01-03", "--account", "Depot", "--symbol", "HLX",
       "--quantity", "10", "--price", "100", "--rate", "1.25")
led.ok("record", "sell", "--date", "2025-06-02", "--account", "Depot", "--symbol", "HLX",
       "--quantity", "4", "--price", "120", "--rate", "1.20")

# By hand: the buy cost 1000 USD = 800 EUR; the sale of 4 brought 480 USD = 400 EUR against a
# cost of 400 USD (320 EUR). Euro cash 10000 - 800 + 400 = 9600.
cash_eur = Decimal("10000") - Decimal("1000") / Decimal("1.25") + Decimal("480") / Decimal("1.20")
equal(cash_eur, Decimal("9600"), "euro cash by hand")
usd_at_end = Decimal("1.10")

# In dollars: 6 HLX at 110 (cost 600 USD) and the euros at 1.10.
h = led.json("holdings", "--as-of", "2025-12-31", "--currency", "USD")
equal([(p["symbol"], Decimal(p["cost_basis"]), Decimal(p["market_value"])) for p in h["positions"]],
      [("HLX", Decimal("600"), Decimal("660"))], "holdings in USD: the stock at its own cost")
equal(Decimal(h["total_value"]), Decimal("660") + cash_eur * usd_at_end, "holdings in USD: total")
text = led.ok("holdings", "--as-of", "2025-12-31", "--currency", "USD")
check(text.startswith("Holdings as of 2025-12-31 in USD\n"), text)
check("converted at USD/EUR 0.909090909091 (2025-12-31, inverted from EUR/USD)" in text, text)

equal([(x["lot"] > 0, Decimal(x["cost"])) for x in led.json("lots", "--as-of", "2025-12-31",
                                                          "--currency", "USD")["lots"]],
      [(True, Decimal("600"))], "lots in USD: the local cost")

g = led.json("gains", "--currency", "USD")["gains"]
equal([(Decimal(x["proceeds"]), Decimal(x["cost"]), Decimal(x["gain"]), Decimal(x["price_part"]),
        Decimal(x["currency_part"])) for x in g],
      [(Decimal("480"), Decimal("400"), Decimal("80"), Decimal("80"), Decimal("0"))],
      "gains in USD: no currency part in the security's own currency")
g = led.json("gains")["gains"]
equal([(Decimal(x["proceeds"]), Decimal(x["cost"]), Decimal(x["gain"])) for x in g],
      [(Decimal("400"), Decimal("320"), Decimal("80"))], "gains in EUR, the account's")

# Returns in euros (the default) with the dollar index as benchmark, unhedged.
r = led.json("returns", "--from", "2025-01-03", "--to", "2025-12-31", "--benchmark", "ZIX")
equal(r["currency"], "EUR", "returns name their currency")
equal(r["benchmark"]["converted_from"], "USD", "the benchmark's own currency is named")
expected = (1100 / 1.10) / (1000 / 1.25) - 1  # 25 %, by the definition above
check(abs(r["benchmark"]["return"] - expected) < 1e-9, f"benchmark in EUR: {r['benchmark']}")
text = led.ok("returns", "--from", "2025-01-03", "--to", "2025-12-31", "--benchmark", "ZIX")
check(text.startswith("Returns of all accounts in EUR from 2025-01-03 to 2025-12-31"), text)
check("The benchmark ZIX trades in USD: its closes are converted into EUR at each day's rate, "
      "unhedged, so its return includes the currency's move." in text, text)

# Returns in dollars: the benchmark as it is, the portfolio converted.
r = led.json("returns", "--from", "2025-01-03", "--to", "2025-12-31", "--benchmark", "ZIX",
             "--currency", "USD")
equal((r["currency"], r["benchmark"]["converted_from"]), ("USD", None), "returns in USD")
check(abs(r["benchmark"]["return"] - 0.10) < 1e-12, f"benchmark in USD: {r['benchmark']}")
equal(Decimal(r["closing_value"]), Decimal("660") + cash_eur * usd_at_end, "closing value in USD")
print("fx currency option: holdings, lots, gains and returns in USD; the benchmark unhedged in EUR")
