"""No command loses or damages a file: outputs that would land on the ledger are
refused, write errors are reported and leave the previous file as it was, and '-'
writes to standard output.

Every refused case checks the ledger afterwards with the sqlite3 tool's integrity
check, keel verify and a digest of every row (keel_cli.sound).
"""
import os
import pty
import resource
import sqlite3
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import KEEL, SOURCE, Ledger, check, equal, sound  # noqa: E402

RULE = """
name = "Cheap on earnings"
[scope]
accounts = ["Sim"]
[screen]
metric = "earnings_yield"
cheap = "high"
max_age_days = 120
min_names = 3
[select]
by = "z"
z_max = 0.0
"""


def run(args, cwd=None, stdout=subprocess.PIPE, limit=None):
    """Runs keel; with `limit`, under a file size limit of that many bytes."""
    def lower_limit():
        resource.setrlimit(resource.RLIMIT_FSIZE, (limit, resource.RLIM_INFINITY))

    p = subprocess.run([KEEL, *args], cwd=cwd, stdout=stdout, stderr=subprocess.PIPE,
                       env=dict(os.environ, NO_COLOR="1"), timeout=300,
                       preexec_fn=lower_limit if limit else None)
    out = p.stdout.decode(errors="replace") if p.stdout is not None else ""
    return p.returncode, out, p.stderr.decode(errors="replace").strip()


def leftovers(folder):
    return sorted(n for n in os.listdir(folder) if ".keel-" in n)


k = Ledger()
D = k.dir.name
data = os.path.join(D, "market")
subprocess.run(["/usr/bin/python3", os.path.join(SOURCE, "tests", "bench", "gen_market.py"), data,
                "--securities", "6", "--years", "2", "--seed", "5", "--start", "2020-01-06"],
               check=True)
for what in ("securities", "prices", "metrics", "distributions", "splits"):
    k.ok("import", what, os.path.join(data, f"{what}.csv"), "--quiet")
k.ok("account", "add", "Juniper Taxable")
k.ok("record", "deposit", "--date", "2020-01-06", "--account", "Juniper Taxable", "--amount", "900")
rule = os.path.join(D, "rule.toml")
with open(rule, "w") as f:
    f.write(RULE)
BACKTEST = ["backtest", "--rule", rule, "--from", "2020-03-02", "--to", "2021-06-30"]
digest = sound(k.path)
db = ["--db", k.path]

# --- 1. an output that is the ledger, by any name, is refused --------------------------------
os.symlink(k.path, os.path.join(D, "link.csv"))
os.mkdir(os.path.join(D, "sub"))
ledger = k.path
# (target as typed, run from folder, what the message says it is)
TARGETS = [
    (ledger, None, f"the ledger {ledger}"),
    ("ledger.db", D, f"the ledger {ledger}"),                         # relative
    ("sub/../ledger.db", D, f"the ledger {ledger}"),                  # relative, roundabout
    (os.path.join(D, "link.csv"), None, f"the ledger {ledger}"),      # a symbolic link
    ("link.csv", D, f"the ledger {ledger}"),                          # relative link
    (ledger + "-wal", None, f"{ledger}-wal, a file SQLite keeps beside the ledger"),
    (ledger + "-shm", None, f"{ledger}-shm, a file SQLite keeps beside the ledger"),
    ("ledger.db-journal", D, f"{ledger}-journal, a file SQLite keeps beside the ledger"),
]
COMMANDS = [
    ("--html", ["statement", "--year", "2020", "--html"]),
    ("--xlsx", ["statement", "--year", "2020", "--xlsx"]),
    ("--curve", BACKTEST + ["--curve"]),
    ("--out", ["export", "prices", "--out"]),
    ("--out", ["export", "transactions", "--out"]),
]
cases = 0
for option, command in COMMANDS:
    for target, cwd, what in TARGETS:
        code, out, err = run(db + command + [target], cwd=cwd)
        equal((code, err), (1, f"keel: error: {option} {target}: is {what}; choose another file"),
              f"{' '.join(command)} {target}")
        check(not os.path.exists(ledger + "-journal"), f"{command} {target} made a -journal")
        cases += 1
equal(sound(k.path), digest, "the ledger after every refused output")
print(f"output is the ledger: {cases} commands refused (absolute, relative, symbolic link, "
      "companions); ledger whole")

# --- 2. write errors: exit non-zero, say why, the previous file untouched ----------------------
code, out, err = run(db + ["export", "prices"], stdout=open("/dev/full", "wb"))
equal((code, err), (1, "keel: error: cannot write to standard output: disk full (no space left "
                       "on the device)"), "export prices > /dev/full")
code, out, err = run(db + ["export", "accounts"], stdout=open("/dev/full", "wb"))
equal(code, 1, "export accounts > /dev/full (a short export, held in stdio's buffer)")
code, out, err = run(db + ["holdings"], stdout=open("/dev/full", "wb"))
equal((code, err), (1, "keel: error: cannot write to standard output: disk full (no space left "
                       "on the device)"), "holdings > /dev/full")
