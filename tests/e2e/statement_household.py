"""An invented household for the statement tests, built through the keel binary.

The same story as tests/unit/statement_test.cpp (figures worked out there): two accounts, every
transaction kind, a split, a void and an internal transfer; statement year 2025.
"""
import os
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import Ledger  # noqa: E402

T, P = "Harbor Taxable", "Harbor Pension"

CLOSES = [
    ("2024-12-31", "ALDR", "45"),
    ("2025-10-01", "ALDR", "52"),
    ("2025-11-28", "ALDR", "55"),
    ("2025-12-31", "ALDR", "60"),
    ("2025-11-20", "BRKN", "12"),
    ("2025-12-31", "BRKN", "13"),
] + [(d, "IDXW", v) for d, v in [
    ("2024-12-31", "1000"), ("2025-01-31", "1010"), ("2025-02-28", "990"), ("2025-03-31", "1030"),
    ("2025-04-30", "1040"), ("2025-05-30", "1020"), ("2025-06-30", "1050"), ("2025-07-31", "1060"),
    ("2025-08-29", "1045"), ("2025-09-30", "1070"), ("2025-10-31", "1080"), ("2025-11-28", "1090"),
    ("2025-12-31", "1100")]]


def household():
    k = Ledger()
    k.ok("account", "add", T)
    k.ok("account", "add", P)
    k.ok("security", "add", "ALDR", "--name", "Alder & Finch Mills", "--kind", "stock")
    k.ok("security", "add", "BRKN", "--name", "Bracken Rail", "--kind", "stock")
    k.ok("security", "add", "IDXW", "--name", "Wide Market Index (invented)", "--kind", "index")
    prices = os.path.join(k.dir.name, "closes.csv")
    with open(prices, "w") as f:
        f.write("date,symbol,close\n")
        for d, s, c in CLOSES:
            f.write(f"{d},{s},{c}\n")
    k.ok("import", "prices", prices, "--quiet")

    def rec(kind, date, *args):
        k.ok("record", kind, "--date", date, *args)

    rec("deposit", "2024-03-01", "--account", T, "--amount", "10000")
    rec("buy", "2024-03-04", "--account", T, "--symbol", "ALDR", "--quantity", "100", "--price", "40", "--fee", "5")
    rec("deposit", "2025-01-10", "--account", T, "--amount", "5000")
    rec("buy", "2025-02-03", "--account", T, "--symbol", "BRKN", "--quantity", "200", "--price", "20", "--fee", "4")
    rec("dividend", "2025-03-14", "--account", T, "--symbol", "ALDR", "--amount", "80")
    rec("tax", "2025-03-14", "--account", T, "--symbol", "ALDR", "--amount", "12")
    rec("interest", "2025-04-01", "--account", T, "--amount", "15")
    rec("tax", "2025-04-01", "--account", T, "--amount", "3")
    rec("sell", "2025-05-02", "--account", T, "--symbol", "ALDR", "--quantity", "60", "--price", "50", "--fee", "6")
    rec("tax", "2025-06-30", "--account", T, "--amount", "7")
    rec("fee", "2025-07-01", "--account", T, "--amount", "25")
    rec("withdrawal", "2025-08-01", "--account", T, "--amount", "1500")
    rec("transfer_in", "2025-09-01", "--account", T, "--amount", "1000")
    rec("transfer_out", "2025-09-15", "--account", T, "--amount", "300")
    rec("transfer_in", "2025-10-01", "--account", T, "--symbol", "ALDR", "--quantity", "10", "--price", "30",
        "--fee", "2", "--acquired", "2023-06-01")
    k.ok("record", "split", "--date", "2025-10-15", "--symbol", "BRKN", "--ratio", "2")
    rec("sell", "2025-11-03", "--account", T, "--symbol", "BRKN", "--quantity", "100", "--price", "11", "--fee", "1")
    rec("transfer_out", "2025-11-20", "--account", T, "--symbol", "BRKN", "--quantity", "50")
    rec("transfer_out", "2025-12-01", "--account", T, "--to-account", P, "--symbol", "ALDR", "--quantity", "20",
        "--fee", "1")
    rec("dividend", "2025-12-15", "--account", P, "--symbol", "ALDR", "--amount", "10")
    rec("tax", "2025-12-15", "--account", P, "--symbol", "ALDR", "--amount", "1.5")
    rec("deposit", "2025-12-20", "--account", T, "--amount", "999", "--ref", "twice")
    mistaken = [t["id"] for t in k.json("history")["transactions"] if t.get("ref") == "twice"][0]
    k.ok("void", str(mistaken), "--reason", "entered twice")
    return k
