"""End to end: `keel propose` on a generated universe, checked against pandas.

The screen is recomputed independently from the generated CSV files with
pandas (Debian's /usr/bin/python3): the point-in-time figure per symbol (latest
period among rows known on or before the day, then the latest known_on), the
exclusions, winsorizing with Series.quantile (linear interpolation) and clip,
and z = (x - x.mean()) / x.std() (pandas' sample standard deviation, ddof=1).
z-scores must agree to 1e-12 and the selections exactly. Also: saving and
reviewing a proposal, and refusals that change nothing.
"""
import json
import os
import subprocess
import sys
import tempfile

import pandas as pd

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger, SOURCE, check, equal  # noqa: E402


def pit_frame(metrics, prices, stocks, metric, as_of, max_age, non_positive_out):
    """The screen's passing values by symbol, computed with pandas."""
    m = metrics[(metrics.metric == metric) & (metrics.known_on <= as_of)]
    m = m.sort_values(["symbol", "date", "known_on"]).groupby("symbol").tail(1)
    m = m[m.symbol.isin(stocks)].set_index("symbol")
    day = pd.Timestamp(as_of)
    age = (day - pd.to_datetime(m.date)).dt.days
    m = m[age <= max_age]
    if non_positive_out:
        m = m[m.value > 0]
    priced = set(prices[prices.date <= as_of].symbol)
    m = m[m.index.isin(priced)]
    return m.value.astype(float)


def zscores(values, winsor, cheap_high):
    x = values
    if winsor:
        lo, hi = x.quantile(winsor[0] / 100), x.quantile(winsor[1] / 100)
        x = x.clip(lower=lo, upper=hi)
    z = (x - x.mean()) / x.std()
    return -z if cheap_high else z


def write(path, text):
    with open(path, "w", encoding="utf-8") as f:
        f.write(text)
    return path


