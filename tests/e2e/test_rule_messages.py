"""End to end: a rule that does not fit the ledger is refused with the same
words by `keel propose`, `keel backtest` and `keel signal` (one input builder,
rules/inputs.h, writes every message), and a day on which the rule selects
nothing is told the same way by all three.

Data: 40 invented names x 2 years from tests/bench/gen_market.py (sectors
Tools, Power, Care, Goods, Transport; metrics book_per_share and
earnings_yield).
"""
import os
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import SOURCE, Ledger, check, equal  # noqa: E402

PY = "/usr/bin/python3"
SCOPE = '[scope]\naccounts = ["Main"]\n'


def main():
    with tempfile.TemporaryDirectory(prefix="keel-msg-") as tmp:
        data = os.path.join(tmp, "data")
        subprocess.run([PY, os.path.join(SOURCE, "tests", "bench", "gen_market.py"), data,
                        "--securities", "40", "--years", "2", "--start", "2021-01-04"],
                       check=True)
        led = Ledger()
        for what in ("securities", "prices", "metrics"):
            led.ok("import", what, os.path.join(data, f"{what}.csv"), "--quiet")
        led.ok("account", "add", "Main")
        led.ok("record", "deposit", "--date", "2021-01-04", "--account", "Main", "--amount",
               "100000")

        def rule(name, body):
            path = os.path.join(tmp, name + ".toml")
            with open(path, "w") as f:
                f.write(SCOPE + body)
            return path

        def all_three(path):
            """The error of each command for the rule file; they must be the same."""
            errs = [led.fails("propose", "--rule", path, "--as-of", "2022-06-30"),
                    led.fails("backtest", "--rule", path, "--from", "2021-03-01", "--to",
                              "2022-12-30"),
                    led.fails("signal", "--rule", path, "--from", "2021-03-01", "--to",
                              "2022-12-30")]
            equal(errs[1], errs[0], f"{path}: backtest's message against propose's")
            equal(errs[2], errs[0], f"{path}: signal's message against propose's")
            return errs[0]

        nowhere = rule("nowhere", 'sector = "Nowhere"\n[screen]\nmetric = "earnings_yield"\n')
        equal(all_three(nowhere),
              f"keel: error: {nowhere}:3: key 'scope.sector': no stock in the ledger has sector "
              "'Nowhere' (sectors: Care, Goods, Power, Tools, Transport)", "unknown sector")

        typo = rule("typo", '[screen]\nmetric = "earnings_yeild"\n')
        equal(all_three(typo),
              f"keel: error: {typo}:4: key 'screen.metric': the ledger holds no figures for "
              "metric 'earnings_yeild'; did you mean 'earnings_yield'?", "misspelt metric")

        unstored = rule("unstored", "")
        equal(all_three(unstored),
              f"keel: error: {unstored}: key 'screen.metric' (default \"pe\"): the ledger holds "
              "no figures for metric 'pe' (stored metrics: book_per_share, earnings_yield)",
              "metric without figures")

        symbol = rule("symbol", 'symbols = ["K0001", "ZZQ"]\n[screen]\nmetric = "earnings_yield"\n')
        equal(all_three(symbol),
              f"keel: error: {symbol}:3: key 'scope.symbols': no security 'ZZQ' in the ledger",
              "unknown symbol")

        sleeve = rule("sleeve", '[screen]\nmetric = "earnings_yield"\n'
                                '[[sleeve]]\nsymbol = "ZZQ"\nweight_pct = 10\n')
        equal(all_three(sleeve),
              f"keel: error: {sleeve}:6: key 'sleeve.symbol': no security 'ZZQ' in the ledger",
              "unknown sleeve")

        # A rule that selects nothing: propose refuses, the back-test holds
        # cash that day and the signal check skips it, each with one message.
        empty = rule("empty", '[screen]\nmetric = "earnings_yield"\nmin_names = 500\n')
        day = "2022-06-30"
        why = led.fails("propose", "--rule", empty, "--as-of", day)
        check(why.startswith(f"keel: error: {empty}:5: key 'screen.min_names': only "), why)
        why = why[len("keel: error: "):]
        bt = led.json("backtest", "--rule", empty, "--from", "2022-06-01", "--to", "2022-07-29")
        equal(bt["rule_run"]["rebalances"][0]["date"], day, "first rebalancing day")
        check(f"{day} (rule): nothing selected, the pool holds cash: {why}" in bt["notes"],
              f"back-test notes: {bt['notes']}")
        equal(bt["rule_run"]["rebalances"][0]["no_selection"], why, "rebalance record")
        sig = led.json("signal", "--rule", empty, "--from", "2022-06-01", "--to", "2022-07-29")
        check(f"{day}: skipped: {why}" in sig["notes"], f"signal notes: {sig['notes']}")
        print("rule messages: propose, backtest and signal say the same")


if __name__ == "__main__":
    main()
