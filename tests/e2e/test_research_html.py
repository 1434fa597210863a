"""End to end: the research pages (keel backtest, compare, signal and sweep with --html) from the
demo scenario's invented data, each rendered once by headless Chromium (tests/e2e/browser.py) to a
PNG screenshot and its DOM.

- The page is not blank: a good share of the screenshot's pixels differ from the page's ground.
- Every chart is there: an <svg> per chart, each with its title as text.
- Key figures are in the DOM exactly as the text report prints them.
- The page is one self-contained file: no scripts, no links or sources outside it.
- `--html -` writes the page to standard output and the report to standard error.

Skips (exit 77) only when no Chromium is installed: apt-get install chromium.
Set KEEL_RESEARCH_ARTIFACTS=DIR to keep the pages and screenshots for a look.
"""
import html as html_text
import os
import time
import re
import shutil
import sys

sys.path.insert(0, os.path.dirname(__file__))
import browser  # noqa: E402
from keel_cli import SOURCE, Ledger, check, equal  # noqa: E402

chromium = browser.find_chromium()
if not chromium:
    print("SKIP: no chromium on PATH; install it with: apt-get install chromium")
    sys.exit(77)

T0 = time.time()
demo = Ledger(currency=None)
demo.import_demo(transactions=False)
RULE = os.path.join(SOURCE, "examples", "demo", "rule.toml")
FIVE = os.path.join(SOURCE, "examples", "compare", "five.toml")
PERIOD = ["--from", "2022-01-01", "--to", "2025-12-31"]
work = demo.dir.name


def page(name, *args):
    """Runs a command with --html; returns its text report and the page."""
    target = os.path.join(work, name + ".html")
    out = demo.ok(*args, "--html", target)
    check(out.endswith(f"wrote HTML page {target}\n"), f"{name}: names the page it wrote")
    with open(target, encoding="utf-8") as f:
        return out, f.read()


def rendered(name, report, charts, figures):
    """Renders the page once; checks it is inked, has every chart and every figure."""
    target = os.path.join(work, name + ".html")
    png = os.path.join(work, name + ".png")
    dom = browser.render(chromium, target, png, window="900,1200", dump_dom=True)
    inked, total = browser.inked_pixels(png)
    check(inked > total // 20, f"{name}: the screenshot is not blank ({inked} of {total} inked)")
    svgs = re.findall(r"<svg\b.*?</svg>", dom, re.S)
    titles = [html_text.unescape(t) for t in re.findall(r'<text [^>]*class="title"[^>]*>(.*?)</text>', dom)]
    equal(titles, charts, f"{name}: one chart per title, in order")
    equal(len(svgs), len(charts), f"{name}: an <svg> per chart")
    text = html_text.unescape(re.sub(r"<[^>]+>", "", dom))
    for figure in figures:
        check(figure in text, f"{name}: the page shows {figure!r}")
    cautions = re.search(r"^Cautions:\n((?:  - .*\n)+)", report, re.M).group(1)
    for caution in re.findall(r"^  - (.*)$", cautions, re.M):
        check(caution in text, f"{name}: the page ends with the caution {caution!r}")
    check("not investment advice" in text and "Past results do not predict" in text,
          f"{name}: cautions at the top")
    return dom


def self_contained(name, source):
    check("<script" not in source.lower(), f"{name}: no scripts")
    check(not re.search(r"\b(src|href)\s*=", source, re.I), f"{name}: no sources or links")
    check(not re.search(r"url\(", source, re.I), f"{name}: no CSS url()")
    check(re.findall(r"https?://[^\s\"']+", source) ==
          ["http://www.w3.org/2000/svg"] * source.count("<svg "), f"{name}: nothing fetched")


def row(text, label):
    """The cells of a text table's row, by its label."""
    for line in text.splitlines():
        if line.startswith(label + "  "):
            return line[len(label):].split()
    raise AssertionError(f"no row {label!r} in:\n{text}")


# --- back-test ---
out, source = page("backtest", "backtest", "--rule", RULE, *PERIOD, "--benchmark", "ZXTR")
self_contained("backtest", source)
twr = row(out, "return (time-weighted)")
end = row(out, "end value")
rendered("backtest", out, [
    "Value of the rule, the equal-weight baseline and the benchmark",
    "Drawdown: the fall below each one's running peak",
    "Rolling 12-month excess of the rule over the benchmark",
    "The rule's return in each complete month",
    "Names held after each rebalancing day",
    "Turnover on each rebalancing day"],
    [twr[0], twr[1], twr[2], end[0], end[1], "Held 12 months from the start of any complete month"])

# --- comparison of rules ---
out, source = page("compare", "compare", RULE, FIVE, *PERIOD, "--benchmark", "ZXTR",
                   "--hold-months", "12")
self_contained("compare", source)
starts = re.search(r": (\d+) starts, (\S+) to (\S+)\n", out)
left_out = re.search(r"^(\d+) of (\d+) start months are left out above", out, re.M)
check(left_out, "compare: the text leaves start months out and says so")
dom = rendered("compare", out, [
    "Value of every rule, the baseline and the benchmark",
    "How often 'Low P/E, ten names' was ahead of the benchmark ZXTR, held 12 months",
    "Excess over the benchmark ZXTR by start month, held 12 months",
    "Return held 12 months, by start month",
    "Mean return when the benchmark ZXTR fell or rose"],
    row(out, "end value") + row(out, "median"))
text = re.sub(r"<[^>]+>", "", dom)
equal(len(re.findall(r"^20\d\d-\d\d  ", text, re.M)), int(starts.group(1)),
      "compare: the page lists every start month")

# --- signal check ---
out, source = page("signal", "signal", "--rule", RULE, *PERIOD, "--horizons", "1,3")
self_contained("signal", source)
rendered("signal", out, [
    "Mean information coefficient by forward window",
    "Mean 1 month forward return of each fifth of the names by z",
    "Mean 3 months forward return of each fifth of the names by z"],
    row(out, "     1") + row(out, "     3"))

# --- sweep ---
out, source = page("sweep", "sweep", "--rule", RULE, *PERIOD, "--vary", "select.count=8,10",
                   "--vary", "trading.drift_pct_points=0,1.5", "--walk-forward", "24:12")
self_contained("sweep", source)
dsr = re.search(r"deflated Sharpe ratio: \S+", out).group(0)
pbo = re.search(r"probability of backtest overfitting \(PBO\): \S+", out).group(0)
rendered("sweep", out, [
    "In sample against out of sample: every variant's Sharpe ratio",
    "Walk-forward: the chosen variant's return in each window out of sample"],
    ["4 variants tried", dsr, pbo])

# --- a page on standard output, the report on standard error ---
code, stdout, stderr = demo.run("signal", "--rule", RULE, *PERIOD, "--horizons", "1", "--html", "-")
equal(code, 0, "signal --html -")
check(stdout.startswith("<!DOCTYPE html>") and stdout.endswith("</html>\n"), "the page on stdout")
check(stderr.startswith("Signal check of rule 'Low P/E, ten names'"), "the report on stderr")

keep = os.environ.get("KEEL_RESEARCH_ARTIFACTS")
if keep:
    os.makedirs(keep, exist_ok=True)
    for name in ["backtest", "compare", "signal", "sweep"]:
        for ext in (".html", ".png"):
            shutil.copy(os.path.join(work, name + ext), keep)
print(f"research pages: all checks passed ({time.time() - T0:.1f} s)")
