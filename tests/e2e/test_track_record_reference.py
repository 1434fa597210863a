"""A rule's [track_record], and scores of several metrics within sectors,
against an independent computation with pandas and
scipy (Debian's python3-pandas and python3-scipy) on invented data that the
test writes: each name's z on every month-end (sample sd, pandas' std with
ddof=1), its total return over the horizon with cash distributions added
(not reinvested), the returns made relative to, or standardised across, the
names scored that day, then per name scipy.stats.pearsonr or
scipy.stats.spearmanr of the pairs whose horizon ends by the decision day.
`keel propose --json` must show the same correlation and count beside each
name's z, and select exactly the names with z <= z_max whose record passes.
Composite scores: each metric's z across the universe or within each
sector, their weighted mean standardised again, and the names selected.
The look-ahead check changes returns that end after a decision day and
expects that day's records unchanged.
"""
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
NAMES = [f"W{i:02d}" for i in range(14)]
PAYERS = NAMES[::3]  # these pay a quarterly cash distribution
DAYS = ["2022-06-30", "2022-09-30", "2022-12-30"]
SECTORS = {s: ("Quarry" if i < 8 else "Orchard") for i, s in enumerate(NAMES)}
COMPOSITE = """
name = "P/E and yield"
[scope]
accounts = ["Simulated"]
[screen]
metrics = [{ name = "pe", weight = 2 }, { name = "fy", cheap = "high" }]
max_age_days = 40
min_names = 5
%s
[select]
z_max = 0
"""


def rule_text(method, returns, window=36, horizon=12, min_obs=24):
    return f"""
name = "Low P/E with a track record"
[scope]
accounts = ["Simulated"]
[screen]
metric = "pe"
max_age_days = 40
min_names = 5
[select]
z_max = 0
[track_record]
window_months = {window}
horizon_months = {horizon}
min_observations = {min_obs}
max_correlation = 0
method = "{method}"
returns = "{returns}"
"""


def generate(folder, seed):
    """Weekday closes 2019-2022; a P/E per name on each month's last weekday,
    known that day; some names' later drift follows their P/E, others' runs
    against it, so that track records differ."""
    rng = np.random.default_rng(seed)
    days = [date(2019, 1, 1) + timedelta(days=i) for i in range(4 * 365 + 1)]
    days = [d for d in days if d.weekday() < 5]
    month_last = {}
    for d in days:
        month_last[(d.year, d.month)] = d
    n = len(NAMES)
    price = rng.uniform(20, 80, n)
    sign = np.where(np.arange(n) % 2 == 0, -1.0, 1.0)
    drift = np.zeros(n)
    prices, metrics, dists = [], [], []
    for d in days:
        price = price * np.exp(drift / 21 + rng.normal(0, 0.006, n))
        prices += [(d.isoformat(), s, "%.4f" % p) for s, p in zip(NAMES, price)]
        if month_last[(d.year, d.month)] == d:
            pe = np.round(rng.uniform(5, 40, n), 2)
            metrics += [(d.isoformat(), s, "pe", "%.2f" % v, d.isoformat())
                        for s, v in zip(NAMES, pe)]
            fy = np.round(rng.uniform(0.01, 0.12, n), 4)
            metrics += [(d.isoformat(), s, "fy", "%.4f" % v, d.isoformat())
                        for s, v in zip(NAMES, fy)]
            drift = 0.03 * sign * (pe - pe.mean()) / pe.std(ddof=1)
            if d.month % 3 == 0:
                ex = d + timedelta(days=15)
                while ex.weekday() >= 5:
                    ex += timedelta(days=1)
                dists += [(ex.isoformat(), (ex + timedelta(days=10)).isoformat(), s,
                           "%.4f" % rng.uniform(0.2, 0.9)) for s in PAYERS]
    write_market(folder, NAMES, prices, metrics, SECTORS)
    pd.DataFrame(dists, columns=["ex_date", "pay_date", "symbol", "per_share"]).to_csv(
        os.path.join(folder, "distributions.csv"), index=False)


