"""keel sweep on the demo scenario's invented data: each variant on the one load of the history
gives exactly the figures of `keel backtest` of the same rule written out, the overfitting
figures agree with the numpy/scipy recomputation from the papers (tests/reference/
overfit_reference.py) on the variants' own monthly returns, and the walk-forward chooses by the
in-sample Sharpe ratio and chains its out-of-sample runs.
"""
import math
import os
import re
import sys

import numpy as np

sys.path.insert(0, os.path.dirname(__file__))
sys.path.insert(0, os.path.join(os.path.dirname(os.path.dirname(__file__)), "reference"))
from keel_cli import SOURCE, Ledger, check, equal  # noqa: E402
import overfit_reference as ref  # noqa: E402

demo = Ledger(currency=None)
demo.import_demo(transactions=False)
RULE = os.path.join(SOURCE, "examples", "demo", "rule.toml")
with open(RULE) as f:
    RULE_TEXT = f.read()
PERIOD = ["--from", "2019-01-01", "--to", "2025-12-31"]
TOL = 1e-12


def close(a, b, what):
    check(abs(a - b) <= TOL * max(1.0, abs(b)), f"{what}: {a} vs {b}")


def written_rule(settings, name):
    """The demo rule with each key=value written into the file itself."""
    text = RULE_TEXT
    for key, value in settings:
        leaf = key.split(".")[1]
        text, n = re.subn(rf"(?m)^{leaf} = .*$", f"{leaf} = {value}", text)
        equal(n, 1, f"{key} in the demo rule")
    path = os.path.join(demo.dir.name, name)
    with open(path, "w") as f:
        f.write(text)
    return path


sweep = demo.json("sweep", "--rule", RULE, *PERIOD, "--vary", "select.count=8,10,12",
                  "--vary", "trading.drift_pct_points=0,1.5")
equal(sweep["variants_tried"], 6, "variants tried")
equal(len(sweep["months"]), 84, "months of 2019 to 2025")
equal([[s["value"] for s in v["settings"]] for v in sweep["variants"]],
      [["8", "0"], ["8", "1.5"], ["10", "0"], ["10", "1.5"], ["12", "0"], ["12", "1.5"]],
      "the grid, the first axis slowest")

# One load of the history, the same figures as a back-test of each rule written out.
for i in (0, 3, 5):
    v = sweep["variants"][i]
    path = written_rule([(s["key"], s["value"]) for s in v["settings"]], f"variant-{i}.toml")
    bt = demo.json("backtest", "--rule", path, *PERIOD)
    equal(v["end_value"], bt["rule_run"]["end_value"], f"variant {i + 1}: end value")
    equal(v["twr"], bt["rule_run"]["twr"], f"variant {i + 1}: time-weighted return")
    close(math.prod(1 + r for r in v["monthly_returns"]) - 1, v["twr"],
          f"variant {i + 1}: monthly returns compound to the period's")

# The overfitting figures, recomputed from the variants' monthly returns.
matrix = np.array([v["monthly_returns"] for v in sweep["variants"]]).T
best, dsr = ref.deflated_sharpe(matrix)
equal(sweep["best"], best + 1, "the best variant")
for key, want in [("sharpe_monthly", dsr["sharpe"]), ("trials_variance", dsr["trials_variance"]),
                  ("expected_max_sharpe", dsr["expected_max"]),
                  ("probability", dsr["probability"])]:
    close(sweep["deflated_sharpe"][key], want, f"deflated Sharpe: {key}")
pbo = ref.pbo(matrix, 16)
equal(sweep["pbo"]["months_used"], 80, "months in 16 blocks of 5")
equal(sweep["pbo"]["combinations"], 12870, "C(16, 8)")
close(sweep["pbo"]["probability"], pbo["probability"], "PBO")

# Walk-forward: the in-sample best by Sharpe ratio, run alone out of sample, chained.
wf = demo.json("sweep", "--rule", RULE, *PERIOD, "--vary", "select.count=8,10,12",
               "--vary", "trading.drift_pct_points=0,1.5", "--walk-forward", "24:12")["walk_forward"]
equal([(w["in_from"], w["out_from"], w["out_to"]) for w in wf["windows"]],
      [("2019-01-01", "2021-01-01", "2021-12-31"), ("2020-01-01", "2022-01-01", "2022-12-31"),
       ("2021-01-01", "2023-01-01", "2023-12-31"), ("2022-01-01", "2024-01-01", "2024-12-31"),
       ("2023-01-01", "2025-01-01", "2025-12-31")], "windows of 24 months in, 12 out")
value = 100000.0
for k, w in enumerate(wf["windows"]):
    scores = [ref.sharpe(v["monthly_returns"][12 * k:12 * k + 24]) for v in sweep["variants"]]
    equal(w["variant"], int(np.argmax(scores)) + 1, f"window {k + 1}: the in-sample best")
    close(w["in_sharpe_monthly"], max(scores), f"window {k + 1}: its in-sample Sharpe ratio")
    close(float(w["out_start_value"]), value, f"window {k + 1}: starts where the last ended")
    value = float(w["out_end_value"])
close(wf["twr"], value / 100000 - 1, "stitched return")
first = wf["windows"][0]
chosen = sweep["variants"][first["variant"] - 1]
path = written_rule([(s["key"], s["value"]) for s in chosen["settings"]], "chosen.toml")
bt = demo.json("backtest", "--rule", path, "--from", first["out_from"], "--to", first["out_to"])
equal(first["out_end_value"], bt["rule_run"]["end_value"],
      "the first window out of sample is a back-test of the chosen rule over it")
best_months = sweep["variants"][sweep["best"] - 1]["monthly_returns"][24:]
close(wf["best_variant_twr"], math.prod(1 + r for r in best_months) - 1,
      "the whole-period best over the same months")

# A track record's window varied: the one load reaches back for the longest, and each variant
# still gives the figures of its own back-test, which reads only as far back as it needs.
TRACK = os.path.join(SOURCE, "examples", "demo", "rule-track-record.toml")
with open(TRACK) as f:
    TRACK_TEXT = f.read()
SPAN = ["--from", "2022-01-01", "--to", "2025-12-31", "--frictionless"]
tracked = demo.json("sweep", "--rule", TRACK, *SPAN, "--vary", "track_record.window_months=36,60")
for v in tracked["variants"]:
    months = v["settings"][0]["value"]
    text, n = re.subn(r"(?m)^window_months = .*$", f"window_months = {months}", TRACK_TEXT)
    equal(n, 1, "window_months in the demo's second rule")
    path = os.path.join(demo.dir.name, f"track-{months}.toml")
    with open(path, "w") as f:
        f.write(text)
    bt = demo.json("backtest", "--rule", path, *SPAN)
    equal(v["end_value"], bt["rule_run"]["end_value"], f"window of {months} months: end value")

# The text states how many variants were tried, the figures, and the cautions.
text = demo.ok("sweep", "--rule", RULE, *PERIOD, "--vary", "select.count=8,10,12",
               "--max-variants", "3")
check("3 variants tried, each over the same 84 months of history." in text, text)
check("deflated Sharpe ratio:" in text and "probability of backtest overfitting (PBO):" in text,
      text)
check("expected to do worse out of sample" in text and "not investment advice" in text, text)
err = demo.fails("sweep", "--rule", RULE, *PERIOD, "--vary", "select.count=8,10,12",
                 "--max-variants", "2")
check("Give --max-variants 3 to run them all" in err, err)
print("sweep: ok")
