"""keel backtest --frictionless agrees with an independent pandas
recomputation (tests/reference/backtest_reference.py) to 1e-9: the rebalancing
days, the time-weighted return of the rule and of the equal-weight baseline,
and every point of both equity curves (as a multiple of the start value).

Data: 30 invented names x 3 years from tests/bench/gen_market.py (with
restated figures, cash distributions and a split), imported with keel import.
"""
import csv
import decimal
import json
import os
import subprocess
import sys
import tempfile
import unittest

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import SOURCE, Ledger  # noqa: E402

PY = "/usr/bin/python3"
TOL = 1e-9
RULE = """
name = "High earnings yield"
[scope]
accounts = ["Simulated"]
[screen]
metric = "earnings_yield"
cheap = "high"
max_age_days = 120
min_names = 5
[select]
by = "z"
z_max = -0.5
exit_z = 0.0
"""
REF_ARGS = ["--metric", "earnings_yield", "--cheap", "high", "--z-max", "-0.5", "--exit-z", "0",
            "--max-age-days", "120", "--min-names", "5"]


class BacktestReference(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory(prefix="keel-bt-")
        cls.data = os.path.join(cls.tmp.name, "data")
        subprocess.run([PY, os.path.join(SOURCE, "tests", "bench", "gen_market.py"), cls.data,
                        "--securities", "30", "--years", "3", "--seed", "77",
                        "--start", "2020-01-06"], check=True)
        cls.ledger = Ledger()
        for what in ("securities", "prices", "metrics", "distributions", "splits"):
            cls.ledger.ok("import", what, os.path.join(cls.data, f"{what}.csv"), "--quiet")
        cls.rule = os.path.join(cls.tmp.name, "rule.toml")
        with open(cls.rule, "w") as f:
            f.write(RULE)

    def keel(self, *extra):
        return self.ledger.json("backtest", "--rule", self.rule, "--from", "2020-03-02", "--to",
                                "2022-12-30", "--frictionless", "--start-value", "250000", *extra)

    def reference(self):
        out = subprocess.run([PY, os.path.join(SOURCE, "tests", "reference",
                                               "backtest_reference.py"), self.data, *REF_ARGS,
                              "--from", "2020-03-02", "--to", "2022-12-30",
                              "--start-value", "250000"],
                             check=True, capture_output=True, text=True).stdout
        return json.loads(out)

    def test_frictionless_run_equals_the_pandas_reference(self):
        k, r = self.keel(), self.reference()
        self.assertEqual(k["rebalance_days"], r["rebalance_days"])
        self.assertAlmostEqual(k["rule_run"]["twr"], r["rule"]["twr"], delta=TOL)
        self.assertAlmostEqual(k["baseline_run"]["twr"], r["baseline"]["twr"], delta=TOL)
        self.assertEqual(len(k["curve"]), len(r["rule"]["curve"]))
        for point, ref_rule, ref_base in zip(k["curve"], r["rule"]["curve"],
                                             r["baseline"]["curve"]):
            self.assertEqual(point["date"], ref_rule[0])
            self.assertAlmostEqual(float(point["value"]) / 250000, ref_rule[1] / 250000,
                                   delta=TOL, msg=point["date"])
            self.assertAlmostEqual(float(point["baseline_value"]) / 250000, ref_base[1] / 250000,
                                   delta=TOL, msg=point["date"])
        # The data exercised reinvested distributions and hysteresis, and the
        # rule differed from the baseline.
        self.assertGreater(float(k["rule_run"]["distributions"]), 0)
        self.assertNotAlmostEqual(k["rule_run"]["twr"], k["baseline_run"]["twr"], delta=1e-6)
        self.assertEqual(k["rule_run"]["fees"], "0")

    def test_curve_file_holds_every_day(self):
        path = os.path.join(self.tmp.name, "curve.csv")
        k = self.keel("--curve", path)
        with open(path, newline="") as f:
            rows = list(csv.reader(f))
        self.assertEqual(rows[0], ["date", "value", "cash", "names", "baseline_value",
                                   "benchmark"])
        self.assertEqual([r[0] for r in rows[1:]], [p["date"] for p in k["curve"]])
        self.assertEqual({r[5] for r in rows[1:]}, {""})  # no --benchmark: an empty column

    def test_curve_file_holds_the_benchmark_close_as_stored(self):
        path = os.path.join(self.tmp.name, "curve-bench.csv")
        self.keel("--curve", path, "--benchmark", "K0009")
        closes = {}
        with open(os.path.join(self.data, "prices.csv"), newline="") as f:
            for r in csv.DictReader(f):
                if r["symbol"] == "K0009":
                    closes[r["date"]] = r["close"]
        with open(path, newline="") as f:
            rows = list(csv.reader(f))[1:]
        last = None
        for r in rows:  # the close on or before each day, as the prices file has it
            last = closes.get(r[0], last)
            if last is not None:
                self.assertEqual(decimal.Decimal(r[5]), decimal.Decimal(last), r[0])
        self.assertTrue(all(r[5] for r in rows[1:]))

    def test_text_report_shows_the_cautions(self):
        out = self.ledger.ok("backtest", "--rule", self.rule, "--from", "2020-03-02", "--to",
                             "2022-12-30", "--benchmark", "K0009")
        for words in ("Back-tests flatter", "taxes", "Past results do not predict"):
            self.assertIn(words, out)
        self.assertIn("benchmark K0009", out)
        self.assertIn("against the baseline", out)

    def test_fees_are_paid_outside_the_frictionless_mode(self):
        rule = os.path.join(self.tmp.name, "fees.toml")
        with open(rule, "w") as f:
            f.write(RULE + "[trading]\nfee_fixed = 1\nfee_bps = 10\n")
        k = self.ledger.json("backtest", "--rule", rule, "--from", "2020-03-02", "--to",
                             "2022-12-30")
        self.assertGreater(float(k["rule_run"]["fees"]), 0)
        first = k["rule_run"]["rebalances"][0]
        self.assertTrue(all(float(t["quantity"]).is_integer() for t in first["trades"]))

    def test_refused_options_name_the_option(self):
        err = self.ledger.fails("backtest", "--rule", self.rule, "--from", "2022-01-01", "--to",
                                "2021-01-01")
        self.assertEqual(err, "keel: error: --from: 2022-01-01 is after --to 2021-01-01")
        err = self.ledger.fails("backtest", "--rule", self.rule, "--from", "2021-01-01", "--to",
                                "2021-12-31", "--benchmark", "NOPE")
        self.assertEqual(err, "keel: error: --benchmark: no security 'NOPE' in the ledger")
        err = self.ledger.fails("backtest", "--rule", self.rule, "--from", "2021-02-30", "--to",
                                "2021-12-31")
        self.assertTrue(err.startswith("keel: error: --from: "), err)
        err = self.ledger.fails("backtest", "--rule", self.rule, "--from", "2021-01-01", "--to",
                                "2021-12-31", "--start-value", "-5")
        self.assertEqual(err, "keel: error: --start-value: -5 is not above zero")


if __name__ == "__main__":
    unittest.main()
