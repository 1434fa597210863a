"""End to end: the statement printed by headless Chromium, to PDF (keel statement --pdf) and to a
PNG screenshot of the HTML; pdftotext (Debian poppler-utils) must find the key figures.

- The paper: --paper a4|letter, else the locale's (glibc LC_PAPER; locales compiled here with
  localedef into a scratch LOCPATH), else A4; pdfinfo reads the page size, openpyxl the XLSX's.
- Every page carries the running title and "page N of M" (pdftotext, page by page).
- Dates never wrap, even beside a long account name on Letter paper.

Skips (exit 77) only when no Chromium is installed: apt-get install chromium poppler-utils.
Set KEEL_STATEMENT_ARTIFACTS=DIR to keep the PDF and PNG for a look.
"""
import os
import re
import shutil
import subprocess
import sys

sys.path.insert(0, os.path.dirname(__file__))
import browser  # noqa: E402
from keel_cli import KEEL, Ledger, check, equal  # noqa: E402
from statement_household import household  # noqa: E402

chromium = browser.find_chromium()
if not chromium:
    print("SKIP: no chromium on PATH; install it with: apt-get install chromium")
    sys.exit(77)
pdftotext = shutil.which("pdftotext")
check(pdftotext is not None, "pdftotext is missing: apt-get install poppler-utils")

k = household()
work = k.dir.name
pdf = os.path.join(work, "statement.pdf")
html = os.path.join(work, "statement.html")
out = k.ok("statement", "--year", "2025", "--benchmark", "IDXW", "--pdf", pdf, "--html", html)
check(f"wrote PDF {pdf}" in out, out)
with open(pdf, "rb") as f:
    check(f.read(5) == b"%PDF-", "a PDF file")

text = subprocess.run([pdftotext, "-layout", pdf, "-"], capture_output=True, text=True, check=True).stdout
for needle in ["Statement 2025", "The year in one table", "16,587.50",  # closing value
               "10,495.00",  # opening value
               "689.00",  # realized gain
               "-23.50",  # withholding and other tax
               "Check: the pieces add up to the closing value exactly.",
               "Realized gains, by closed lot", "Income and withholding",
               "Past performance does not predict future results",
               "not a tax form", "licensed professional"]:
    check(needle in text, f"PDF text shows {needle!r}")
pages = subprocess.run(["pdfinfo", pdf], capture_output=True, text=True, check=True).stdout
check("Pages:" in pages, pages)

png = os.path.join(work, "statement.png")
browser.render(chromium, html, png)
with open(png, "rb") as f:
    equal(f.read(8), b"\x89PNG\r\n\x1a\n", "a PNG screenshot")



def pdf_pages(path):
    info = subprocess.run(["pdfinfo", path], capture_output=True, text=True, check=True).stdout
    pages = int(re.search(r"^Pages:\s+(\d+)$", info, re.M).group(1))
    size = re.search(r"^Page size:\s+(.*)$", info, re.M).group(1)
    texts = [subprocess.run([pdftotext, "-layout", "-f", str(i), "-l", str(i), path, "-"],
                            capture_output=True, text=True, check=True).stdout
             for i in range(1, pages + 1)]
    return size, texts


# --- the running title and page numbers on every page ---
size, texts = pdf_pages(pdf)
check(len(texts) >= 2, f"the statement spans pages ({len(texts)})")
for i, page_text in enumerate(texts, 1):
    check("Statement 2025 \u2014 all accounts" in page_text.split("\n", 3)[0] + page_text[:400],
          f"page {i} starts with the running title")
    check(re.search(rf"^\s*page {i} of {len(texts)}\s*$", page_text, re.M),
          f"page {i} says 'page {i} of {len(texts)}'")
    check("2025-01-01 to 2025-12-31" in page_text[:400], f"page {i} names the period")


# --- the paper ---
def statement_pdf(ledger, name, *args, env_extra=None):
    env = {k: v for k, v in os.environ.items() if not k.startswith("LC_") and k != "LANG"}
    env.update(NO_COLOR="1", **(env_extra or {}))
    target = os.path.join(work, name)
    p = subprocess.run([KEEL, "--db", ledger.path, "statement", "--year", "2025", "--pdf",
                        target + ".pdf", "--xlsx", target + ".xlsx", *args],
                       capture_output=True, text=True, env=env, timeout=300)
    equal((p.returncode, p.stderr), (0, ""), f"statement {name}")
    return target


