"""keel signal across currencies agrees with pandas and scipy (Debian's python3-pandas and
python3-scipy) on a small invented universe: four names priced in dollars and four in euros, a
ledger kept in dollars, and euro rates stored mid-month and on some month-ends. Each forward
return is taken in dollars, point in time: the close on the day times the latest EUR/USD rate
on or before that day (pandas.merge_asof), at the start and at the end of the window. The IC of
each day is scipy.stats.spearmanr of the P/E against those returns; the quintiles are a pandas
groupby of the names in score order.
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
NAMES = {"DOLA": "USD", "DOLB": "USD", "DOLC": "USD", "DOLD": "USD",
         "EURA": "EUR", "EURB": "EUR", "EURC": "EUR", "EURD": "EUR"}
RULE = """
name = "Low P/E in two currencies"
[scope]
accounts = ["Simulated"]
[screen]
metric = "pe"
max_age_days = 40
min_names = 5
"""


def month_last_weekdays(year):
    out = []
    for m in range(1, 13):
        d = date(year + (m == 12), m % 12 + 1, 1) - timedelta(days=1)
        while d.weekday() >= 5:
            d -= timedelta(days=1)
        out.append(d)
    return out


def generate(folder):
    """Closes and a P/E per name on each month's last weekday of 2024 (the P/E known that day);
    EUR/USD on the 15th of each month and on every third month's last weekday."""
    rng = np.random.default_rng(15)
    days = month_last_weekdays(2024)
    price = rng.uniform(20, 80, len(NAMES))
    prices, metrics = [], []
    for d in days:
        price = price * np.exp(rng.normal(0, 0.05, len(NAMES)))
        pe = rng.uniform(5, 40, len(NAMES))
        prices += [(d.isoformat(), s, "%.4f" % p) for s, p in zip(NAMES, price)]
        metrics += [(d.isoformat(), s, "pe", "%.2f" % v, d.isoformat()) for s, v in zip(NAMES, pe)]
    rates = [(date(2024, m, 15), rng.uniform(1.0, 1.2)) for m in range(1, 13)]
    rates += [(d, rng.uniform(1.0, 1.2)) for d in days[2::3]]
    rates.insert(0, (date(2023, 12, 29), 1.1))
    write_market(folder, list(NAMES), prices, metrics, currencies=NAMES)
    with open(os.path.join(folder, "fx.csv"), "w") as f:
        f.write("date,base,quote,rate\n")
        f.writelines(f"{d.isoformat()},EUR,USD,{r:.4f}\n" for d, r in sorted(rates))


def reference(folder, horizons, convert=True):
    """Per horizon and day: the IC and the score quintiles' mean forward returns in dollars."""
    px = pd.read_csv(os.path.join(folder, "prices.csv"), parse_dates=["date"])
    fx = pd.read_csv(os.path.join(folder, "fx.csv"), parse_dates=["date"]).sort_values("date")
    days = pd.DataFrame({"date": sorted(px["date"].unique())})
    eur = pd.merge_asof(days, fx[["date", "rate"]], on="date").set_index("date")["rate"]
    close = px.pivot(index="date", columns="symbol", values="close").sort_index()
    if convert:
        for s, c in NAMES.items():
            if c == "EUR":
                close[s] = close[s] * eur
    m = pd.read_csv(os.path.join(folder, "metrics.csv"), parse_dates=["date"])
    last = list(close.index)
    out = {}
    for h in horizons:
        rows = []
        for i, d in enumerate(last[:-h]):
            e = last[i + h]
            f = m[m["date"] == d].set_index("symbol")["value"]
            fwd = close.loc[e, f.index] / close.loc[d, f.index] - 1
            order = f.sort_values(kind="stable").index
            ranked = pd.Series(fwd[order].to_numpy())
            group = np.floor(5 * np.arange(len(ranked)) / len(ranked)).astype(int)
            rows.append((d.date().isoformat(), stats.spearmanr(f, fwd).correlation,
                         list(ranked.groupby(group).mean().reindex(range(5)))))
        out[h] = rows
    return out


class FxSignalReference(unittest.TestCase):
    def test_forward_returns_in_the_ledger_currency(self):
        with tempfile.TemporaryDirectory(prefix="keel-fx-signal-") as tmp:
            generate(tmp)
            ledger = Ledger(currency="USD")
            for what, name in (("securities", "securities"), ("prices", "prices"),
                               ("metrics", "metrics"), ("fx", "fx")):
                ledger.ok("import", what, os.path.join(tmp, f"{name}.csv"), "--quiet")
            rule = os.path.join(tmp, "rule.toml")
            with open(rule, "w") as f:
                f.write(RULE)
            k = ledger.json("signal", "--rule", rule, "--from", "2024-01-01", "--to",
                            "2024-12-31", "--horizons", "1,3")
            ref = reference(tmp, [1, 3])
            local = reference(tmp, [1, 3], convert=False)
            differs = False
            for hk in k["horizons"]:
                want = ref[hk["months"]]
                self.assertEqual(len(hk["by_day"]), len(want))
                for day, (d, ic, q), (_, ic_local, _) in zip(hk["by_day"], want,
                                                           local[hk["months"]]):
                    self.assertEqual(day["date"], d)
                    self.assertEqual(day["names"], len(NAMES), "both currencies are ranked")
                    self.assertAlmostEqual(day["ic"], ic, delta=TOL, msg=d)
                    for got, w in zip(day["quintiles"], q):
                        self.assertAlmostEqual(got, w, delta=TOL, msg=d)
                    differs = differs or abs(ic - ic_local) > 1e-6
            # The rates matter: ranking local returns would give other coefficients.
            self.assertTrue(differs)
            self.assertFalse(any("left out" in n for n in k["notes"]), k["notes"])


if __name__ == "__main__":
    unittest.main()
