"""Reports at a terminal, run in a pseudo-terminal (Python's pty module) of a set size.

- At 80 and 120 columns tables fit: names and notes shorten with an ellipsis, numbers are
  never cut, and when shortening is not enough the less important columns are left out with a
  note naming them. The screens are compared exactly.
- Piped output keeps every column at full width, whatever the terminal.
- Names in double-width characters line up (widths in terminal columns, not code points).
- Long output goes through $PAGER at a terminal, never when piped, never with --no-pager;
  short output is printed directly.
- `-` reads standard input for import files, mappings and rule files.
"""
import fcntl
import os
import pty
import re
import select
import struct
import subprocess
import sys
import termios
import unicodedata

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import KEEL, Ledger, check, equal  # noqa: E402


def at_terminal(args, columns, rows=50, env_extra=None):
    """Runs keel with its standard output on a pseudo-terminal of the given size; returns
    (exit code, what the terminal received with CR LF as LF)."""
    pid, fd = pty.fork()
    if pid == 0:
        env = dict(os.environ, NO_COLOR="1", TERM="dumb", **(env_extra or {}))
        env.pop("COLUMNS", None)
        env.pop("LINES", None)
        try:
            os.execve(KEEL, [KEEL, *args], env)
        finally:
            os._exit(127)
    fcntl.ioctl(fd, termios.TIOCSWINSZ, struct.pack("HHHH", rows, columns, 0, 0))
    chunks = []
    while True:
        ready, _, _ = select.select([fd], [], [], 120)
        if not ready:
            os.kill(pid, 9)
            raise AssertionError(f"keel {' '.join(args)} did not finish at the terminal")
        try:
            data = os.read(fd, 65536)
        except OSError:  # EIO: the child closed the terminal
            break
        if not data:
            break
        chunks.append(data)
    _, status = os.waitpid(pid, 0)
    return os.waitstatus_to_exitcode(status), b"".join(chunks).decode().replace("\r\n", "\n")


def width(line):
    """Terminal columns by Python's unicodedata (UAX #11): W and F take 2, marks 0. Control
    sequences (the progress display's ESC [ K) and what a carriage return overwrote take
    none."""
    line = re.sub(r"\x1b\[[0-9;?]*[A-Za-z]", "", line).split("\r")[-1]
    return sum(0 if unicodedata.combining(c) else
               2 if unicodedata.east_asian_width(c) in "WF" else 1 for c in line)


led = Ledger(currency="EUR")
db = ["--db", led.path]
led.ok("account", "add", "Hollow Creek Retirement Savings Plan")
led.ok("account", "add", "株式会社ミナト口座")
led.ok("security", "add", "ORLQ", "--name", "Orlique Textiles", "--kind", "stock")
led.ok("security", "add", "BRNV", "--name", "Brenvaal Shipping", "--kind", "stock")
for account in ["Hollow Creek Retirement Savings Plan", "株式会社ミナト口座"]:
    led.ok("record", "deposit", "--date", "2024-01-02", "--account", account, "--amount",
           "250000", "--note", "opening balance carried over from the previous custodian")
    led.ok("record", "buy", "--date", "2024-01-03", "--account", account, "--symbol", "ORLQ",
           "--quantity", "1200", "--price", "41.17", "--fee", "1.05", "--ref", "ORD-2024-000117")
led.ok("record", "buy", "--date", "2024-01-04", "--account", "株式会社ミナト口座", "--symbol",
       "BRNV", "--quantity", "3500", "--price", "7.015", "--fee", "2.5")
work = led.dir.name
with open(os.path.join(work, "prices.csv"), "w") as f:
    f.write("date,symbol,close\n2024-06-28,ORLQ,44.2\n2024-06-28,BRNV,6.9\n")
led.ok("import", "prices", os.path.join(work, "prices.csv"), "--quiet")

HOLDINGS_80 = """\
Holdings as of 2024-06-30

account           symbol  quantity  cost basis  market value  unrealized  weight
--------------------------------------------------------------------------------
Hollow Creek Re…  ORLQ        1200    49405.05      53040.00     3634.95  10.46%
株式会社ミナト…   BRNV        3500    24555.00      24150.00     -405.00   4.76%
株式会社ミナト…   ORLQ        1200    49405.05      53040.00     3634.95  10.46%
Hollow Creek Re…  (cash)                           200594.95              39.58%
株式会社ミナト…   (cash)                           176039.95              34.73%
--------------------------------------------------------------------------------
total                                              506864.90
(left out to fit 80 columns: price; pipe the output for every column)
"""

