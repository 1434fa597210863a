"""keel signal agrees with scipy.stats.spearmanr, scipy.stats.ttest_1samp and
scipy.stats.sem (Debian's python3-scipy), and its score quintiles with a pandas
groupby (python3-pandas), on two invented universes: one whose figures are
built to predict the next month's returns (cheap names drift up), and one
where they are noise. Sign convention: low z is cheap, so a working signal
has a negative IC.
"""
import json
import os
import sys
import tempfile
import unittest
from datetime import date, timedelta

import numpy as np
import pandas as pd
from scipy import stats

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, write_market  # noqa: E402

TOL = 1e-9
NAMES = [f"Q{i:03d}" for i in range(25)]
RULE = """
name = "Low P/E signal"
[scope]
accounts = ["Simulated"]
[screen]
metric = "pe"
max_age_days = 40
min_names = 5
"""


def generate(folder, seed, strength):
    """Weekday closes 2019-2022; a P/E per name at each month's last weekday,
    known that day; the next month's drift is -strength x that day's z."""
    rng = np.random.default_rng(seed)
    days = [date(2019, 1, 1) + timedelta(days=i) for i in range(4 * 365 + 1)]
    days = [d for d in days if d.weekday() < 5]
    month_last = {}
    for d in days:
        month_last[(d.year, d.month)] = d
    price = rng.uniform(20, 80, len(NAMES))
    drift = np.zeros(len(NAMES))
    prices, metrics = [], []
    for d in days:
        price = price * np.exp(drift / 21 + rng.normal(0, 0.004, len(NAMES)))
        prices += [(d.isoformat(), s, "%.4f" % p) for s, p in zip(NAMES, price)]
        if month_last[(d.year, d.month)] == d:
            pe = np.round(rng.uniform(5, 40, len(NAMES)), 2)
            metrics += [(d.isoformat(), s, "pe", "%.2f" % v, d.isoformat()) for s, v in zip(NAMES, pe)]
            drift = -strength * (pe - pe.mean()) / pe.std(ddof=1)
    write_market(folder, NAMES, prices, metrics)


def reference(folder, start, end, horizons):
    """Per horizon: the IC of each day (scipy.stats.spearmanr), its mean, the
    one-sample t statistic (scipy.stats.ttest_1samp), its standard error
    (scipy.stats.sem), the share below zero, the mean cheapest-less-dearest-fifth
    spread, and each score quintile's mean forward return (name i of n by z in
    quintile floor(5 i / n), pandas groupby) by day and over the days."""
    px = pd.read_csv(os.path.join(folder, "prices.csv"), parse_dates=["date"])
    close = px.pivot(index="date", columns="symbol", values="close").sort_index()
    m = pd.read_csv(os.path.join(folder, "metrics.csv"), parse_dates=["date", "known_on"])
    s = pd.Series(close.index, index=close.index)
    last = s.groupby([s.dt.year, s.dt.month]).max().sort_values()
    last = list(last[(last >= start) & (last <= end)])
    out = {}
    for h in horizons:
        ics, spreads, quintiles = [], [], []
        for i, d in enumerate(last):
            if i + h >= len(last):
                break
            e = last[i + h]
            f = m[m["known_on"] <= d].sort_values(["symbol", "date", "known_on"])
            f = f.groupby("symbol").tail(1).set_index("symbol")
            f = f[((d - f["date"]).dt.days <= 40) & (f["value"] > 0)]
            fwd = close.loc[e, f.index] / close.loc[d, f.index] - 1
            ics.append(stats.spearmanr(f["value"], fwd).correlation)
            order = f.assign(sym=f.index).sort_values(["value", "sym"]).index
            k = max(1, len(order) // 5)
            spreads.append(fwd[order[:k]].mean() - fwd[order[-k:]].mean())
            ranked = pd.Series(fwd[order].to_numpy())
            group = np.floor(5 * np.arange(len(ranked)) / len(ranked)).astype(int)
            quintiles.append(ranked.groupby(group).mean().reindex(range(5)))
        ics = np.array(ics)
        out[h] = {"days": len(ics), "ics": ics, "mean_ic": ics.mean(),
                  "t_stat": stats.ttest_1samp(ics, 0).statistic,
                  "share": float((ics < 0).mean()), "spread": float(np.mean(spreads)),
                  "sem": stats.sem(ics), "quintiles": quintiles,
                  "quintile_means": pd.concat(quintiles, axis=1).mean(axis=1)}
    return out


class SignalReference(unittest.TestCase):
    def check_universe(self, seed, strength):
        with tempfile.TemporaryDirectory(prefix="keel-signal-") as tmp:
            generate(tmp, seed, strength)
            ledger = Ledger()
            for what in ("securities", "prices", "metrics"):
                ledger.ok("import", what, os.path.join(tmp, f"{what}.csv"), "--quiet")
            rule = os.path.join(tmp, "rule.toml")
            with open(rule, "w") as f:
                f.write(RULE)
            k = ledger.json("signal", "--rule", rule, "--from", "2019-01-01", "--to",
                            "2022-12-31", "--horizons", "1,3")
            r = reference(tmp, pd.Timestamp("2019-01-01"), pd.Timestamp("2022-12-31"), [1, 3])
            for hk in k["horizons"]:
                ref = r[hk["months"]]
                self.assertEqual(hk["days"], ref["days"])
                for day, ic, q in zip(hk["by_day"], ref["ics"], ref["quintiles"]):
                    self.assertAlmostEqual(day["ic"], ic, delta=TOL, msg=day["date"])
                    for got, want in zip(day["quintiles"], q):
                        self.assertAlmostEqual(got, want, delta=TOL, msg=day["date"])
                self.assertAlmostEqual(hk["ic_standard_error"], ref["sem"], delta=TOL)
                for got, want in zip(hk["quintile_means"], ref["quintile_means"]):
                    self.assertAlmostEqual(got, want, delta=TOL)
                self.assertAlmostEqual(hk["mean_ic"], ref["mean_ic"], delta=TOL)
                self.assertAlmostEqual(hk["t_stat"], ref["t_stat"], delta=1e-7)
                self.assertAlmostEqual(hk["share_expected_sign"], ref["share"], delta=TOL)
                self.assertAlmostEqual(hk["mean_spread"], ref["spread"], delta=TOL)
            return {h["months"]: h for h in k["horizons"]}

    def test_a_predictive_figure_has_a_clearly_negative_ic(self):
        h = self.check_universe(seed=5, strength=0.05)
        self.assertLess(h[1]["mean_ic"], -0.3)
        self.assertLess(h[1]["t_stat"], -5)
        self.assertGreater(h[1]["share_expected_sign"], 0.8)
        self.assertGreater(h[1]["mean_spread"], 0)
        # Cheap names did better: the quintiles' returns fall from the cheapest to the dearest.
        q = h[1]["quintile_means"]
        self.assertGreater(q[0], q[4])

    def test_a_noise_figure_has_an_ic_near_zero(self):
        h = self.check_universe(seed=6, strength=0.0)
        self.assertLess(abs(h[1]["mean_ic"]), 0.1)
        self.assertLess(abs(h[1]["t_stat"]), 3)


if __name__ == "__main__":
    unittest.main()
