"""End to end: keel statement on an invented household, in every form but PDF.

Checks: the year's pieces add up exactly (Python's decimal module); the closing value equals the
holdings command's total and realized gains equal the gains command's; the money-weighted return
of the year solves the flows' equation (scipy.optimize.brentq, Debian python3-scipy); the HTML
is well-formed XML (xml.etree, strict) and refers to nothing outside; the XLSX holds numbers with
number formats (python3-openpyxl); the CSV sums agree; refused requests change nothing.
"""
import csv
import datetime
import json
import os
import re
import sys
import xml.etree.ElementTree as ET
import zipfile
from decimal import Decimal

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import check, equal  # noqa: E402
from statement_household import P, T, household  # noqa: E402

k = household()
out_dir = k.dir.name
s = k.json("statement", "--year", "2025", "--benchmark", "IDXW")

# 1. The identity of docs/statement.md, recomputed from the parts with exact decimals.
y = {key: Decimal(v) for key, v in s["summary"].items()}
explained = (y["opening_value"] + y["deposits"] - y["withdrawals"] + y["transfers_in"] - y["transfers_out"]
             + y["dividends"] - y["withholding"] + y["interest"] - y["fees"] + y["realized_gain"]
             + (y["unrealized_closing"] - y["unrealized_opening"]) - y["unrealized_moved"])
equal(explained, y["closing_value"], "pieces add up to the closing value")
equal(y["difference"], Decimal(0), "difference shown")
equal(s["summary"]["closing_value"], "16587.5", "closing value (hand-worked in statement_test.cpp)")
equal(s["summary"]["opening_value"], "10495", "opening value")

h = k.json("holdings", "--as-of", "2025-12-31")
equal(Decimal(h["total_value"]), y["closing_value"], "closing value equals the holdings total")
g = k.json("gains", "--year", "2025")
equal([(x["lot"], x["quantity"], x["proceeds"], x["cost"], x["gain"]) for x in g["gains"]],
      [(x["lot"], x["quantity"], x["proceeds"], x["cost"], x["gain"]) for x in s["realized"]],
      "realized parts equal the gains command's")
equal(sum(Decimal(x["gain"]) for x in s["realized"]), y["realized_gain"], "realized total")

# 2. Money-weighted return of the year: the rate r with
#    sum CF_i (1+r)^(-(d_i - d0)/365) = 0, d0 = 2024-12-31 (actual/365, docs/methods-returns.md).
#    Flows from the portfolio's side: opening value in, deposits and transfers in at market,
#    withdrawals and transfers out at market out, closing value out.
from scipy.optimize import brentq  # noqa: E402

d0 = datetime.date(2024, 12, 31)
flows = [(d0, 10495), (datetime.date(2025, 1, 10), 5000), (datetime.date(2025, 8, 1), -1500),
         (datetime.date(2025, 9, 1), 1000), (datetime.date(2025, 9, 15), -300),
         (datetime.date(2025, 10, 1), 520), (datetime.date(2025, 11, 20), -600),
         (datetime.date(2025, 12, 31), -16587.5)]


def npv(r):
    return sum(a * (1 + r) ** (-(d - d0).days / 365) for d, a in flows)


rate = brentq(npv, -0.9, 5)
year = s["performance"][0]
check(abs(year["mwr_annualized"] - rate) < 1e-9, f"MWR {year['mwr_annualized']} vs scipy {rate}")
check(year["twr"] is not None and year["benchmark"] is not None, "year figures present")
check(abs(year["benchmark"] - 0.1) < 1e-12, "benchmark 1100/1000 - 1")
check(abs(year["excess"] - (year["twr"] - year["benchmark"])) < 1e-12, "excess = TWR - benchmark")
# Linking the twelve monthly returns gives the year's (pandas, Debian python3-pandas), and the
# since-inception rate a year is (1 + R)^(365/days) - 1 (docs/methods-returns.md).
import numpy as np  # noqa: E402
import pandas as pd  # noqa: E402

months = pd.Series([m["twr"] for m in s["months"]])
equal(len(months), 12, "twelve months")
check(abs((1 + months).prod() - 1 - year["twr"]) < 1e-12, "monthly returns link to the year's")
since = s["performance"][1]
check(abs(np.power(1 + since["twr"], 365 / since["days"]) - 1 - since["twr_annualized"]) < 1e-12,
      "since-inception annualized")
