"""No command loses or damages a file: outputs that would land on the ledger are
refused, write errors are reported and leave the previous file as it was, and '-'
writes to standard output.

Every refused case checks the ledger afterwards with the sqlite3 tool's integrity
check, keel verify and a digest of every row (keel_cli.sound).
"""
import fcntl
import os
import pty
import random
import resource
import shutil
import sqlite3
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import KEEL, SOURCE, Ledger, check, equal, ledger_digest, sound  # noqa: E402

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


def kept_aside(ledger):
    folder, name = os.path.split(ledger)
    return sorted(os.path.join(folder, n) for n in os.listdir(folder)
                  if n.startswith(name + ".replaced-") and not n.endswith(("-wal", "-shm",
                                                                           "-journal")))


def full_disk(work, prices):
    """Runs inside a user and mount namespace: a 1 MiB tmpfs stands in for a full disk."""
    disk = os.path.join(work, "disk")
    os.mkdir(disk)
    subprocess.run(["mount", "-t", "tmpfs", "-o", "size=1m", "none", disk], check=True)
    ledger = os.path.join(disk, "ledger.db")
    db = ["--db", ledger]
    for args in (["init", "--currency", "EUR"], ["account", "add", "Juniper Taxable"],
                 ["record", "deposit", "--date", "2020-01-06", "--account", "Juniper Taxable",
                  "--amount", "900"],
                 ["import", "securities", os.path.join(work, "market", "securities.csv")]):
        code, _, err = run(db + args)
        equal(code, 0, f"{args} on the small disk: {err}")
    before = sound(ledger)
    # An import that does not fit: the raw statement path of market intake.
    code, _, err = run(db + ["import", "prices", prices, "--quiet"])
    equal((code, err), (3, f"keel: error: ledger {ledger}: disk full (no space left on the device)"),
          "an import that fills the disk")
    equal(sound(ledger), before, "the ledger after an import that filled the disk")
    previous = os.path.join(disk, "prices.csv")
    with open(previous, "wb") as f:
        f.write(b"the previous export\n")
    # Fill what is left; a reader keeps the -shm in place so that keel gets as
    # far as writing the change.
    holder = sqlite3.connect(ledger)
    holder.execute("SELECT count(*) FROM account").fetchone()
    fd = os.open(os.path.join(disk, "filler"), os.O_WRONLY | os.O_CREAT, 0o600)
    try:
        while True:
            os.write(fd, b"\0" * 4096)
    except OSError:
        pass
    finally:
        os.close(fd)
    code, _, err = run(db + ["record", "deposit", "--date", "2020-01-07", "--account",
                             "Juniper Taxable", "--amount", "1"])
    equal((code, err), (3, f"keel: error: ledger {ledger}: disk full (no space left on the device)"),
          "a transaction on a full disk")
    code, _, err = run(db + ["export", "prices", "--out", previous])
    equal((code, err), (1, f"keel: error: --out {previous}: cannot write: disk full (no space left "
                           "on the device); the existing file is unchanged"), "an export")
    with open(previous, "rb") as f:
        equal(f.read(), b"the previous export\n", "the previous export")
    code, _, err = run(db + ["backup", os.path.join(disk, "backup.db")])
    check(code in (1, 3) and "disk full" in err, f"backup to a full disk: {code} {err}")
    check(not os.path.exists(os.path.join(disk, "backup.db")), "a partial backup at the final name")
    equal(leftovers(disk), [], "temporary files on the full disk")
    equal(sound(ledger), before, "the ledger on the full disk")
    holder.close()
    subprocess.run(["umount", disk], check=True)
    print("full disk (1 MiB tmpfs): an import and a transaction refused with 'disk full' (exit 3), "
          "an export and a backup refused leaving no partial file; ledger whole")


if len(sys.argv) == 4 and sys.argv[1] == "--full-disk":
    full_disk(sys.argv[2], sys.argv[3])
    sys.exit(0)


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
out_dir = tempfile.mkdtemp(prefix="keel-out-", dir=D)

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