code, out, err = run(db + ["export", "prices", "--out", "/dev/full"])
equal((code, err), (1, "keel: error: --out /dev/full: cannot write: disk full (no space left on "
                       "the device)"), "export --out /dev/full")

out_dir = tempfile.mkdtemp(prefix="keel-out-", dir=D)
previous = b"the previous file, byte for byte\n" * 4
LIMITED = [
    ("--out", ["export", "prices", "--out"]),
    ("--html", ["statement", "--year", "2020", "--html"]),
    ("--xlsx", ["statement", "--year", "2020", "--xlsx"]),
    ("--curve", BACKTEST + ["--curve"]),
]
# A reader held open keeps the ledger's 32 KiB -shm in place, so that only the
# output meets the limit, not SQLite's first use of the ledger.
holder = sqlite3.connect(k.path)
holder.execute("SELECT count(*) FROM account").fetchone()
for option, command in LIMITED:
    target = os.path.join(out_dir, "previous")
    with open(target, "wb") as f:
        f.write(previous)
    code, out, err = run(db + command + [target], limit=2048)
    check(code == 1, f"{command} under a 2 KiB file size limit exited {code}: {err}")
    err = err.splitlines()[-1]  # libxlsxwriter prints its own lines first
    check(err.startswith(f"keel: error: {option} {target}: cannot write: ") or
          err.startswith(f"keel: error: {option} {target}: cannot create"), err)
    check("file too large" in err, err)
    check("rows written" not in err, err)
    with open(target, "rb") as f:
        equal(f.read(), previous, f"{command}: the previous file")
    equal(leftovers(out_dir), [], f"{command}: temporary files left behind")
holder.close()
equal(sound(k.path), digest, "the ledger after failed writes")
print(f"write errors: /dev/full on standard output and as --out, and {len(LIMITED)} outputs over "
      "a file size limit: exit 1, the previous file untouched, no temporary file left")

# --- 3. '-' is standard output ------------------------------------------------------------------
code, out, err = run(db + ["export", "accounts", "--out", "-"], cwd=out_dir)
equal((code, out), (0, k.ok("export", "accounts")), "export --out - is standard output")
check(not os.path.exists(os.path.join(out_dir, "-")), "a file named '-' was made")
code, out, err = run(db + ["statement", "--year", "2020", "--html", "-"], cwd=out_dir)
check(code == 0 and out.startswith("<!DOCTYPE html>") and out.rstrip().endswith("</html>"),
      f"statement --html -: {code} {err} {out[:80]!r}")
curve_file = os.path.join(out_dir, "curve.csv")
k.ok(*BACKTEST, "--curve", curve_file)
code, out, err = run(db + BACKTEST + ["--curve", "-"], cwd=out_dir)
with open(curve_file) as f:
    equal((code, out), (0, f.read()), "backtest --curve - prints the curve")
check("Back-test of rule" in err and "Cautions:" in err, f"the report goes to stderr: {err[:200]}")
with tempfile.TemporaryFile() as f:
    p = subprocess.run([KEEL, *db, "statement", "--year", "2020", "--xlsx", "-"], stdout=f,
                       stderr=subprocess.PIPE, timeout=300)
    f.seek(0)
    equal((p.returncode, f.read(4)), (0, b"PK\x03\x04"), "statement --xlsx - to a file is a workbook")
primary, secondary = pty.openpty()
p = subprocess.run([KEEL, *db, "statement", "--year", "2020", "--xlsx", "-"], stdout=secondary,
                   stderr=subprocess.PIPE, timeout=300)
os.close(secondary)
os.close(primary)
equal((p.returncode, p.stderr.decode().strip()),
      (1, "keel: error: --xlsx -: standard output is a terminal; send this binary file to a file "
          "or a pipe"), "binary output to a terminal")
for args, message in [
        (["statement", "--year", "2020", "--json", "--html", "-"],
         "keel: error: --html -: standard output already carries the JSON"),
        (["statement", "--year", "2020", "--html", "-", "--xlsx", "-"],
         "keel: error: --xlsx -: standard output already carries --html -"),
        (["statement", "--year", "2020", "--csv", "-"],
         "keel: error: --csv -: one file a section cannot go to standard output; give a folder"),
        (BACKTEST + ["--json", "--curve", "-"],
         "keel: error: --curve -: standard output already carries the JSON")]:
    code, out, err = run(db + args, cwd=out_dir)
    equal((code, err), (1, message), " ".join(args))
check(not os.path.exists(os.path.join(out_dir, "-")), "a file named '-' was made")
print("'-': export, statement HTML and XLSX, and the back-test curve go to standard output; "
      "binary output to a terminal and two things on standard output are refused")
