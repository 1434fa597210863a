"""Independent recomputation of keel's performance figures with pandas/scipy.

Reads the same CSV files as the perf_probe test driver (series:
day,value,inflow,outflow; benchmark: day,level) and applies the conventions
of docs/methods-returns.md by a different route: the series is expanded to
every calendar day with pandas (value carried forward, no flows on missing
days) instead of being walked entry by entry, and the money-weighted return
is solved in r directly with scipy.optimize.brentq.
"""

import math

import numpy as np
import pandas as pd
from scipy.optimize import brentq

TRADING_DAYS = 252  # common practice, no source
MONTHS = 12


def _annualize(period_return, days):
    if days < 365:
        return None
    return (1.0 + period_return) ** (365.0 / days) - 1.0


def _figure(period_return, days):
    return {"period": period_return, "annualized": _annualize(period_return, days)}


def load_series(path):
    df = pd.read_csv(path, parse_dates=["day"], dtype={"value": float, "inflow": float,
                                                      "outflow": float})
    return df.set_index("day").sort_index()


def load_levels(path):
    df = pd.read_csv(path, parse_dates=["day"], dtype={"level": float})
    return df.set_index("day")["level"].sort_index()


def daily_frame(series, start, end):
    """One row per calendar day from the day before `start` through `end`."""
    before = start - pd.Timedelta(days=1)
    opening = series.loc[:before, "value"].iloc[-1]
    inside = series.loc[start:end]
    days = pd.date_range(before, end, freq="D")
    df = pd.DataFrame(index=days)
    df["value"] = inside["value"]
    df.loc[before, "value"] = opening
    df["value"] = df["value"].ffill()
    df["inflow"] = inside["inflow"].reindex(days).fillna(0.0)
    df["outflow"] = inside["outflow"].reindex(days).fillna(0.0)
    df.loc[before, ["inflow", "outflow"]] = 0.0
    df["entry"] = df.index.isin(inside.index)
    prev = df["value"].shift(1)
    base = prev + df["inflow"]
    df["r"] = np.where(base > 0, (df["value"] + df["outflow"]) / base - 1.0, np.nan)
    df.loc[before, "r"] = np.nan
    df["factor"] = 1.0 + df["r"].fillna(0.0)
    return df


def npv(flows, rate):
    return sum(c * (1.0 + rate) ** (-t) for t, c in flows)


def money_weighted(df, start, end):
    before = start - pd.Timedelta(days=1)
    net = (df["inflow"] - df["outflow"]).copy()
    net.loc[before] += df.loc[before, "value"]
    net.loc[end] -= df.loc[end, "value"]
    flows = [((d - before).days / 365.0, c) for d, c in net.items() if c != 0]
    grid = np.concatenate([np.linspace(-0.999, 0.0, 2000, endpoint=False),
                           np.linspace(0.0, 20.0, 4001)])
    values = np.array([npv(flows, r) for r in grid])
    changes = np.nonzero(np.sign(values[:-1]) * np.sign(values[1:]) < 0)[0]
    if len(changes) != 1:
        return {"status": "reference: %d sign changes" % len(changes), "rate": None}
    k = changes[0]
    rate = brentq(lambda r: npv(flows, r), grid[k], grid[k + 1], xtol=1e-15, maxiter=500)
    days = (end - start).days + 1
    return {"status": "ok", "annual_rate": rate,
            "period_rate": (1.0 + rate) ** (days / 365.0) - 1.0}


def drawdown(df):
    idx = df.loc[df["entry"] | (df.index == df.index[0]), "factor"].cumprod()
    dd = idx / idx.cummax() - 1.0
    if dd.min() >= 0:
        return None
    trough = dd.idxmin()
    peak = idx.loc[:trough].idxmax()
    after = idx.loc[trough:]
    back = after[after >= idx.loc[peak]]
    recovery = back.index[0] if len(back) and back.index[0] > trough else None
    fmt = "%Y-%m-%d"
    return {"depth": float(dd.min()), "peak": peak.strftime(fmt), "trough": trough.strftime(fmt),
            "recovery": recovery.strftime(fmt) if recovery is not None else None}


def compute(series_path, start, end, benchmark_path=None, risk_free=None):
    start, end = pd.Timestamp(start), pd.Timestamp(end)
    before = start - pd.Timedelta(days=1)
    days = (end - start).days + 1
    df = daily_frame(load_series(series_path), start, end)
    period = df.loc[start:end]
    twr = float(period["factor"].prod() - 1.0)

    levels = load_levels(benchmark_path) if benchmark_path else None

    months = []
    md_growth = 1.0
    for month, g in period.groupby(period.index.to_period("M")):
        first, last = g.index[0], g.index[-1]
        d = len(g)
        bmv = df.loc[first - pd.Timedelta(days=1), "value"]
        emv = g["value"].iloc[-1]
        k = np.arange(d)
        gain = emv - bmv - (g["inflow"].sum() - g["outflow"].sum())
        capital = (bmv + (g["inflow"].to_numpy() * (d - k) / d).sum()
                   - (g["outflow"].to_numpy() * (d - k - 1) / d).sum())
        md = gain / capital if capital > 0 else None
        md_growth *= 1.0 + (md if md is not None else 0.0)
        row = {"month": str(month), "first": first.strftime("%Y-%m-%d"),
               "last": last.strftime("%Y-%m-%d"),
               "complete": d == month.days_in_month,
               "twr": float(g["factor"].prod() - 1.0), "modified_dietz": md, "benchmark": None}
        if levels is not None:
            row["benchmark"] = (levels.asof(last) / levels.asof(first - pd.Timedelta(days=1))
                                - 1.0)
        months.append(row)

    daily_r = period.loc[period["entry"], "r"].dropna()
    complete = [m for m in months if m["complete"]]
    monthly_r = pd.Series([m["twr"] for m in complete], dtype=float)
    out = {
        "days": days,
        "twr": _figure(twr, days),
        "modified_dietz": _figure(md_growth - 1.0, days),
        "mwr": money_weighted(df, start, end),
        "months": months,
        "risk": {
            "daily_observations": len(daily_r),
            "daily_volatility": float(daily_r.std(ddof=1) * math.sqrt(TRADING_DAYS)),
            "monthly_observations": len(monthly_r),
            "monthly_volatility": (float(monthly_r.std(ddof=1) * math.sqrt(MONTHS))
                                   if len(monthly_r) > 1 else None),
            "max_drawdown": drawdown(df),
        },
        "benchmark": None,
    }
    vol = out["risk"]["monthly_volatility"]
    ann = out["twr"]["annualized"]
    out["risk"]["sharpe"] = ((ann - risk_free) / vol
                             if risk_free is not None and ann is not None and vol else None)
    if levels is not None:
        b = levels.asof(end) / levels.asof(before) - 1.0
        active = pd.Series([m["twr"] - m["benchmark"] for m in complete], dtype=float)
        bench = {"return": _figure(b, days), "excess_arithmetic": twr - b,
                 "excess_geometric": (1.0 + twr) / (1.0 + b) - 1.0,
                 "tracking_error": (float(active.std(ddof=1) * math.sqrt(MONTHS))
                                    if len(active) > 1 else None)}
        out["benchmark"] = bench
    return out
