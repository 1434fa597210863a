#!/usr/bin/python3
"""Independent recomputation of keel's frictionless back-test with pandas/numpy.

Reads the canonical CSV files keel imports (securities, prices, metrics,
distributions, splits) and a few settings of the rule, and computes, point in
time and without keel: the rebalancing days, the screen (figure known on the
day, not stale, positive, priced), z-scores with the sample sd (pandas
Series.std, ddof=1), the selection (z <= z_max, or held and z <= exit_z),
equal weights, daily portfolio values (splits multiply units at the start of
their date; distributions are reinvested at the ex-date's close) and the
time-weighted return (pandas pct_change linked daily).

Across currencies (--currency C --rates FILE): every close of a name priced in
another currency is multiplied by the rate into C known on the day: the latest
row on or before it of FILE (date,base,quote,rate), stored as that pair
(direct) or the reverse one (1 / rate); a name has no price until its first
rate. Distributions are reinvested at the converted close, so their value is
converted at the ex-date's rate too.

Usage: backtest_reference.py DATA_DIR --metric M --cheap low|high --z-max Z
       [--exit-z Z] --max-age-days N --min-names N --from D --to D
       [--start-value V] [--rebalance-months K] [--keep-non-positive]
       [--currency C --rates FILE]
Prints JSON: rebalance_days, rule {twr, curve}, baseline {twr, curve}.
"""
import argparse
import json
import os
import sys

import numpy as np
import pandas as pd


def load(data_dir):
    read = lambda name, **kw: pd.read_csv(os.path.join(data_dir, name), **kw)
    sec = read("securities.csv", dtype=str)
    prices = read("prices.csv", dtype={"symbol": str, "close": float}, parse_dates=["date"])
    metrics = read("metrics.csv", dtype={"symbol": str, "metric": str, "value": float},
                   parse_dates=["date", "known_on"])
    dist = read("distributions.csv", dtype={"symbol": str, "per_share": float},
                parse_dates=["ex_date", "pay_date"])
    splits = read("splits.csv", dtype={"symbol": str, "ratio": float}, parse_dates=["date"])
    return sec, prices, metrics, dist, splits


def rebalance_days(all_days, start, end, every):
    s = pd.Series(all_days, index=all_days)
    last = s.groupby([s.dt.year, s.dt.month]).max().sort_values()
    last = last[(last >= start) & (last <= end)]
    return list(last.iloc[::every])


