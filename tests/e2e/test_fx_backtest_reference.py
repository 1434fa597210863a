"""keel backtest --frictionless across currencies agrees with an independent pandas
recomputation (tests/reference/backtest_reference.py --currency --rates) to 1e-9: every point
of the rule's and the baseline's curves, as a multiple of the start value.

The universe's names are priced in dollars (the ledger's currency), euros (a stored EUR/USD
rate: direct) and pounds (stored as USD/GBP: inverted, and only from the second year, so the
pound names have no price before). Data: 24 invented names x 3 years from
tests/bench/gen_market.py with invented monthly rates; the reference converts each close at the
latest rate on or before its day, by the definition of a point-in-time conversion (common
practice, stated in docs/backtest.md), with numpy and pandas.
"""
import csv
import json
import os
import random
import subprocess
import sys
import tempfile
import unittest

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import SOURCE, Ledger  # noqa: E402

PY = "/usr/bin/python3"
TOL = 1e-9
RULE = """
name = "High earnings yield, three currencies"
[scope]
accounts = ["Simulated"]
[screen]
metric = "earnings_yield"
cheap = "high"
max_age_days = 120
min_names = 5
[select]
by = "z"
z_max = -0.3
exit_z = 0.0
"""
REF_ARGS = ["--metric", "earnings_yield", "--cheap", "high", "--z-max", "-0.3", "--exit-z", "0",
            "--max-age-days", "120", "--min-names", "5"]
SPAN = ["--from", "2020-03-02", "--to", "2022-12-30"]