HOLDINGS_120 = """\
Holdings as of 2024-06-30

account                               symbol  quantity  cost basis  price  market value  unrealized  weight
-----------------------------------------------------------------------------------------------------------
Hollow Creek Retirement Savings Plan  ORLQ        1200    49405.05   44.2      53040.00     3634.95  10.46%
株式会社ミナト口座                    BRNV        3500    24555.00    6.9      24150.00     -405.00   4.76%
株式会社ミナト口座                    ORLQ        1200    49405.05   44.2      53040.00     3634.95  10.46%
Hollow Creek Retirement Savings Plan  (cash)                                  200594.95              39.58%
株式会社ミナト口座                    (cash)                                  176039.95              34.73%
-----------------------------------------------------------------------------------------------------------
total                                                                         506864.90
"""

code, screen = at_terminal([*db, "holdings", "--as-of", "2024-06-30"], 80)
equal(code, 0, "holdings at 80 columns")
equal(screen, HOLDINGS_80, "holdings at an 80-column terminal")
check(max(width(line) for line in screen.splitlines()) <= 80, "no line is wider than 80 columns")

code, screen = at_terminal([*db, "holdings", "--as-of", "2024-06-30"], 120)
equal(screen, HOLDINGS_120, "holdings at a 120-column terminal: nothing shortened")

# Piped: full width, whatever the terminal would have been.
piped = led.ok("holdings", "--as-of", "2024-06-30")
equal(piped, HOLDINGS_120, "piped holdings keep full width")

HISTORY_80 = """\
id  date        account     kind     symbol  quantity  price  amount  note
--------------------------------------------------------------------------------
 1  2024-01-02  Hollow Cr…  deposit                           250000  opening b…
 3  2024-01-02  株式会社…   deposit                           250000  opening b…
 2  2024-01-03  Hollow Cr…  buy      ORLQ        1200  41.17
 4  2024-01-03  株式会社…   buy      ORLQ        1200  41.17
 5  2024-01-04  株式会社…   buy      BRNV        3500  7.015
(left out to fit 80 columns: fee, ref; pipe the output for every column)
"""
code, screen = at_terminal([*db, "history"], 80)
equal(screen, HISTORY_80, "history at an 80-column terminal: names and notes shortened, the fee "
      "and the ref left out")
check(max(width(line) for line in screen.splitlines()) <= 80, f"history fits 80 columns:\n{screen}")
HISTORY_120 = """\
id  date        account             kind     symbol  quantity  price  amount   fee  ref              note
------------------------------------------------------------------------------------------------------------------------
 1  2024-01-02  Hollow Creek Reti…  deposit                           250000                         opening balance ca…
 3  2024-01-02  株式会社ミナト口座  deposit                           250000                         opening balance ca…
 2  2024-01-03  Hollow Creek Reti…  buy      ORLQ        1200  41.17          1.05  ORD-2024-000117
 4  2024-01-03  株式会社ミナト口座  buy      ORLQ        1200  41.17          1.05  ORD-2024-000117
 5  2024-01-04  株式会社ミナト口座  buy      BRNV        3500  7.015           2.5
"""
code, screen = at_terminal([*db, "history"], 120)
equal(screen, HISTORY_120, "history at a 120-column terminal: every column, names and notes "
      "shortened")
for number in ["250000", "41.17", "1200", "7.015", "3500"]:
    check(number in screen, f"{number} is shown whole at 80 columns")
check("opening balance carried over from the previous custodian" in led.ok("history"),
      "piped history keeps the whole note")

# The pager: long output at a terminal goes through $PAGER; short output, piped output and
# --no-pager do not.
pager = os.path.join(work, "pager.sh")
with open(pager, "w") as f:
    f.write("#!/bin/sh\nsed 's/^/paged| /'\n")
os.chmod(pager, 0o755)
code, screen = at_terminal([*db, "history"], 120, rows=5, env_extra={"PAGER": pager})
equal(code, 0, "history through the pager")
check(screen.startswith("paged| id  date") and screen.count("paged| ") == len(screen.splitlines()),
      f"long output at a 5-row terminal goes through $PAGER:\n{screen}")
code, screen = at_terminal([*db, "--no-pager", "history"], 120, rows=5,
                           env_extra={"PAGER": pager})