check(s["twr_mwr_explanation"] and "timing of deposits" in s["twr_mwr_explanation"],
      "the TWR/MWR difference is explained")
r = k.json("returns", "--year", "2025", "--benchmark", "IDXW")
equal(year["twr"], r["twr"], "year TWR is the returns command's")
equal([p["period"] for p in s["performance"]], ["this year", "since inception", "3 years", "5 years"],
      "performance periods")
equal(s["performance"][2]["available"], False, "3 years not covered")

# 3. Terminal form: within 100 columns, with the cautions.
text = k.ok("statement", "--year", "2025", "--benchmark", "IDXW")
widest = max(len(line) for line in text.splitlines())
check(widest <= 100, f"text is {widest} columns wide")
for needle in ["16587.50", "Check: the pieces add up to the closing value exactly.",
               "Past performance does not predict future results",
               "It is not a tax form", "licensed professional"]:
    check(needle in text, f"text shows {needle!r}")

# 4. HTML: well-formed, self-contained, with three charts.
page = os.path.join(out_dir, "statement.html")
k.ok("statement", "--year", "2025", "--benchmark", "IDXW", "--html", page)
with open(page, encoding="utf-8") as f:
    html = f.read()
root = ET.fromstring(html)  # strict: raises on any unbalanced tag or bad entity
body = root.find("body")
check(body is not None, "html has a body")
equal(len(root.findall(".//svg")), 3, "three SVG charts")
for bad in ["http", "//", "src=", "url(", "@import", "<script", "<link", "<img", "<iframe"]:
    check(bad not in html, f"HTML contains {bad!r}")
check("@page" in html and "break-inside" in html, "print rules present")
check("16,587.50" in html, "closing value in HTML")

# 5. XLSX: numbers with number formats, read back with openpyxl.
import openpyxl  # noqa: E402

book_path = os.path.join(out_dir, "statement.xlsx")
k.ok("statement", "--year", "2025", "--benchmark", "IDXW", "--xlsx", book_path)
wb = openpyxl.load_workbook(book_path)
equal(wb.sheetnames, ["summary", "performance", "growth", "monthly", "holdings", "realized", "income",
                     "withholding", "cautions"], "sheets")
ws = wb["summary"]
equal(ws["A3"].value, "item", "summary heading")
rows = {ws.cell(row=i, column=1).value: ws.cell(row=i, column=2) for i in range(4, ws.max_row + 1)}
closing = rows["closing value (close of 2025-12-31)"]
check(isinstance(closing.value, (int, float)), f"closing is a number, not {type(closing.value)}")
check(abs(closing.value - 16587.5) < 1e-9, "closing value in XLSX")
check(closing.number_format.startswith("#,##0.00"), f"money format {closing.number_format}")
equal(rows["withdrawals"].value, -1500, "withdrawals signed")
perf_ws = wb["performance"]
twr_cell = [perf_ws.cell(row=i, column=2) for i in range(4, perf_ws.max_row + 1)
            if perf_ws.cell(row=i, column=1).value == "time-weighted"][0]
check(abs(twr_cell.value - year["twr"]) < 1e-12, "TWR number in XLSX")
equal(twr_cell.number_format, "0.00%", "percent format")
real = wb["realized"]
acquired = real.cell(row=4, column=4)
check(isinstance(acquired.value, datetime.datetime), f"acquired is a date, not {acquired.value!r}")
equal(acquired.value.date(), datetime.date(2024, 3, 4), "acquired day")
check(abs(real.cell(row=4, column=9).value - 591) < 1e-9, "gain of the first part")

# 5b. XLSX totals are formulas over their own column; the cached result is keel's exact figure
# (statement --json), and the formula, worked out here in Python's decimal from the cells it
# names, gives that figure too.
values = openpyxl.load_workbook(book_path, data_only=True)  # cached results


def cell_decimal(sheet, ref):
    """A cell's number; a cell that is itself a total counts with its cached result."""
    v = wb[sheet][ref].value
    if isinstance(v, str) and v.startswith("="):
        v = values[sheet][ref].value
    return Decimal(0) if v is None else Decimal(repr(v))


