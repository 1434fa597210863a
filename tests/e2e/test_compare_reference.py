"""keel compare agrees with an independent pandas computation (Debian's python3-pandas and
python3-numpy) made from its own --curve file: the start-any-month table and every rule's
excess against the benchmark, the baseline and the other rules; the split by market state
(months and windows in which the benchmark fell or rose); the up- and down-capture ratios; and
the benchmark's three worst falls with each run's return over them. Agreement to 1e-9.

The definitions are those of docs/compare.md: monthly returns from month-end values, windows
compounded over complete months, a fall is a return below zero, capture is the ratio of
geometric mean monthly returns (common practice, from memory), falls are drawdowns from each new
high. pandas computes each of them here from the daily values alone.

Data: 30 invented names x 3 years from tests/bench/gen_market.py, imported with keel import.
"""
import json
import os
import subprocess
import sys
import tempfile
import unittest

import numpy as np
import pandas as pd

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import SOURCE, Ledger  # noqa: E402

PY = "/usr/bin/python3"
TOL = 1e-9
HOLD = 12
BENCH = "K0009"
BASE = """
[scope]
accounts = ["Simulated"]
[screen]
metric = "earnings_yield"
cheap = "high"
max_age_days = 120
min_names = 5
"""
RULES = {
    "z.toml": 'name = "By z"\n' + BASE + '[select]\nby = "z"\nz_max = -0.5\nexit_z = 0.0\n',
    "count.toml": 'name = "Five cheapest"\n' + BASE + '[select]\nby = "count"\ncount = 5\n',
    "slow.toml": 'name = "Five, quarterly"\nrebalance_months = 3\n' + BASE
                 + '[select]\nby = "count"\ncount = 5\n',
}
LABELS = ["By z", "Five cheapest", "Five, quarterly"]


def monthly(values):
    """Month-end values -> returns of the complete months (the first month-end is the opening)."""
    ends = values.groupby(values.index.to_period("M")).last()
    return (ends / ends.shift(1) - 1).iloc[1:]


def falls(level, count=3):
    """Drawdowns of an index from each new high, deepest first."""
    new_high = level > level.cummax().shift(1)
    episode = new_high.cumsum()
    out = []
    for _, part in level.groupby(episode):
        peak_day, peak = part.index[0], part.iloc[0]
        trough_day = part.idxmin()
        depth = part.min() / peak - 1
        if depth >= 0:
            continue
        after = level[level.index > trough_day]
        back = after[after >= peak]
        out.append((depth, peak_day, trough_day, back.index[0] if len(back) else None))
    out.sort(key=lambda f: f[0])  # stable: equal depths keep their order
    return out[:count]


def state_figures(series, bench):
    both = pd.DataFrame({"r": series, "b": bench}).dropna()
    result = {}
    for state, part in (("fell", both[both.b < 0]), ("rose", both[both.b >= 0])):
        result[state] = {
            "periods": len(part), "ahead": int((part.r > part.b).sum()),
            "mean": part.r.mean() if len(part) else None,
            "benchmark_mean": part.b.mean() if len(part) else None,
        }
    return result


def geometric_mean(r):
    return np.prod(1 + r.to_numpy()) ** (1 / len(r)) - 1


