"""keel backtest --frictionless through corporate actions agrees with an
independent recomputation in pandas (Debian's python3-pandas) to 1e-9
relative, on every day of the rule's and the baseline's value series.

The invented market: six stocks priced every weekday, monthly rebalancing,
every eligible name held at equal weight. BRAMBLE merges into ASTER for 0.6
ASTER and 2.50 in cash a unit; CLOVER spins off FERN (0.25 FERN a unit), which
is priced and given a figure from that day on and so joins the universe at the
next rebalancing day; DAHLIA is delisted for 7.25 in cash a unit; ELDER
returns 0.80 of capital a unit. The reference below reads only the CSV files
it writes and applies the semantics of docs/backtest.md ("Corporate
actions"): no keel code is shared.
"""
import datetime as dt
import os
import random
import sys
import tempfile
import unittest

import pandas as pd

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger  # noqa: E402

TOL = 1e-9
START = 100000.0
FROM, TO = "2024-01-02", "2024-06-28"
RULE = """
name = "Every eligible name"
[scope]
accounts = ["Keeper"]
[screen]
metric = "pe"
min_names = 2
max_age_days = 400
[select]
by = "top_pct"
top_pct = 100
"""
STOCKS = ["ASTER", "BRAMBLE", "CLOVER", "DAHLIA", "ELDER", "FERN"]
# (kind, symbol, date, target, ratio, cash)
ACTIONS = [
    ("merger", "BRAMBLE", "2024-02-20", "ASTER", 0.6, 2.5),
    ("spinoff", "CLOVER", "2024-03-11", "FERN", 0.25, None),
    ("delisting", "DAHLIA", "2024-04-15", None, None, 7.25),
    ("return_of_capital", "ELDER", "2024-05-06", None, None, 0.8),
]
LAST_CLOSE = {"BRAMBLE": "2024-02-16", "DAHLIA": "2024-04-12"}
FIRST_CLOSE = {"FERN": "2024-03-11"}


def weekdays(first, last):
    d = dt.date.fromisoformat(first)
    end = dt.date.fromisoformat(last)
    while d <= end:
        if d.weekday() < 5:
            yield d.isoformat()
        d += dt.timedelta(days=1)


def write_market(folder):
    rng = random.Random(20240101)
    cents = {"ASTER": 4210, "BRAMBLE": 2375, "CLOVER": 6120, "DAHLIA": 905, "ELDER": 1533,
             "FERN": 1180}
    with open(os.path.join(folder, "securities.csv"), "w") as f:
        f.write("symbol,name,kind,currency,lot_size,sector\n")
        for s in STOCKS:
            f.write(f"{s},{s.capitalize()} Invented Holdings,stock,USD,1,Goods\n")
    with open(os.path.join(folder, "prices.csv"), "w") as f:
        f.write("date,symbol,close\n")
        for d in weekdays("2023-12-01", TO):
            for s in STOCKS:
                c = cents[s] + cents[s] * rng.randint(-250, 260) // 10000
                cents[s] = max(c, 1)
                if s in LAST_CLOSE and d > LAST_CLOSE[s]:
                    continue
                if s in FIRST_CLOSE and d < FIRST_CLOSE[s]:
                    continue
                f.write(f"{d},{s},{cents[s] // 100}.{cents[s] % 100:02d}\n")
    with open(os.path.join(folder, "metrics.csv"), "w") as f:
        f.write("date,symbol,metric,value,known_on\n")
        for i, s in enumerate(STOCKS):
            if s == "FERN":
                f.write("2024-02-29,FERN,pe,9.5,2024-03-11\n")
            else:
                f.write(f"2023-11-30,{s},pe,{8 + 3 * i}.25,2023-12-20\n")
                f.write(f"2024-03-31,{s},pe,{20 - 2 * i}.5,2024-04-22\n")