class Reference:
    def __init__(self, folder):
        px = pd.read_csv(os.path.join(folder, "prices.csv"), parse_dates=["date"])
        self.close = px.pivot(index="date", columns="symbol", values="close").sort_index()
        self.m = pd.read_csv(os.path.join(folder, "metrics.csv"), parse_dates=["date", "known_on"])
        self.dist = pd.read_csv(os.path.join(folder, "distributions.csv"),
                                parse_dates=["ex_date", "pay_date"])
        s = pd.Series(self.close.index, index=self.close.index)
        self.ends = list(s.groupby([s.dt.year, s.dt.month]).max().sort_values())
        self.z = {t: self.z_on(t) for t in self.ends}

    def figures(self, d, metric):
        m = self.m[(self.m["metric"] == metric) & (self.m["known_on"] <= d)]
        f = m.sort_values(["symbol", "date", "known_on"]).groupby("symbol").tail(1)
        f = f.set_index("symbol")
        return f[((d - f["date"]).dt.days <= 40) & (f["value"] > 0)]["value"]

    def z_on(self, d):
        f = self.figures(d, "pe")
        if len(f) < 5:
            return pd.Series(dtype=float)
        return (f - f.mean()) / f.std(ddof=1)

    def composite(self, day, within):
        """Each metric's z (within each sector when asked; fy is cheap when
        high), the weighted mean 2:1, standardised again across the names."""
        d = pd.Timestamp(day)
        x = pd.DataFrame({"pe": self.figures(d, "pe"), "fy": self.figures(d, "fy")}).dropna()
        x["group"] = [SECTORS[s] if within else "all" for s in x.index]
        z = x.groupby("group")[["pe", "fy"]].transform(lambda v: (v - v.mean()) / v.std(ddof=1))
        z["fy"] = -z["fy"]
        score = (2 * z["pe"] + z["fy"]) / 3
        return z, (score - score.mean()) / score.std(ddof=1)

    def forward(self, start, end, names):
        paid = self.dist[(self.dist["ex_date"] > start) & (self.dist["ex_date"] <= end)]
        cash = paid.groupby("symbol")["per_share"].sum().reindex(names).fillna(0.0)
        return (self.close.loc[end, names] + cash) / self.close.loc[start, names] - 1

    def records(self, day, method, returns, window=36, horizon=12):
        day = pd.Timestamp(day)
        anchor = max(t for t in self.ends if t <= day)
        a = anchor.year * 12 + anchor.month - 1
        by_month = {t.year * 12 + t.month - 1: t for t in self.ends}
        pairs = {}
        for mo in range(a - window + 1, a - horizon + 1):
            if mo not in by_month or mo + horizon not in by_month:
                continue
            t = by_month[mo]
            z = self.z[t]
            if z.empty:
                continue
            r = self.forward(t, by_month[mo + horizon], list(z.index))
            if returns == "relative":
                r = r - r.mean()
            elif returns == "zscore":
                r = (r - r.mean()) / r.std(ddof=1)
            for s in z.index:
                pairs.setdefault(s, ([], []))
                pairs[s][0].append(z[s])
                pairs[s][1].append(r[s])
        fn = stats.pearsonr if method == "pearson" else stats.spearmanr
        return {s: (len(x), fn(x, y)[0]) for s, (x, y) in pairs.items()}


