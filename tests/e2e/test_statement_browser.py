"""End to end: the statement printed by headless Chromium, to PDF (keel statement --pdf) and to a
PNG screenshot of the HTML; pdftotext (Debian poppler-utils) must find the key figures.

Skips (exit 77) only when no Chromium is installed: apt-get install chromium poppler-utils.
Set KEEL_STATEMENT_ARTIFACTS=DIR to keep the PDF and PNG for a look.
"""
import os
import shutil
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import check, equal  # noqa: E402
from statement_household import household  # noqa: E402

chromium = shutil.which("chromium") or shutil.which("chromium-browser")
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
profile = tempfile.mkdtemp(prefix="keel-shot-")
try:
    subprocess.run([chromium, "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                    "--disable-component-update", "--disable-sync", "--no-first-run", "--hide-scrollbars",
                    f"--user-data-dir={profile}", f"--screenshot={png}", "--window-size=900,3400",
                    "file://" + html], capture_output=True, timeout=180, check=True)
finally:
    shutil.rmtree(profile, ignore_errors=True)
with open(png, "rb") as f:
    equal(f.read(8), b"\x89PNG\r\n\x1a\n", "a PNG screenshot")

keep = os.environ.get("KEEL_STATEMENT_ARTIFACTS")
if keep:
    os.makedirs(keep, exist_ok=True)
    for p in (pdf, png, html):
        shutil.copy(p, keep)
print("statement browser: all checks passed")