def reference(folder):
    """The frictionless pool, from the CSVs and docs/backtest.md alone."""
    prices = pd.read_csv(os.path.join(folder, "prices.csv"), dtype={"close": str})
    prices["close"] = prices["close"].astype(float)
    grid = prices.pivot(index="date", columns="symbol", values="close").sort_index()
    days = [d for d in grid.index if FROM <= d <= TO]
    closes = grid.ffill()  # the close on or before each trading day
    metrics = pd.read_csv(os.path.join(folder, "metrics.csv"))
    ended = {a[1]: a[2] for a in ACTIONS if a[0] in ("merger", "delisting")}
    months = pd.Series(days, index=days).groupby(lambda d: d[:7]).max()
    rebalance = set(months.values)

    def eligible(day):
        out = []
        for s in STOCKS:
            if s in ended and ended[s] <= day:
                continue
            known = metrics[(metrics.symbol == s) & (metrics.known_on <= day)]
            if known.empty or pd.isna(closes.at[day, s]):
                continue
            latest = known.sort_values(["date", "known_on"]).iloc[-1]
            age = (dt.date.fromisoformat(day) - dt.date.fromisoformat(latest.date)).days
            if age <= 400 and latest.value > 0:
                out.append(s)
        return out

    cash, units, curve, prev = START, {}, [], "0000-00-00"
    for day in days:
        for kind, sym, when, target, ratio, per_unit in ACTIONS:
            if not (prev < when <= day) or sym not in units:
                continue
            u = units[sym]
            if ratio:
                units[target] = units.get(target, 0.0) + u * ratio
            if per_unit:
                cash += u * per_unit
            if kind in ("merger", "delisting"):
                del units[sym]
        if day in rebalance:
            value = cash + sum(u * closes.at[day, s] for s, u in units.items())
            names = eligible(day)
            units = {s: value / len(names) / closes.at[day, s] for s in names}
            cash = value - sum(u * closes.at[day, s] for s, u in units.items())
        curve.append((day, cash + sum(u * closes.at[day, s] for s, u in units.items())))
        prev = day
    return curve


class BacktestThroughActions(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        cls.tmp = tempfile.TemporaryDirectory(prefix="keel-bt-actions-")
        folder = cls.tmp.name
        write_market(folder)
        cls.ledger = Ledger()
        for what in ("securities", "prices", "metrics"):
            cls.ledger.ok("import", what, os.path.join(folder, f"{what}.csv"), "--quiet")
        # No account holds the names: the actions are market data for the back-test.
        cls.ledger.ok("account", "add", "Keeper")
        cls.ledger.ok("record", "merger", "--date", "2024-02-20", "--symbol", "BRAMBLE",
                      "--into", "ASTER", "--ratio", "0.6", "--cash", "2.5", "--market-only")
        cls.ledger.ok("record", "spinoff", "--date", "2024-03-11", "--symbol", "CLOVER",
                      "--into", "FERN", "--ratio", "0.25", "--cost-percent", "15", "--market-only")
        cls.ledger.ok("record", "delisting", "--date", "2024-04-15", "--symbol", "DAHLIA",
                      "--cash", "7.25", "--market-only")
        actions = os.path.join(folder, "actions.csv")
        with open(actions, "w") as f:
            f.write("date,symbol,action,cash\n2024-05-06,ELDER,return_of_capital,0.8\n")
        cls.ledger.ok("import", "actions", actions, "--market-only")
        cls.rule = os.path.join(folder, "rule.toml")
        with open(cls.rule, "w") as f:
            f.write(RULE)
        cls.keel = cls.ledger.json("backtest", "--rule", cls.rule, "--from", FROM, "--to", TO,
                                   "--frictionless", "--start-value", "100000")
        cls.ref = reference(folder)

    def test_value_series_equals_the_pandas_reference(self):
        curve = self.keel["curve"]
        self.assertEqual(len(curve), len(self.ref) + 1)  # keel starts on the day before
        self.assertEqual(float(curve[0]["value"]), START)
        worst = 0.0
        for point, (day, value) in zip(curve[1:], self.ref):
            self.assertEqual(point["date"], day)
            for field in ("value", "baseline_value"):
                rel = abs(float(point[field]) - value) / value
                worst = max(worst, rel)
                self.assertLessEqual(rel, TOL, f"{day} {field}: {point[field]} vs {value}")
        print(f"largest relative difference from pandas: {worst:.3g}", file=sys.stderr)

    def test_the_actions_moved_the_series(self):
        # Each action changes the pool on its day by more than the day's
        # price moves could hide: the reference without them differs.
        by_day = dict(self.ref)
        for _, _, when, _, _, _ in ACTIONS:
            self.assertIn(when, by_day)
        rebalances = {r["date"]: r for r in self.keel["rule_run"]["rebalances"]}
        self.assertEqual(rebalances["2024-01-31"]["passed"], 5)  # FERN not yet
        self.assertEqual(rebalances["2024-02-29"]["passed"], 4)  # BRAMBLE merged
        self.assertEqual(rebalances["2024-03-29"]["passed"], 5)  # FERN admitted
        self.assertEqual(rebalances["2024-04-30"]["passed"], 4)  # DAHLIA delisted

    def test_cautions_are_shown(self):
        out = self.ledger.ok("backtest", "--rule", self.rule, "--from", FROM, "--to", TO,
                             "--frictionless")
        for words in ("Back-tests flatter", "Past results do not predict"):
            self.assertIn(words, out)


if __name__ == "__main__":
    unittest.main()