# --- 4. only init makes a ledger -----------------------------------------------------------------
empty = os.path.join(D, "empty.db")
open(empty, "w").close()
os.chmod(empty, 0o600)
code, out, err = run(["--db", empty, "verify"])
equal((code, err), (3, f"keel: error: {empty} is an empty file, not a keel ledger; only 'keel "
                       "init' makes a ledger; choose another with --db"), "verify of an empty file")
equal((os.path.getsize(empty), [n for n in os.listdir(D) if n.startswith("empty.db-")]), (0, []),
      "the empty file left as it was")
code, out, err = run(["--db", empty, "init"])
equal(code, 0, f"init on an empty file: {err}")
sound(empty)
print("empty file: refused by verify (exit 3, named) and left empty; init makes it a ledger")

# --- 5. restore: kept-aside copies are never overwritten; a ledger in use is not replaced --------
r = Ledger()
r.ok("account", "add", "Juniper Taxable")
r.ok("record", "deposit", "--date", "2024-01-02", "--account", "Juniper Taxable", "--amount", "10")
first = os.path.join(r.dir.name, "first.db")
r.ok("backup", first)
r.ok("record", "deposit", "--date", "2024-01-03", "--account", "Juniper Taxable", "--amount", "20")
second = os.path.join(r.dir.name, "second.db")
r.ok("backup", second)
r.ok("record", "deposit", "--date", "2024-01-04", "--account", "Juniper Taxable", "--amount", "30")
d0, d1, d2 = sound(r.path), sound(first), sound(second)
# The names of the next few seconds are taken already: restore must find others.
import datetime  # noqa: E402
now = datetime.datetime.now(datetime.timezone.utc)
taken = {}
for s in range(4):
    stamp = (now + datetime.timedelta(seconds=s)).strftime("%Y%m%dT%H%M%SZ")
    taken[f"{r.path}.replaced-{stamp}"] = f"taken {s}".encode()
for name, content in taken.items():
    with open(name, "wb") as f:
        f.write(content)
out1 = r.ok("restore", first)
out2 = r.ok("restore", second)
for name, content in taken.items():
    with open(name, "rb") as f:
        equal(f.read(), content, f"{name}, there before the restores")
asides = [o.strip().split("kept at ")[-1] for o in (out1, out2)]
check(asides[0] != asides[1] and all(a not in taken for a in asides), f"kept aside as {asides}")
equal([sound(a) for a in asides], [d0, d1], "the two kept-aside ledgers, by content")
equal(sound(r.path), d2, "the ledger after two restores in a row")
print(f"restore twice in a row: kept aside as {os.path.basename(asides[0])} and "
      f"{os.path.basename(asides[1])}; {len(taken)} existing names left alone; contents as before")

# A reader holding the ledger open in WAL mode: refused, nothing changes.
before_files = sorted(os.listdir(r.dir.name))
r.ok("verify")  # back in WAL mode
holder = sqlite3.connect(r.path)
holder.execute("SELECT count(*) FROM txn").fetchone()
code, out, err = r.run("restore", first)
holder.close()
equal((code, err.strip()), (3, f"keel: error: ledger {r.path} is in use by another program "
                               "(another keel command?); nothing was restored; try again when it "
                               "has finished"), "restore while the ledger is open")
equal(sound(r.path), d2, "the ledger after a refused restore")
after_files = sorted(n for n in os.listdir(r.dir.name) if not n.startswith("ledger.db-"))
equal(after_files, sorted(n for n in before_files if not n.startswith("ledger.db-")),
      "files after a refused restore")

# A keel command holding the ledger open (keel's shared lock, as every
# connection takes it): refused the same way.
with open(r.path, "rb") as held:
    fcntl.flock(held, fcntl.LOCK_SH)
    code, out, err = r.run("restore", first)