def main():
    with tempfile.TemporaryDirectory() as tmp:
        data = os.path.join(tmp, "data")
        subprocess.run([sys.executable, os.path.join(SOURCE, "tests/bench/gen_market.py"), data,
                        "--securities", "150", "--years", "2"], check=True)
        led = Ledger()
        for kind in ("securities", "prices", "metrics"):
            led.ok("import", kind, os.path.join(data, f"{kind}.csv"), "--quiet")
        led.ok("account", "add", "Household taxable")
        led.ok("account", "add", "Household retirement")
        led.ok("record", "deposit", "--date", "2010-02-01", "--account", "Household taxable",
               "--amount", "250000")
        led.ok("record", "deposit", "--date", "2010-02-01", "--account", "Household retirement",
               "--amount", "90000")
        led.ok("record", "buy", "--date", "2010-03-01", "--account", "Household taxable",
               "--symbol", "K0003", "--quantity", "40", "--price", "100", "--fee", "1")

        secs = pd.read_csv(os.path.join(data, "securities.csv"))
        stocks = set(secs[secs.kind == "stock"].symbol)
        metrics = pd.read_csv(os.path.join(data, "metrics.csv"), dtype={"value": str})
        metrics["value"] = metrics.value.astype(float)
        prices = pd.read_csv(os.path.join(data, "prices.csv"))

        variants = [
            ("earnings_yield", "high", 120, None, 'by = "z"\nz_max = -0.6\n'),
            ("book_per_share", "low", 90, (5, 95), 'by = "count"\ncount = 15\n'),
            ("earnings_yield", "low", 400, (10, 90), 'by = "top_pct"\ntop_pct = 12.5\n'),
        ]
        checked = 0
        for metric, cheap, age, winsor, select in variants:
            rule = (f'[scope]\naccounts = ["Household taxable", "Household retirement"]\n'
                    f'[screen]\nmetric = "{metric}"\ncheap = "{cheap}"\nmax_age_days = {age}\n'
                    + (f"winsorize_pct = [{winsor[0]}, {winsor[1]}]\n" if winsor else "")
                    + f"[select]\n{select}[trading]\nfee_fixed = 1\nfee_bps = 5\n")
            path = write(os.path.join(tmp, f"{metric}-{cheap}.toml"), rule)
            for as_of in ("2010-06-30", "2011-01-14", "2011-09-30"):
                got = led.json("propose", "--rule", path, "--as-of", as_of)
                equal(got["as_of"], as_of, "as_of")
                ref = zscores(pit_frame(metrics, prices, stocks, metric, as_of, age, True),
                              winsor, cheap == "high")
                passing = {s["symbol"]: s for s in got["screen"] if s["z"] is not None}
                equal(set(passing), set(ref.index), f"{metric} {as_of}: passing names")
                for sym, z in ref.items():
                    diff = abs(passing[sym]["z"] - z)
                    check(diff <= 1e-12, f"{metric} {as_of} {sym}: z {passing[sym]['z']} vs "
                                         f"pandas {z} (diff {diff})")
                    checked += 1
                # Selection, recomputed: nobody is held except K0003 and there is no band.
                order = sorted(ref.items(), key=lambda kv: (kv[1], kv[0]))
                if "z_max" in select:
                    want = {s for s, z in order if z <= -0.6}
                elif "count" in select:
                    want = {s for s, _ in order[:15]}
                else:
                    import math
                    want = {s for s, _ in order[:max(1, math.ceil(len(order) * 12.5 / 100))]}
                chosen = {s["symbol"] for s in got["screen"] if s["selected"]}
                equal(chosen, want, f"{metric} {as_of}: selected names")
                # Orders: sells first, buys within each account's cash.
                sides = [o["side"] for o in got["orders"]]
                equal(sides, sorted(sides, key=lambda s: s != "sell"), "sells come first")
                for c in got["cash_after_by_account"]:
                    check(float(c["cash"]) >= 0, f"cash after below zero: {c}")
                check(len(got["cautions"]) == 4, "cautions")
        check(checked > 300, f"only {checked} z-scores compared")
        print(f"propose vs pandas: {checked} z-scores agree to 1e-12")

        # Text output has the three parts and ends with the cautions.
        text = led.ok("propose", "--rule", path, "--as-of", "2011-09-30")
        for part in ("1. Screen:", "2. Orders", "3. Result", "Cautions:",
                     "it is not investment advice", "can stay wrong for years",
                     "check current prices"):
            check(part in text, f"text output lacks {part!r}")

        # Refusals: exit 1, exact message, nothing changed.
        before = led.ok("history", "--json") + led.ok("proposals", "list", "--json")
        bad = write(os.path.join(tmp, "bad.toml"),
                    '[scope]\naccounts = ["Household taxable"]\n[screen]\nmetirc = "pe"\n')
        code, out, err = led.run("propose", "--rule", bad, "--save")
        equal(code, 1, "exit status of a bad rule")
        equal(err, f"keel: error: {bad}:4: key 'screen.metirc': unknown key; did you mean "
                   "'metric'?\n", "unknown key message")
        nodata = write(os.path.join(tmp, "nodata.toml"),
                       '[scope]\naccounts = ["Household taxable"]\n')
        err = led.fails("propose", "--rule", nodata, "--save")
        equal(err, f"keel: error: {nodata}: key 'screen.metric' (default \"pe\"): the ledger "
                   "holds no figures for metric 'pe' (stored metrics: book_per_share, "
                   "earnings_yield)", "metric without data")
        err = led.fails("propose", "--rule", path, "--as-of", "2011-02-30")
        equal(err, "keel: error: --as-of: '2011-02-30' is not a calendar date", "bad --as-of")
        err = led.fails("propose", "--rule", os.path.join(tmp, "missing.toml"))
        equal(err, f"keel: error: {tmp}/missing.toml: cannot open rule file", "missing file")
        after = led.ok("history", "--json") + led.ok("proposals", "list", "--json")
        equal(after, before, "ledger after refusals")

        # Save, trade part of it, review.
        saved = led.json("propose", "--rule", path, "--as-of", "2011-09-30", "--save")
        pid = saved["proposal_id"]
        listed = led.json("proposals", "list")["proposals"]
        equal([p["id"] for p in listed], [pid], "saved proposals")
        equal(listed[0]["orders"], len(saved["orders"]), "orders saved")
        first = saved["orders"][0]
        led.ok("record", first["side"], "--date", "2011-10-03", "--account", first["account"],
               "--symbol", first["symbol"], "--quantity", first["quantity"], "--price",
               first["price"], *(["--lots", ",".join(f"{l['lot']}:{l['quantity']}"
                                                     for l in first["lots"])]
                                 if first["lots"] else []))
        shown = led.json("proposals", "show", str(pid))
        equal(shown["lines"][0]["status"], "done", "first order traded")
        equal(shown["lines"][0]["traded"], first["quantity"], "traded quantity")
        check(all(l["status"] == "not traded" for l in shown["lines"][1:]), "the rest untraded")
        err = led.fails("proposals", "show", "99")
        equal(err, "keel: error: no saved proposal 99; see 'keel proposals list'", "unknown id")
        print("propose: save, review and refusals behave")

        # At rest: propose (default day), record every fill after the latest close, propose
        # again (default day): the fills count, so nothing is proposed twice.
        # Figures known after the latest close are left out, so that between the two
        # proposals nothing changes but the fills.
        latest_close = max(prices.date)
        known = pd.read_csv(os.path.join(data, "metrics.csv"), dtype=str)
        known[known.known_on <= latest_close].to_csv(os.path.join(tmp, "known.csv"), index=False)
        rest = Ledger()
        for kind in ("securities", "prices"):
            rest.ok("import", kind, os.path.join(data, f"{kind}.csv"), "--quiet")
        rest.ok("import", "metrics", os.path.join(tmp, "known.csv"), "--quiet")
        rest.ok("account", "add", "Household taxable")
        rest.ok("record", "deposit", "--date", "2010-02-01", "--account", "Household taxable",
                "--amount", "250000")
        rest.ok("record", "buy", "--date", "2010-03-01", "--account", "Household taxable",
                "--symbol", "K0003", "--quantity", "40", "--price", "100", "--fee", "1")
        rule = write(os.path.join(tmp, "rest.toml"),
                     '[scope]\naccounts = ["Household taxable"]\n[screen]\n'
                     'metric = "earnings_yield"\ncheap = "high"\nmax_age_days = 400\n'
                     '[select]\nby = "count"\ncount = 10\n[trading]\nfee_fixed = 1\n')
        first = rest.json("propose", "--rule", rule, "--save")
        equal(first["as_of"], latest_close, "the default day is the latest close")
        check(any(o["side"] == "sell" for o in first["orders"]), "the first proposal sells")
        fill_day = (pd.Timestamp(latest_close) + pd.Timedelta(days=3)).date().isoformat()
        for o in first["orders"]:
            lots = ",".join(f"{l['lot']}:{l['quantity']}" for l in o["lots"])
            rest.ok("record", o["side"], "--date", fill_day, "--account", o["account"],
                    "--symbol", o["symbol"], "--quantity", o["quantity"], "--price", o["price"],
                    "--fee", o["fee"], *(["--lots", lots] if lots else []))
        again = rest.json("propose", "--rule", rule)
        equal(again["as_of"], fill_day, "the default day takes in the fills")
        equal(again["orders"], [], "orders after the fills were recorded")
        check(any("after the latest close" in n for n in again["notes"]), again["notes"])
        shown = rest.json("proposals", "show", str(first["proposal_id"]))
        equal({l["status"] for l in shown["lines"]}, {"done"}, "every saved order is done")
        print(f"propose at rest: {len(first['orders'])} orders filled on {fill_day}, none "
              "proposed again")


if __name__ == "__main__":
    main()