def figures_as_of(metric_rows, day):
    """The latest period known on `day`, and for it the latest known_on (per symbol)."""
    # metric_rows is sorted by symbol, date, known_on; filtering keeps that order.
    known = metric_rows[metric_rows["known_on"] <= day]
    return known.groupby("symbol").tail(1).set_index("symbol")


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("data_dir")
    ap.add_argument("--metric", required=True)
    ap.add_argument("--cheap", choices=["low", "high"], default="low")
    ap.add_argument("--z-max", type=float, required=True)
    ap.add_argument("--exit-z", type=float)
    ap.add_argument("--max-age-days", type=int, default=180)
    ap.add_argument("--min-names", type=int, default=5)
    ap.add_argument("--keep-non-positive", action="store_true")
    ap.add_argument("--from", dest="start", required=True)
    ap.add_argument("--to", dest="end", required=True)
    ap.add_argument("--start-value", type=float, default=100000.0)
    ap.add_argument("--rebalance-months", type=int, default=1)
    ap.add_argument("--currency")
    ap.add_argument("--rates")
    a = ap.parse_args()
    start, end = pd.Timestamp(a.start), pd.Timestamp(a.end)

    sec, prices, metrics, dist, splits = load(a.data_dir)
    universe = sorted(sec.loc[sec["kind"] == "stock", "symbol"])
    close = prices.pivot(index="date", columns="symbol", values="close").sort_index()
    all_days = close.index
    held_close = close.reindex(columns=universe).ffill()  # close on or before each day
    if a.currency:
        rates = pd.read_csv(a.rates, dtype={"base": str, "quote": str, "rate": float},
                            parse_dates=["date"])
        currency_of = sec.set_index("symbol")["currency"]
        for code in sorted(set(currency_of[universe]) - {a.currency}):
            direct = rates[(rates.base == code) & (rates.quote == a.currency)]
            inverse = rates[(rates.base == a.currency) & (rates.quote == code)]
            series = pd.concat([direct.set_index("date")["rate"],
                                1.0 / inverse.set_index("date")["rate"]]).sort_index()
            series = series[~series.index.duplicated(keep="first")]
            on_day = series.reindex(series.index.union(all_days)).ffill().reindex(all_days)
            names = [s for s in universe if currency_of[s] == code]
            held_close[names] = held_close[names].mul(on_day, axis=0)
    rebal = rebalance_days(all_days, start, end, a.rebalance_months)
    metric_rows = metrics[(metrics["metric"] == a.metric) & metrics["symbol"].isin(universe)]
    metric_rows = metric_rows.sort_values(["symbol", "date", "known_on"], kind="stable")

    days = all_days[(all_days >= start) & (all_days <= end)]
    px = held_close.loc[days].to_numpy()
    col = {s: i for i, s in enumerate(universe)}

    # Events mapped to the first period day on or after their date.
    def events(frame, date_col, value_col):
        f = frame[frame["symbol"].isin(universe) & (frame[date_col] >= start)
                  & (frame[date_col] <= end)]
        pos = days.searchsorted(f[date_col].to_numpy())
        out = {}
        for t, sym, v in zip(pos, f["symbol"], f[value_col]):
            if t < len(days):
                out.setdefault(int(t), []).append((col[sym], float(v)))
        return out

    split_at = events(splits, "date", "ratio")
    dist_at = events(dist, "ex_date", "per_share")

    def selection(day, held, every_passing):
        f = figures_as_of(metric_rows, day)
        last_close = held_close.loc[:day].iloc[-1]
        ok = (day - f["date"]).dt.days <= a.max_age_days
        if not a.keep_non_positive:
            ok &= f["value"] > 0
        ok &= last_close.reindex(f.index).notna()
        x = f.loc[ok, "value"]
        if len(x) < a.min_names or x.std(ddof=1) == 0:
            return []
        z = (x - x.mean()) / x.std(ddof=1)
        if a.cheap == "high":
            z = -z
        if every_passing:
            return list(z.index)
        chosen = z <= a.z_max
        if a.exit_z is not None:
            chosen |= z.index.isin(held) & (z <= a.exit_z)
        return list(z.index[chosen])

    def simulate(every_passing):
        units = np.zeros(len(universe))
        cash = a.start_value
        values = np.empty(len(days))
        rebal_set = set(rebal)
        for t, day in enumerate(days):
            p = px[t]
            for j, ratio in split_at.get(t, []):
                units[j] *= ratio
            for j, ps in dist_at.get(t, []):
                if units[j] > 0:
                    units[j] += units[j] * ps / p[j]
            if day in rebal_set:
                value = cash + np.nansum(units * np.where(units > 0, p, 0.0))
                held = [universe[j] for j in np.flatnonzero(units > 0)]
                chosen = selection(day, held, every_passing)
                units = np.zeros(len(universe))
                if chosen:
                    idx = [col[s] for s in chosen]
                    units[idx] = value / len(idx) / p[idx]
                    cash = 0.0
                else:
                    cash = value
            values[t] = cash + np.sum(units * np.where(units > 0, p, 0.0))
        curve = pd.Series(values, index=days)
        full = pd.concat([pd.Series([a.start_value], index=[start - pd.Timedelta(days=1)]), curve])
        twr = float((1 + full.pct_change().dropna()).prod() - 1)
        return {"twr": twr, "curve": [[d.strftime("%Y-%m-%d"), float(v)] for d, v in full.items()]}

    json.dump({"rebalance_days": [d.strftime("%Y-%m-%d") for d in rebal],
               "rule": simulate(False), "baseline": simulate(True)}, sys.stdout)


if __name__ == "__main__":
    main()