equal((code, err.strip()), (3, f"keel: error: ledger {r.path} is in use by another program "
                               "(another keel command?); nothing was restored; try again when it "
                               "has finished"), "restore while keel has the ledger open")
equal(sound(r.path), d2, "the ledger after a refused restore")

# Staging files of a restore that was killed are removed, and said so; those of a
# live process are not.
dead = subprocess.Popen(["true"])
dead.wait()
stale = [f"{r.path}.restoring-{dead.pid}", f"{r.path}.restoring-{dead.pid}-journal"]
live = f"{r.path}.restoring-{os.getpid()}"
for name in stale + [live]:
    open(name, "w").close()
out = r.ok("restore", second)
lines = out.splitlines()
equal(lines[:2], [f"removed {n}, left by an interrupted restore" for n in sorted(stale)],
      "the stale staging files named")
check(all(not os.path.exists(n) for n in stale) and os.path.exists(live), "stale files removed")
os.remove(live)

# Restores killed at random moments: the ledger is always one whole ledger, old or new.
rng = random.Random(20261202)
start = time.time()
r.ok("restore", first)
full = time.time() - start
outcomes = {"old": 0, "new": 0}
for trial in range(12):
    before = sound(r.path)
    target = first if before != d1 else second
    p = subprocess.Popen([KEEL, "--db", r.path, "restore", target], stdout=subprocess.DEVNULL,
                         stderr=subprocess.DEVNULL)
    # Half the kills fall anywhere, half near the end, where the swap is.
    time.sleep(rng.uniform(0.0, full * 1.2) if trial % 2 else rng.uniform(full * 0.6, full * 1.1))
    p.kill()
    p.wait()
    now_digest = sound(r.path)
    check(now_digest in (before, d1 if target == first else d2),
          f"trial {trial}: the ledger is neither the old nor the new one")
    outcomes["old" if now_digest == before else "new"] += 1
out = r.ok("restore", first)
check(not [n for n in os.listdir(r.dir.name) if ".restoring-" in n], "staging files left")
for a in kept_aside(r.path):
    if a not in taken:
        sound(a)
print(f"restore killed at random moments: 12 trials, {outcomes['old']} left the old ledger, "
      f"{outcomes['new']} the new; every ledger and kept-aside copy whole; staging cleaned up")

# --- 6. a ledger in a read-only folder still serves read-only reports ---------------------------
ro_base = tempfile.mkdtemp(prefix="keel-ro-")
as_user = []
if os.geteuid() == 0:
    # Root ignores folder permissions: run as nobody, with its own copy of keel.
    as_user = ["setpriv", "--reuid=65534", "--regid=65534", "--clear-groups"]
    os.chown(ro_base, 65534, 65534)
os.chmod(ro_base, 0o755)
keel_copy = os.path.join(ro_base, "keel")
shutil.copy(KEEL, keel_copy)


def run_as(*args):
    p = subprocess.run(as_user + [keel_copy, "--db", os.path.join(ro_base, "ro", "ledger.db"),
                                  *args], capture_output=True, text=True, timeout=300,
                       env=dict(os.environ, NO_COLOR="1"))
    return p.returncode, p.stdout, p.stderr.strip()


if as_user and not shutil.which("setpriv"):
    print("read-only folder: skipped, running as root without setpriv to drop privileges")