# pdfinfo names the standard size a page is closest to.
A4, LETTER = "(A4)", "(letter)"
import openpyxl  # noqa: E402

for name, args, extra, want, code in [
        ("no-locale", [], {}, A4, 9), ("c-locale", [], {"LANG": "C.UTF-8"}, A4, 9),
        ("letter", ["--paper", "letter"], {}, LETTER, 1),
        ("a4-over-locale", ["--paper", "A4"], {"LC_ALL": "C.UTF-8"}, A4, 9)]:
    target = statement_pdf(k, name, *args, env_extra=extra)
    equal(pdf_pages(target + ".pdf")[0].split()[-1], want, f"page size, {name}")
    equal(openpyxl.load_workbook(target + ".xlsx")["summary"].page_setup.paperSize, code,
          f"XLSX paper code, {name}")

localedef = shutil.which("localedef")
check(localedef and os.path.isdir("/usr/share/i18n/locales"),
      "localedef and glibc's locale sources are missing: apt-get install locales")
locales = os.path.join(work, "locales")
os.makedirs(locales)
for loc in ("en_US", "de_DE"):
    subprocess.run([localedef, "-i", loc, "-f", "UTF-8", os.path.join(locales, f"{loc}.UTF-8")],
                   check=True, capture_output=True, timeout=120)
for name, extra, want in [
        ("us-locale", {"LOCPATH": locales, "LANG": "en_US.UTF-8"}, LETTER),
        ("us-paper-only", {"LOCPATH": locales, "LANG": "de_DE.UTF-8", "LC_PAPER": "en_US.UTF-8"},
         LETTER),
        ("german-locale", {"LOCPATH": locales, "LANG": "en_US.UTF-8", "LC_ALL": "de_DE.UTF-8"}, A4)]:
    target = statement_pdf(k, name, env_extra=extra)
    equal(pdf_pages(target + ".pdf")[0].split()[-1], want, f"page size from the locale, {name}")

# --- dates never wrap: a long account name squeezes the gains table on Letter paper ---
wide = Ledger()
A = "Harbor Family Trust, Joint Taxable Brokerage Account at Quillon Securities"
wide.ok("account", "add", A)
wide.ok("security", "add", "QLMN", "--name", "Quillmont Holdings", "--kind", "stock")
closes = os.path.join(wide.dir.name, "closes.csv")
with open(closes, "w") as f:
    f.write("date,symbol,close\n2024-12-31,QLMN,10\n2025-12-31,QLMN,12\n")
wide.ok("import", "prices", closes, "--quiet")
wide.ok("record", "deposit", "--date", "2024-01-02", "--account", A, "--amount", "100000")
for day in ("2024-01-03", "2024-02-05", "2024-03-04", "2025-01-06"):
    wide.ok("record", "buy", "--date", day, "--account", A, "--symbol", "QLMN", "--quantity", "1000",
            "--price", "10.5")
wide.ok("record", "sell", "--date", "2025-06-02", "--account", A, "--symbol", "QLMN", "--quantity",
        "3500", "--price", "11.25", "--fee", "9.95")
target = statement_pdf(wide, "wide", "--paper", "letter")
text = "".join(pdf_pages(target + ".pdf")[1])
gains = text[text.index("Realized gains, by closed lot"):text.index("Holding period")]
check(re.search(r"\bHarbor Family\s*\n", gains), "the long name itself wraps (the squeeze is real)")
equal(len(re.findall(r"\b2025-06-02\b", gains)), 4, "every sale day whole in the gains table")
equal(re.findall(r"\b\d{4}-\d\d-\d\d\b", gains).count("2024-02-05"), 1, "an acquisition day whole")
check(not re.search(r"\d{4}-(\d\d-?)?\s*$", gains, re.M), "no line ends inside a date")

keep = os.environ.get("KEEL_STATEMENT_ARTIFACTS")
if keep:
    os.makedirs(keep, exist_ok=True)
    for p in (pdf, png, html):
        shutil.copy(p, keep)
print("statement browser: all checks passed")