class FxBacktestReference(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory(prefix="keel-fxbt-")
        cls.data = os.path.join(cls.tmp.name, "data")
        subprocess.run([PY, os.path.join(SOURCE, "tests", "bench", "gen_market.py"), cls.data,
                        "--securities", "24", "--years", "3", "--seed", "91",
                        "--start", "2020-01-06"], check=True)
        path = os.path.join(cls.data, "securities.csv")
        with open(path, newline="") as f:
            rows = list(csv.DictReader(f))
        for i, r in enumerate(rows):
            if r["kind"] == "stock":
                r["currency"] = ("USD", "EUR", "GBP")[i % 3]
        with open(path, "w", newline="") as f:
            w = csv.DictWriter(f, fieldnames=list(rows[0]))
            w.writeheader()
            w.writerows(rows)
        rng = random.Random(5)
        eur, gbp = 1.10, 1.30
        cls.rates = os.path.join(cls.data, "rates.csv")
        with open(cls.rates, "w") as f:
            f.write("date,base,quote,rate\n")
            for year in (2019, 2020, 2021, 2022):
                for month in range(1, 13):
                    day = f"{year}-{month:02d}-15"
                    eur *= 1 + rng.uniform(-0.03, 0.03)
                    gbp *= 1 + rng.uniform(-0.03, 0.03)
                    f.write(f"{day},EUR,USD,{eur:.4f}\n")
                    if year >= 2021:
                        f.write(f"{day},USD,GBP,{1 / gbp:.5f}\n")
        cls.ledger = Ledger(currency="USD")
        for what in ("securities", "prices", "metrics", "distributions", "splits"):
            cls.ledger.ok("import", what, os.path.join(cls.data, f"{what}.csv"), "--quiet")
        cls.ledger.ok("import", "fx", cls.rates, "--quiet")
        cls.rule = os.path.join(cls.tmp.name, "rule.toml")
        with open(cls.rule, "w") as f:
            f.write(RULE)

    def test_frictionless_run_equals_the_pandas_reference(self):
        k = self.ledger.json("backtest", "--rule", self.rule, *SPAN, "--frictionless",
                             "--start-value", "250000")
        out = subprocess.run([PY, os.path.join(SOURCE, "tests", "reference",
                                               "backtest_reference.py"), self.data, *REF_ARGS,
                              *SPAN, "--start-value", "250000", "--currency", "USD",
                              "--rates", self.rates],
                             check=True, capture_output=True, text=True).stdout
        r = json.loads(out)
        self.assertEqual(k["rebalance_days"], r["rebalance_days"])
        self.assertEqual(len(k["curve"]), len(r["rule"]["curve"]))
        worst = 0.0
        for point, ref_rule, ref_base in zip(k["curve"], r["rule"]["curve"],
                                             r["baseline"]["curve"]):
            self.assertEqual(point["date"], ref_rule[0])
            for mine, theirs in ((point["value"], ref_rule[1]),
                                 (point["baseline_value"], ref_base[1])):
                worst = max(worst, abs(float(mine) - theirs) / 250000)
                self.assertAlmostEqual(float(mine) / 250000, theirs / 250000, delta=TOL,
                                       msg=point["date"])
        self.assertAlmostEqual(k["rule_run"]["twr"], r["rule"]["twr"], delta=TOL)
        self.assertAlmostEqual(k["baseline_run"]["twr"], r["baseline"]["twr"], delta=TOL)
        print(f"fx backtest: {len(k['curve'])} days, largest difference {worst:.2e} of the start")

    def test_the_rule_holds_names_of_each_currency(self):
        k = self.ledger.json("backtest", "--rule", self.rule, *SPAN, "--start-value", "250000")
        bought = {t["symbol"] for rb in k["rule_run"]["rebalances"] for t in rb["trades"]
                  if t["side"] == "buy"}
        with open(os.path.join(self.data, "securities.csv"), newline="") as f:
            currency = {r["symbol"]: r["currency"] for r in csv.DictReader(f)}
        self.assertEqual({currency[s] for s in bought}, {"USD", "EUR", "GBP"})
        self.assertGreater(float(k["rule_run"]["fees"]), -1)

    def test_a_benchmark_in_another_currency_is_converted_unhedged(self):
        # Reference: an unhedged benchmark's level in the ledger's currency is its close times
        # the rate known that day (the definition of a point-in-time conversion, common
        # practice, stated in docs/backtest.md), computed here with pandas' asof.
        import pandas as pd
        with open(os.path.join(self.data, "securities.csv"), newline="") as f:
            euro = [r["symbol"] for r in csv.DictReader(f) if r["currency"] == "EUR"]
        with open(os.path.join(self.data, "splits.csv"), newline="") as f:
            split = {r["symbol"] for r in csv.DictReader(f)}
        symbol = next(s for s in euro if s not in split)
        k = self.ledger.json("backtest", "--rule", self.rule, *SPAN, "--frictionless",
                             "--start-value", "250000", "--benchmark", symbol)
        prices = pd.read_csv(os.path.join(self.data, "prices.csv"), parse_dates=["date"])
        closes = prices[prices.symbol == symbol].set_index("date")["close"].sort_index()
        rates = pd.read_csv(self.rates, parse_dates=["date"])
        eur = rates[rates.base == "EUR"].set_index("date")["rate"].sort_index()

        def level(day):
            day = pd.Timestamp(day)
            return closes.asof(day) * eur.asof(day)

        expected = level(k["curve"][-1]["date"]) / level("2020-03-01") - 1
        run = k["rule_run"]
        self.assertAlmostEqual(run["twr"] - run["excess"], expected, delta=TOL)
        local = closes.asof(pd.Timestamp(k["curve"][-1]["date"])) / closes.asof(
            pd.Timestamp("2020-03-01")) - 1
        self.assertGreater(abs(expected - local), 1e-4)  # the conversion matters here
        self.assertIn(f"benchmark {symbol} is priced in EUR: its closes are converted into USD at "
                      "each day's rate, unhedged", k["notes"])

    def test_a_benchmark_without_a_rate_at_the_start_is_refused_naming_the_pair(self):
        with open(os.path.join(self.data, "securities.csv"), newline="") as f:
            pound = next(r["symbol"] for r in csv.DictReader(f) if r["currency"] == "GBP")
        err = self.ledger.fails("backtest", "--rule", self.rule, *SPAN, "--benchmark", pound)
        self.assertEqual(err, "keel: error: --benchmark: no exchange rate for GBP/USD on or "
                              "before 2020-03-01")


if __name__ == "__main__":
    unittest.main()