def evaluate(sheet, formula):
    m = re.fullmatch(r"=SUM\(([A-Z])(\d+):([A-Z])(\d+)\)", formula)
    if m:
        col, a, _, b = m.groups()
        return sum(cell_decimal(sheet, f"{col}{r}") for r in range(int(a), int(b) + 1))
    m = re.fullmatch(r'=SUMIF\(([A-Z])(\d+):[A-Z](\d+),"(\w+)",([A-Z])\d+:[A-Z]\d+\)', formula)
    if m:
        key, a, b, text, col = m.groups()
        return sum(cell_decimal(sheet, f"{col}{r}") for r in range(int(a), int(b) + 1)
                   if wb[sheet][f"{key}{r}"].value == text)
    m = re.fullmatch(r"=([A-Z]\d+)-([A-Z]\d+)", formula)
    check(m, f"a formula keel writes: {formula}")
    return cell_decimal(sheet, m.group(1)) - cell_decimal(sheet, m.group(2))


def total(sheet, label, column, expected):
    row = next(r for r in range(4, wb[sheet].max_row + 1) if wb[sheet][f"A{r}"].value == label)
    formula = wb[sheet][f"{column}{row}"].value
    check(isinstance(formula, str) and formula.startswith("="), f"{sheet} {label}: {formula!r}")
    cached = values[sheet][f"{column}{row}"].value
    equal(cached, float(Decimal(expected)), f"{sheet} {label} {column}: cached value")
    equal(evaluate(sheet, formula), Decimal(expected), f"{sheet} {label} {column}: {formula}")
    return formula


statement_json = k.json("statement", "--year", "2025", "--benchmark", "IDXW")
sj = statement_json["summary"]
equal(total("summary", "opening value plus the pieces", "B", sj["explained_closing"]), "=SUM(B4:B15)",
      "the pieces' formula")
equal(total("summary", "difference", "B", sj["difference"]), "=B17-B16", "the difference's formula")
cost = sum(Decimal(h["cost_basis"]) for h in statement_json["holdings"])
unrealized = sum(Decimal(h["unrealized_gain"]) for h in statement_json["holdings"])
total("holdings", "total", "D", cost)
total("holdings", "total", "F", statement_json["holdings_total"])
total("holdings", "total", "G", unrealized)
rt = statement_json["realized_totals"]
for label, term in (("total short-term", "short"), ("total long-term", "long")):
    for column, key in (("G", "proceeds"), ("H", "cost"), ("I", "gain")):
        check(total("realized", label, column, rt[term][key]).startswith("=SUMIF("), label)
for column, key in (("G", "proceeds"), ("H", "cost"), ("I", "gain")):
    total("realized", "total", column, Decimal(rt["short"][key]) + Decimal(rt["long"][key]))
income = statement_json["income"] + statement_json["unmatched_tax"]
total("income", "total", "E", sum(Decimal(r.get("gross", "0")) for r in statement_json["income"]))
withheld = sum(Decimal(r["withheld"]) for r in statement_json["income"]) + sum(
    Decimal(r["amount"]) for r in statement_json["unmatched_tax"])
total("income", "total", "F", withheld)
# Every account here is taxable: the withholding by security sums every tax row, as a formula.
equal(Decimal(statement_json["withholding"]["total"]), withheld, "withholding by security")
check(total("withholding", "total", "D", withheld).startswith("=SUM("), "withholding total")

# Autofilters: over each table's heading and detail rows, the totals left out.
filters = {name: wb[name].auto_filter.ref for name in wb.sheetnames}
equal(filters["summary"], "A3:B15", "summary autofilter")
equal(filters["holdings"], f"A3:H{3 + len(statement_json['holdings']) + len(statement_json['cash'])}",
      "holdings autofilter")
equal(filters["realized"], f"A3:J{3 + len(statement_json['realized'])}", "realized autofilter")
equal(filters["monthly"], "A3:D15", "monthly autofilter")
check(filters["cautions"] is None, "no autofilter on the cautions")

# Native charts, as the workbook's drawing parts declare them (ECMA-376 DrawingML charts).
with zipfile.ZipFile(book_path) as z:
    charts = sorted(n for n in z.namelist() if re.fullmatch(r"xl/charts/chart\d+\.xml", n))
    chart_xml = [z.read(n).decode() for n in charts]
equal(len(charts), 2, "two charts")
line = next(x for x in chart_xml if "<c:lineChart>" in x)
bars = next(x for x in chart_xml if "<c:barChart>" in x)
equal(re.findall(r"<c:val><c:numRef><c:f>([^<]+)</c:f>", line),
      ["growth!$B$4:$B$" + str(3 + wb["growth"].max_row - 3), "growth!$C$4:$C$" + str(wb["growth"].max_row)],
      "the growth chart's series")