else:
    ro_ledger = os.path.join(ro_base, "ro", "ledger.db")
    subprocess.run(as_user + ["mkdir", os.path.join(ro_base, "ro")], check=True)
    ro_prices = os.path.join(ro_base, "prices.csv")
    with open(ro_prices, "w") as f:
        f.write("date,symbol,close\n2024-01-02,MOSL,40\n2024-01-03,MOSL,40.5\n2024-06-28,MOSL,42\n")
    os.chmod(ro_prices, 0o644)
    for args in (["init", "--currency", "EUR"], ["account", "add", "Juniper Taxable"],
                 ["record", "deposit", "--date", "2024-01-02", "--account", "Juniper Taxable",
                  "--amount", "100"],
                 ["security", "add", "MOSL", "--name", "Mossline Textiles", "--kind", "stock",
                  "--currency", "EUR"],
                 ["import", "prices", ro_prices, "--quiet"],
                 ["record", "buy", "--date", "2024-01-03", "--account", "Juniper Taxable",
                  "--symbol", "MOSL", "--quantity", "2", "--price", "40.5"]):
        code, _, err = run_as(*args)
        equal(code, 0, f"{args}: {err}")
    writable = {a: run_as(*a)[1] for a in (("holdings", "--as-of", "2024-06-30"), ("history",),
                                           ("export", "transactions"), ("verify",),
                                           ("returns", "--from", "2024-01-02", "--to",
                                            "2024-06-30"))}
    # returns kept its closes packed where it could write; without the packs,
    # the read-only run below reads the rows and must not try to keep them.
    subprocess.run(as_user + ["sqlite3", ro_ledger, "DELETE FROM close_pack"], check=True)

    def digest_of_copy():
        # Even a read-only SQLite connection leaves a -wal and -shm behind,
        # with which SQLite could then write in the read-only folder: digest a copy.
        copy = os.path.join(ro_base, "copy.db")
        shutil.copy(ro_ledger, copy)
        try:
            return ledger_digest(copy)
        finally:
            os.remove(copy)

    digest_ro = digest_of_copy()
    files = sorted(os.listdir(os.path.join(ro_base, "ro")))
    equal(files, ["ledger.db"], "the ledger's folder before it is made read-only")
    subprocess.run(as_user + ["chmod", "555", os.path.join(ro_base, "ro")], check=True)
    for args, expected in writable.items():
        code, out, err = run_as(*args)
        equal((code, out), (0, expected), f"{args} in a read-only folder: {err}")
    code, out, err = run_as("record", "deposit", "--date", "2024-01-03", "--account",
                            "Juniper Taxable", "--amount", "1")
    equal((code, err), (3, f"keel: error: ledger {ro_ledger} cannot be changed here: its folder is "
                           "read-only (permission denied); this command writes to it"),
          "a change in a read-only folder")
    equal(sorted(os.listdir(os.path.join(ro_base, "ro"))), files, "files in the read-only folder")
    equal(digest_of_copy(), digest_ro, "the ledger in the read-only folder")
    subprocess.run(as_user + ["chmod", "755", os.path.join(ro_base, "ro")], check=True)
    print(f"read-only folder: {len(writable)} reports print what they printed before; a change is "
          "refused (exit 3) before touching anything")
shutil.rmtree(ro_base, ignore_errors=True)

# --- 7. a full disk --------------------------------------------------------------------------------
prices = os.path.join(D, "many-prices.csv")
with open(prices, "w") as f:
    f.write("date,symbol,close\n")
    symbols = [line.split(",")[0] for line in open(os.path.join(data, "securities.csv"))][1:]
    for day in range(10000):
        y, rest = divmod(day, 300)
        for i, sym in enumerate(symbols):
            f.write(f"{1990 + y:04d}-{rest // 25 + 1:02d}-{rest % 25 + 1:02d},{sym},"
                    f"{10 + (day * 7 + i) % 50}.25\n")
probe = subprocess.run(["unshare", "-r", "-m", "true"], capture_output=True)
if probe.returncode != 0:
    print("full disk: skipped, no user namespaces here to mount a small file system "
          f"({probe.stderr.decode().strip()})")
else:
    p = subprocess.run(["unshare", "-r", "-m", sys.executable, __file__, "--full-disk", D, prices],
                       capture_output=True, text=True, timeout=900)
    sys.stdout.write(p.stdout)
    equal(p.returncode, 0, f"the full-disk checks: {p.stderr}")