class TrackRecordReference(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory(prefix="keel-track-")
        generate(cls.tmp.name, seed=11)
        cls.ref = Reference(cls.tmp.name)
        cls.ledger = cls.make_ledger()

    @classmethod
    def make_ledger(cls):
        ledger = Ledger()
        for what in ("securities", "prices", "metrics", "distributions"):
            ledger.ok("import", what, os.path.join(cls.tmp.name, f"{what}.csv"), "--quiet")
        ledger.ok("account", "add", "Simulated")
        ledger.ok("record", "deposit", "--date", "2019-01-02", "--account", "Simulated",
                  "--amount", "100000")
        return ledger

    @classmethod
    def tearDownClass(cls):
        cls.tmp.cleanup()

    def propose(self, text, day, ledger=None):
        path = os.path.join(self.tmp.name, "rule.toml")
        with open(path, "w") as f:
            f.write(text)
        return (ledger or self.ledger).json("propose", "--rule", path, "--as-of", day)

    def check(self, method, returns):
        for day in DAYS:
            got = self.propose(rule_text(method, returns), day)
            ref = self.ref.records(day, method, returns)
            z = self.ref.z[max(t for t in self.ref.ends if t <= pd.Timestamp(day))]
            expected_in = set()
            for line in got["screen"]:
                s = line["symbol"]
                n, corr = ref[s]
                self.assertEqual(line["track_observations"], n, f"{day} {s}")
                self.assertAlmostEqual(line["track_correlation"], corr, delta=TOL,
                                       msg=f"{day} {s}")
                self.assertAlmostEqual(line["z"], z[s], delta=TOL, msg=f"{day} {s}")
                if z[s] <= 0 and n >= 24 and corr <= 0:
                    expected_in.add(s)
            selected = {line["symbol"] for line in got["screen"] if line["selected"]}
            self.assertTrue(expected_in, f"{day}: the data should select some name")
            self.assertEqual(selected, expected_in, day)
            # Some name with a low z is kept out by its record, so the filter acts.
            held_back = {s for s in z.index if z[s] <= 0} - expected_in
            self.assertTrue(held_back, f"{day}: the filter should keep some name out")

    def expected_selection(self, day, method, returns):
        ref = self.ref.records(day, method, returns)
        z = self.ref.z[max(t for t in self.ref.ends if t <= pd.Timestamp(day))]
        return {s for s in z.index if z[s] <= 0 and ref[s][0] >= 24 and ref[s][1] <= 0}

    def test_backtest_and_signal_apply_the_same_filter(self):
        path = os.path.join(self.tmp.name, "rule.toml")
        with open(path, "w") as f:
            f.write(rule_text("pearson", "relative"))
        bt = self.ledger.json("backtest", "--rule", path, "--from", "2022-06-01", "--to",
                              "2022-12-31", "--frictionless")
        days = {r["date"]: r for r in bt["rule_run"]["rebalances"]}
        self.assertEqual(len(days), 7)
        for day, r in days.items():
            self.assertEqual(r["selected"], len(self.expected_selection(day, "pearson", "relative")),
                             day)
        # The signal check pairs only the names the record lets through.
        sig = self.ledger.json("signal", "--rule", path, "--from", "2022-06-01", "--to",
                               "2022-12-31", "--horizons", "1")
        self.assertEqual(len(sig["horizons"][0]["by_day"]), 6)
        for d in sig["horizons"][0]["by_day"]:
            ref = self.ref.records(d["date"], "pearson", "relative")
            z = self.ref.z[pd.Timestamp(d["date"])]
            self.assertEqual(d["names"], sum(1 for s in z.index if ref[s][0] >= 24 and
                                            ref[s][1] <= 0), d["date"])

    def test_pearson_of_relative_returns(self):
        self.check("pearson", "relative")

    def test_spearman_of_standardised_returns(self):
        self.check("spearman", "zscore")

    def test_pearson_of_absolute_returns(self):
        self.check("pearson", "absolute")

    def check_composite(self, within):
        for day in DAYS:
            got = self.propose(COMPOSITE % ('within = "sector"' if within else ""), day)
            z_metric, z = self.ref.composite(day, within)
            self.assertEqual(sorted(x["symbol"] for x in got["screen"] if x["z"] is not None),
                             sorted(z.index), day)
            for line in got["screen"]:
                s = line["symbol"]
                self.assertAlmostEqual(line["z"], z[s], delta=TOL, msg=f"{day} {s}")
                self.assertAlmostEqual(line["metric_z"]["pe"], z_metric.loc[s, "pe"], delta=TOL)
                self.assertAlmostEqual(line["metric_z"]["fy"], z_metric.loc[s, "fy"], delta=TOL)
                if within:
                    self.assertEqual(line["group"], SECTORS[s])
            self.assertEqual({x["symbol"] for x in got["screen"] if x["selected"]},
                             set(z[z <= 0].index), day)

    def test_composite_of_two_metrics_across_the_universe(self):
        self.check_composite(within=False)

    def test_composite_of_two_metrics_within_each_sector(self):
        self.check_composite(within=True)

    def test_changing_a_return_that_ends_after_the_day_leaves_its_record_unchanged(self):
        text = rule_text("pearson", "absolute")
        day = "2021-12-31"
        ledger = self.make_ledger()
        before = self.propose(text, day, ledger)
        with tempfile.TemporaryDirectory(prefix="keel-track-late-") as tmp:
            late = os.path.join(tmp, "late.csv")
            with open(late, "w") as f:
                f.write("date,symbol,close\n")
                f.writelines(f"2022-03-31,{s},{(1 + i) * 7.5:.4f}\n" for i, s in
                             enumerate(NAMES))
            ledger.ok("import", "prices", late, "--replace", "--quiet")
        after = self.propose(text, day, ledger)
        self.assertEqual(
            [(x["symbol"], x["track_observations"], x["track_correlation"]) for x in after["screen"]],
            [(x["symbol"], x["track_observations"], x["track_correlation"]) for x in before["screen"]])
        # The change is real: a later day whose horizons end after it sees it.
        moved = self.propose(text, "2022-03-31", ledger)
        ref = self.ref.records("2022-03-31", "pearson", "absolute")
        self.assertTrue(any(abs(x["track_correlation"] - ref[x["symbol"]][1]) > 1e-6
                            for x in moved["screen"]))


if __name__ == "__main__":
    unittest.main()