equal(re.findall(r"<c:val><c:numRef><c:f>([^<]+)</c:f>", bars),
      ["monthly!$B$4:$B$15", "monthly!$C$4:$C$15"], "the monthly chart's series")
growth_rows = [(wb["growth"][f"A{r}"].value, wb["growth"][f"B{r}"].value)
               for r in range(4, wb["growth"].max_row + 1)]
check(len(growth_rows) >= 13, f"the growth sheet has a point per valuation day ({len(growth_rows)})")
check(all(isinstance(d, datetime.datetime) for d, _ in growth_rows), "growth days are dates")
check(abs(growth_rows[-1][1] - year["twr"]) < 1e-9, "the growth ends at the year's TWR")

# 6. CSV: one file per section; the summary's signed pieces add up to the closing value.
csv_dir = os.path.join(out_dir, "csv")
k.ok("statement", "--year", "2025", "--benchmark", "IDXW", "--csv", csv_dir)
equal(sorted(os.listdir(csv_dir)), sorted(f"{n}.csv" for n in wb.sheetnames if n != "growth"),
      "CSV files")
with open(os.path.join(csv_dir, "summary.csv"), newline="") as f:
    summary_rows = list(csv.reader(f))
pieces = summary_rows[1:summary_rows.index(next(r for r in summary_rows if r[0] == "opening value plus the pieces"))]
equal(sum(Decimal(r[1]) for r in pieces), Decimal("16587.5"), "CSV pieces sum")
with open(os.path.join(csv_dir, "income.csv"), newline="") as f:
    income = list(csv.DictReader(f))
equal([(r["date"], r["withheld"]) for r in income][:3],
      [("2025-03-14", "12"), ("2025-04-01", "3"), ("2025-12-15", "1.5")], "withholding matched")
equal(income[3]["kind"], "tax, unmatched", "unmatched tax listed")

# 7. One account, and a threshold in days.
tax = k.json("statement", "--year", "2025", "--account", T, "--long-term-days", "500")
equal(tax["summary"]["difference"], "0", "Taxable adds up")
equal({x["class"] for x in tax["realized"]}, {"short"}, "500-day threshold: all short")
pension = k.json("statement", "--year", "2025", "--account", P)
equal(pension["summary"]["transfers_in"], "1100", "internal transfer is a flow for the pension")

# 8. Refused requests: a clear message naming the option, exit 1, nothing written or changed.
before = k.ok("history", "--json")
cases = [
    (["--year", "twenty"], "keel: error: --year: 'twenty' is not a year a statement covers (6 to "
                              "9999; it looks back 5 years)"),
    (["--year", "2025", "--account", "Nobody"], "keel: error: --account: there is no account named 'Nobody'"),
    (["--year", "2025", "--long-term-days", "-3"],
     "keel: error: --long-term-days: '-3' is not a number of days (1 or more)"),
    (["--year", "2023"], "keel: error: --year: ends on 2023-12-31, before the first transaction day 2024-03-01"),
    (["--year", "2025", "--html", os.path.join(out_dir, "missing", "s.html")],
     f"keel: error: --html {out_dir}/missing/s.html: the folder '{out_dir}/missing' does not exist"),
    (["--year", "2025", "--xlsx", out_dir], f"keel: error: --xlsx {out_dir}: is a folder, not a file"),
    (["--year", "2025", "--csv", page], f"keel: error: --csv {page}: exists and is not a folder"),
]
for args, message in cases:
    code, _, err = k.run("statement", *args)
    equal(code, 1, f"exit code of {args}")
    equal(err.strip(), message, f"message of {args}")
check(not os.path.exists(os.path.join(out_dir, "missing")), "nothing created for a refused request")
equal(k.ok("history", "--json"), before, "ledger unchanged")

# --pdf without a Chromium on PATH says how to install it, before writing anything.
env_path = os.environ.get("PATH", "")
os.environ["PATH"] = "/nonexistent"
try:
    code, _, err = k.run("statement", "--year", "2025", "--pdf", os.path.join(out_dir, "x.pdf"),
                         "--html", os.path.join(out_dir, "y.html"))
finally:
    os.environ["PATH"] = env_path
equal(code, 1, "pdf without chromium exits 1")
check("apt-get install chromium" in err, err)
check(not os.path.exists(os.path.join(out_dir, "y.html")), "no HTML written when the PDF cannot be")
print("statement: all checks passed")
