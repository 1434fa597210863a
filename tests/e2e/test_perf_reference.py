"""The performance module agrees with an independent pandas/scipy
recomputation (tests/reference/perf_reference.py) to 1e-9 on invented,
deterministically generated series.

Runs the perf_probe test driver named by KEEL_PERF_PROBE.
"""

import json
import os
import subprocess
import sys
import tempfile
import unittest
from datetime import date, timedelta

import numpy as np

sys.path.insert(0, os.path.join(os.environ.get("KEEL_SOURCE_DIR", "."), "tests", "reference"))
import perf_reference  # noqa: E402

PROBE = os.environ.get("KEEL_PERF_PROBE")
TOL = 1e-9


def cents(x):
    return "%.2f" % x


def generate(seed, first, opening_day, last, liquidate=None):
    """Invented portfolio: entries on weekdays only, random returns, flows of
    both kinds; optionally everything withdrawn on `liquidate` and money put
    back in three weeks later. Returns (series rows, benchmark rows)."""
    rng = np.random.default_rng(seed)
    rows, levels = [], []
    value, level = 50000.0, 1000.0
    day = first
    refill = None
    while day <= last:
        if day.weekday() < 5:
            shock = -0.03 if date(2020, 3, 2) <= day <= date(2020, 3, 13) else 0.0
            market = rng.normal(0.0003, 0.01) + shock
            inflow = round(rng.uniform(100, 5000), 2) if rng.random() < 0.06 else 0.0
            if refill is not None:
                inflow = 0.0  # stays empty until the refill
            outflow = 0.0
            if liquidate is not None and day == liquidate:
                grown = (value + inflow) * (1 + market)
                outflow, value = round(grown, 2), 0.0
                refill = day + timedelta(days=21)
            else:
                if refill is not None and day >= refill:
                    inflow, refill = inflow + 20000.0, None
                grown = (value + inflow) * (1 + market)
                if grown > 0 and rng.random() < 0.05:
                    outflow = round(grown * rng.uniform(0.01, 0.3), 2)
                value = round(grown - outflow, 2) if grown > 0 else 0.0
            rows.append((day.isoformat(), cents(value), cents(inflow), cents(outflow)))
            if rng.random() > 0.03:  # the benchmark misses a few days
                level *= 1 + 0.8 * market + rng.normal(0, 0.004)
                levels.append((day.isoformat(), "%.6f" % level))
        if day == opening_day and day.weekday() >= 5:
            rows.append((day.isoformat(), cents(value), "0.00", "0.00"))
        day += timedelta(days=1)
    return rows, levels


def write_csv(path, header, rows):
    with open(path, "w") as f:
        f.write(header + "\n")
        for r in rows:
            f.write(",".join(r) + "\n")


class PerfReference(unittest.TestCase):
    def run_case(self, seed, start, end, risk_free=None, liquidate=None):
        first = start - timedelta(days=20)  # entries before the period are ignored
        rows, levels = generate(seed, first, start - timedelta(days=1), end, liquidate)
        rows.sort()
        with tempfile.TemporaryDirectory() as tmp:
            series, bench = os.path.join(tmp, "series.csv"), os.path.join(tmp, "bench.csv")
            write_csv(series, "day,value,inflow,outflow", rows)
            write_csv(bench, "day,level", levels)
            cmd = [PROBE, "--series", series, "--from", start.isoformat(), "--to",
                   end.isoformat(), "--benchmark", bench]
            if risk_free is not None:
                cmd += ["--risk-free", str(risk_free)]
            got = json.loads(subprocess.run(cmd, check=True, capture_output=True,
                                            text=True).stdout)
            want = perf_reference.compute(series, start.isoformat(), end.isoformat(), bench,
                                          risk_free)
        return got, want

    def close(self, got, want, what):
        if want is None:
            self.assertIsNone(got, what)
        else:
            self.assertIsNotNone(got, what)
            self.assertLessEqual(abs(got - want), TOL, "%s: %r vs %r" % (what, got, want))

    def compare(self, got, want):
        self.assertEqual(got["days"], want["days"])
        for key in ("twr", "modified_dietz"):
            self.close(got[key]["period"], want[key]["period"], key)
            self.close(got[key]["annualized"], want[key]["annualized"], key + " annualized")
        self.assertEqual(want["mwr"]["status"], "ok")
        self.assertEqual(got["mwr"]["status"], "ok")
        self.close(got["mwr"]["annual_rate"], want["mwr"]["annual_rate"], "mwr annual")
        self.close(got["mwr"]["period_rate"], want["mwr"]["period_rate"], "mwr period")
        gr, wr = got["risk"], want["risk"]
        for key in ("daily_observations", "monthly_observations"):
            self.assertEqual(gr[key], wr[key], key)
        for key in ("daily_volatility", "monthly_volatility", "sharpe"):
            self.close(gr[key], wr[key], key)
        self.assertIsNotNone(wr["max_drawdown"])
        self.close(gr["max_drawdown"]["depth"], wr["max_drawdown"]["depth"], "drawdown")
        for key in ("peak", "trough", "recovery"):
            self.assertEqual(gr["max_drawdown"][key], wr["max_drawdown"][key], key)
        self.assertEqual(len(got["months"]), len(want["months"]))
        for g, w in zip(got["months"], want["months"]):
            for key in ("month", "first", "last", "complete"):
                self.assertEqual(g[key], w[key], key)
            for key in ("twr", "modified_dietz", "benchmark"):
                self.close(g[key], w[key], "%s %s" % (w["month"], key))
        gb, wb = got["benchmark"], want["benchmark"]
        self.close(gb["return"]["period"], wb["return"]["period"], "benchmark")
        self.close(gb["return"]["annualized"], wb["return"]["annualized"], "benchmark ann.")
        for key in ("excess_arithmetic", "excess_geometric", "tracking_error"):
            self.close(gb[key], wb[key], key)

    def test_several_years_with_flows_both_ways(self):
        got, want = self.run_case(11, date(2019, 3, 14), date(2023, 8, 20), risk_free=0.015)
        self.assertGreater(got["days"], 1500)
        self.assertIsNotNone(got["risk"]["sharpe"])
        self.compare(got, want)

    def test_full_withdrawal_and_restart(self):
        got, want = self.run_case(23, date(2020, 1, 1), date(2022, 12, 31),
                                  liquidate=date(2021, 6, 15))
        # The empty weeks give no daily observations.
        self.assertLess(got["risk"]["daily_observations"], got["days"] * 5 // 7)
        self.compare(got, want)

    def test_short_period_is_not_annualized(self):
        got, want = self.run_case(5, date(2021, 2, 10), date(2021, 9, 30))
        self.assertIsNone(got["twr"]["annualized"])
        self.assertIsNone(got["mwr_figure"]["annualized"])
        self.compare(got, want)


if __name__ == "__main__":
    if not PROBE:
        sys.exit("KEEL_PERF_PROBE is not set; run through ctest")
    unittest.main()