check("paged|" not in screen and screen.startswith("id  date"), "--no-pager prints directly")
code, screen = at_terminal([*db, "history", "--no-pager"], 120, rows=5, env_extra={"PAGER": pager})
check("paged|" not in screen, "--no-pager after the command too")
code, screen = at_terminal([*db, "account", "list"], 120, rows=50, env_extra={"PAGER": pager})
check("paged|" not in screen and screen.startswith("id  name"), "short output is not paged")
p = subprocess.run([KEEL, *db, "history"], capture_output=True, text=True, timeout=120,
                   env=dict(os.environ, NO_COLOR="1", PAGER=pager))
check("paged|" not in p.stdout, "piped output is never paged")
code, screen = at_terminal([*db, "history"], 120, rows=5, env_extra={"PAGER": "no-such-pager-x"})
check("id  date" in screen and "opening balance ca…" in screen and "paged|" not in screen,
      f"a pager that does not exist: the text is printed anyway:\n{screen}")

# `-` is standard input for import files, mappings and rule files.
p = subprocess.run([KEEL, *db, "import", "prices", "-", "--quiet"], capture_output=True,
                   text=True, timeout=120, input="date,symbol,close\n2024-07-01,ORLQ,45.1\n",
                   env=dict(os.environ, NO_COLOR="1"))
equal((p.returncode, p.stdout),
      (0, "standard input: 1 rows read; added 1, 0 unchanged\n"), "import prices from stdin")
p = subprocess.run([KEEL, *db, "import", "prices", "-", "--quiet"], capture_output=True,
                   text=True, timeout=120, input="date,symbol,close\n2024-07-02,ORLQ,x\n",
                   env=dict(os.environ, NO_COLOR="1"))
check(p.returncode == 1 and "standard input:2:" in p.stderr,
      f"an error in standard input names it with its line: {p.stderr}")
p = subprocess.run([KEEL, *db, "import", "prices", "-", "--map", "-"], capture_output=True,
                   text=True, timeout=120, input="", env=dict(os.environ, NO_COLOR="1"))
equal((p.returncode, p.stderr.strip()),
      (1, "keel: error: --map -: the file is read from standard input already; give the "
          "mapping as a file"), "only one input can be standard input")
# Every report of the demo scenario (invented) at an 80-column terminal: no line wider than
# the terminal, so the terminal never breaks one, and every figure of the piped report is
# still there, whole.
from keel_cli import SOURCE  # noqa: E402

demo = Ledger(currency=None)
demo.import_demo()
rule = os.path.join(SOURCE, "examples", "demo", "rule.toml")
REPORTS = [
    ["holdings", "--as-of", "2025-12-31"],
    ["lots", "--as-of", "2025-12-31", "--account", "Ardwyn Retirement"],
    ["gains", "--year", "2025"],
    ["history", "--from", "2025-12-01"],
    ["imports"],
    ["account", "list"],
    ["security", "list"],
    ["returns", "--year", "2025", "--benchmark", "ZXTR"],
    ["returns", "--year", "2025", "--benchmark", "ZXTR", "--monthly"],
    ["propose", "--rule", rule, "--as-of", "2025-12-31"],
    ["backtest", "--rule", rule, "--from", "2024-01-01", "--to", "2025-12-31", "--benchmark",
     "ZXTR"],
    ["signal", "--rule", rule, "--from", "2024-01-01", "--to", "2025-12-31"],
    ["statement", "--year", "2025", "--benchmark", "ZXTR"],
]
NUMBER = re.compile(r"-?[0-9][0-9.,%]*[0-9%]")
for args in REPORTS:
    code, screen = at_terminal(["--db", demo.path, "--no-pager", *args], 80)
    equal(code, 0, f"keel {' '.join(args)} at 80 columns")
    wide = [line for line in screen.splitlines() if width(line) > 80]
    check(not wide, f"keel {' '.join(args)} fits 80 columns; too wide: {wide[:2]}")
    seen = [re.sub(r"\x1b\[[0-9;?]*[A-Za-z]", "", line).split("\r")[-1]
            for line in screen.splitlines()]
    shown = set(NUMBER.findall("\n".join(line for line in seen
                                          if not line.startswith("(left out to fit")
                                          and not re.match(r"\[[# ]+\] ", line))))
    _, piped_out, piped_err = demo.run(*args)
    piped = piped_out + piped_err  # the terminal shows both streams
    # A figure at the terminal is one the full report has too: none was cut into pieces.
    # (The progress display on standard error is left aside.)
    cut = sorted(n for n in shown if n not in piped)
    equal(cut, [], f"keel {' '.join(args)}: figures at 80 columns that the piped report lacks")
print("ok")