class CompareReference(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory(prefix="keel-cmp-")
        data = os.path.join(cls.tmp.name, "data")
        subprocess.run([PY, os.path.join(SOURCE, "tests", "bench", "gen_market.py"), data,
                        "--securities", "30", "--years", "3", "--seed", "41",
                        "--start", "2020-01-06"], check=True)
        cls.ledger = Ledger()
        for what in ("securities", "prices", "metrics", "distributions", "splits"):
            cls.ledger.ok("import", what, os.path.join(data, f"{what}.csv"), "--quiet")
        rules = []
        for name, text in RULES.items():
            rules.append(os.path.join(cls.tmp.name, name))
            with open(rules[-1], "w") as f:
                f.write(text)
        curve = os.path.join(cls.tmp.name, "curve.csv")
        cls.k = cls.ledger.json("compare", *rules, "--from", "2020-02-01", "--to", "2022-12-31",
                                "--benchmark", BENCH, "--hold-months", str(HOLD), "--curve",
                                curve)
        cls.curve = pd.read_csv(curve, index_col="date", parse_dates=True)
        cls.months = {name: monthly(cls.curve[name]) for name in LABELS + ["baseline"]}
        cls.months["benchmark " + BENCH] = monthly(cls.curve["benchmark"])

    def series(self):
        return LABELS + ["baseline", "benchmark " + BENCH]

    def windows(self, name):
        m = self.months[name]
        w = (1 + m).rolling(HOLD).apply(np.prod, raw=True) - 1
        w.index = m.index - (HOLD - 1)  # by start month
        return w.dropna()

    def test_curve_file_has_a_column_per_rule_the_baseline_and_the_benchmark(self):
        self.assertEqual(list(self.curve.columns), LABELS + ["baseline", "benchmark"])
        self.assertEqual(len(self.months["baseline"]), 35)  # 2020-02 .. 2022-12

    def test_start_any_month_table(self):
        t = self.k["start_any_month"]
        self.assertEqual(t["series"], self.series())
        starts = self.windows(LABELS[0]).index
        self.assertEqual([s["month"] for s in t["starts"]], [str(p) for p in starts])
        self.assertEqual(len(starts), 35 - HOLD + 1)
        for i, name in enumerate(self.series()):
            ref = self.windows(name)
            for s, r in zip(t["starts"], ref):
                self.assertAlmostEqual(s["returns"][i], r, delta=TOL, msg=f"{name} {s['month']}")

    def test_each_rule_against_the_others(self):
        names = self.series()
        pairs = self.k["start_any_month"]["against"]
        self.assertEqual(len(pairs), 3 * 4)  # each rule: benchmark, baseline, two other rules
        for p in pairs:
            excess = (self.windows(p["rule"]) - self.windows(p["against"])).dropna()
            self.assertIn(p["against"], names)
            self.assertEqual(p["starts"], len(excess))
            self.assertEqual(p["rule_ahead"], int((excess > 0).sum()))
            self.assertAlmostEqual(p["mean_excess"], excess.mean(), delta=TOL)
            self.assertAlmostEqual(p["median_excess"], excess.median(), delta=TOL)
            self.assertAlmostEqual(p["worst_excess"], excess.min(), delta=TOL)
            self.assertAlmostEqual(p["best_excess"], excess.max(), delta=TOL)

    def check_states(self, got, series, bench):
        ref = state_figures(series, bench)
        for state in ("fell", "rose"):
            g, r = got[state], ref[state]
            self.assertEqual(g["periods"], r["periods"], state)
            self.assertEqual(g["ahead"], r["ahead"], state)
            if r["periods"] == 0:
                self.assertIsNone(g["mean"])
                continue
            self.assertAlmostEqual(g["mean"], r["mean"], delta=TOL)
            self.assertAlmostEqual(g["benchmark_mean"], r["benchmark_mean"], delta=TOL)
            self.assertAlmostEqual(g["mean_excess"], r["mean"] - r["benchmark_mean"], delta=TOL)

    def test_down_market_split_of_months_and_windows(self):
        dm = self.k["down_markets"]
        self.assertEqual(dm["window_months"], HOLD)
        self.assertEqual([r["label"] for r in dm["runs"]], LABELS + ["baseline"])
        bench = "benchmark " + BENCH
        fell = int((self.months[bench] < 0).sum())
        self.assertTrue(0 < fell < 35, "the data has months in which the benchmark fell")
        for r in dm["runs"]:
            self.check_states(r["months"], self.months[r["label"]], self.months[bench])
            self.check_states(r["windows"], self.windows(r["label"]), self.windows(bench))

    def test_capture_ratios(self):
        bench = self.months["benchmark " + BENCH]
        for r in self.k["down_markets"]["runs"]:
            m = self.months[r["label"]]
            up, down = bench >= 0, bench < 0
            self.assertEqual(r["up_months"], int(up.sum()))
            self.assertEqual(r["down_months"], int(down.sum()))
            self.assertAlmostEqual(r["up_capture"],
                                   geometric_mean(m[up]) / geometric_mean(bench[up]), delta=TOL)
            self.assertAlmostEqual(r["down_capture"],
                                   geometric_mean(m[down]) / geometric_mean(bench[down]),
                                   delta=TOL)

    def test_worst_falls_of_the_benchmark_and_each_run_over_them(self):
        dm = self.k["down_markets"]
        ref = falls(self.curve["benchmark"].dropna())
        self.assertEqual(len(dm["falls"]), 3)
        for got, (depth, peak, trough, back) in zip(dm["falls"], ref):
            self.assertAlmostEqual(got["depth"], depth, delta=TOL)
            self.assertEqual(got["peak"], peak.date().isoformat())
            self.assertEqual(got["trough"], trough.date().isoformat())
            self.assertEqual(got["recovery"], back.date().isoformat() if back is not None else None)
        for r in dm["runs"]:
            values = self.curve[r["label"]]
            for got, (_, peak, trough, _) in zip(r["in_falls"], ref):
                self.assertAlmostEqual(got, values[trough] / values[peak] - 1, delta=TOL)

    def test_the_first_fall_is_the_benchmarks_maximum_drawdown(self):
        level = self.curve["benchmark"].dropna()
        self.assertAlmostEqual(self.k["down_markets"]["falls"][0]["depth"],
                               (level / level.cummax() - 1).min(), delta=TOL)

    def test_figures_equal_a_back_test_of_each_rule(self):
        backtests = []
        for name, label in zip(RULES, LABELS):
            b = self.ledger.json("backtest", "--rule", os.path.join(self.tmp.name, name),
                                 "--from", "2020-02-01", "--to", "2022-12-31", "--benchmark",
                                 BENCH)
            backtests.append(b)
            run = next(r for r in self.k["runs"] if r["label"] == label)
            self.assertEqual(run["end_value"], b["rule_run"]["end_value"], label)
            self.assertEqual(run["twr"], b["rule_run"]["twr"], label)
        # The baseline is the first rule's.
        baseline = next(r for r in self.k["runs"] if r["kind"] == "baseline")
        self.assertEqual(baseline["end_value"], backtests[0]["baseline_run"]["end_value"])
        self.assertNotEqual(baseline["end_value"], backtests[2]["baseline_run"]["end_value"])

    def test_cautions_in_json_and_text(self):
        self.assertTrue(any("Past results do not predict" in c for c in self.k["cautions"]))
        self.assertTrue(any("not investment advice" in c for c in self.k["cautions"]))
        self.assertTrue(any("Back-tests flatter" in c for c in self.k["cautions"]))
        rules = [os.path.join(self.tmp.name, name) for name in RULES]
        text = self.ledger.ok("compare", *rules, "--from", "2020-02-01", "--to", "2022-12-31")
        cautions = text.split("\nCautions:\n")[1]
        for c in self.k["cautions"]:
            self.assertIn("  - " + c + "\n", cautions)
        self.assertIn("Down markets: give --benchmark", text)


if __name__ == "__main__":
    unittest.main()
