"""Nothing is lost: verify, backup and restore, two writers at once, restores racing
writers and readers, imports killed mid-way, and ledgers made by every earlier
schema version.

Counts shrink under the sanitizer build (KEEL_SANITIZED=1), where each process
is several times slower; the figures printed say what ran.
"""
import os
import random
import sqlite3
import subprocess
import sys
import tempfile
import threading
import time

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import KEEL, SOURCE, Ledger, check, equal, sound  # noqa: E402

SANITIZED = os.environ.get("KEEL_SANITIZED") == "1"


def table_rows(path):
    """Every row of every table, for comparing ledgers."""
    con = sqlite3.connect(path)
    tables = [r[0] for r in con.execute(
        "SELECT name FROM sqlite_schema WHERE type='table' AND name NOT LIKE 'sqlite_%' ORDER BY 1")]
    rows = {t: con.execute(f'SELECT * FROM "{t}" ORDER BY 1, 2').fetchall() for t in tables}
    con.close()
    return rows


# --- verify, backup, restore -------------------------------------------------
k = Ledger()
k.ok("account", "add", "Juniper Taxable", "--currency", "EUR")
k.ok("security", "add", "MOSL", "--name", "Mossline Textiles", "--kind", "stock", "--currency", "EUR")
k.ok("record", "deposit", "--date", "2024-01-02", "--account", "Juniper Taxable", "--amount", "5000")
k.ok("record", "buy", "--date", "2024-01-03", "--account", "Juniper Taxable", "--symbol", "MOSL",
     "--quantity", "30", "--price", "40", "--fee", "2")
k.ok("record", "split", "--date", "2024-06-03", "--symbol", "MOSL", "--ratio", "1.5")
check("verified: 1 accounts, 2 transactions" in k.ok("verify"), "verify of a sound ledger")
backup = os.path.join(k.dir.name, "backup.db")
k.ok("backup", backup)
equal(oct(os.stat(backup).st_mode & 0o777), "0o600", "backup file mode")
equal(table_rows(backup), table_rows(k.path), "backup content")
k.ok("record", "deposit", "--date", "2024-07-01", "--account", "Juniper Taxable", "--amount", "1")
out = k.ok("restore", backup)
check("the ledger it replaced is kept at" in out, out)
kept = out.strip().split("kept at ")[-1]
equal(table_rows(k.path), table_rows(backup), "restored content")
equal(len(table_rows(kept)["txn"]), 3, "replaced ledger kept aside whole")
err = k.fails("backup", backup)
equal(err, f"keel: error: backup {backup}: already exists; choose a new file", "no overwrite")
junk = os.path.join(k.dir.name, "junk.db")
with open(junk, "w") as f:
    f.write("not a ledger")
before = table_rows(k.path)
err = k.fails("restore", junk)
equal(err, f"keel: error: cannot read the backup {junk}: file is not a database", "junk restore")
equal(table_rows(k.path), before, "ledger untouched by a refused restore")

# A damaged ledger: verify names the problem and exits non-zero.
con = sqlite3.connect(k.path)
con.execute("PRAGMA foreign_keys = OFF")
con.execute("INSERT INTO txn (account_id, date, kind, amount, fee, recorded_at) "
            "VALUES (99, '2024-08-01', 'deposit', '5', '0', 'x')")
con.commit()
con.close()
code, out, err = k.run("verify")
equal(code, 3, "verify exit code on a damaged ledger")
check("problem: foreign key: table txn row 3 refers to a missing row of account" in out, out)

# --- two writers at once -------------------------------------------------------
per_writer = int(os.environ.get("KEEL_WRITES", 200 if SANITIZED else 1000))
w = Ledger()
w.ok("account", "add", "Writer A")
w.ok("account", "add", "Writer B")
failures = []


def writer(account):
    for i in range(per_writer):
        code, _, err = w.run("record", "deposit", "--date", "2024-01-02", "--account", account,
                             "--amount", "1", "--ref", f"{account}-{i}")
        if code != 0:
            failures.append(err)


start = time.time()
threads = [threading.Thread(target=writer, args=(a,)) for a in ("Writer A", "Writer B")]
for t in threads:
    t.start()
for t in threads:
    t.join()
equal(failures, [], "no writer failed")
count = sqlite3.connect(w.path).execute("SELECT count(*) FROM txn").fetchone()[0]
equal(count, 2 * per_writer, "every write landed exactly once")
check("verified" in w.ok("verify"), "verify after concurrent writers")
print(f"concurrency: 2 processes x {per_writer} records in {time.time() - start:.1f} s, "
      f"{count} rows, verify passed")

# --- restores while others write and read --------------------------------------
# Two writers, two readers and a restorer run at once for a fixed time. Every
# command either succeeds or stops with a clear message; afterwards the ledger
# and every copy kept aside pass the sqlite3 tool's integrity check and keel
# verify, each successful write is in exactly one of them and each failed one in
# none, no kept-aside copy was overwritten, and every restore reported the
# transactions of the backup it restored.
race_seconds = float(os.environ.get("KEEL_RACE_SECONDS", 8 if SANITIZED else 20))
x = Ledger()
x.ok("account", "add", "Race A")
x.ok("account", "add", "Race B")
for i in range(10):
    x.ok("record", "deposit", "--date", "2024-01-02", "--account", "Race A", "--amount", "1",
         "--ref", f"seed-{i}")
seed_backup = os.path.join(x.dir.name, "seed.db")
x.ok("backup", seed_backup)
x.ok("record", "deposit", "--date", "2024-01-03", "--account", "Race B", "--amount", "5",
     "--ref", "second-only")
second_backup = os.path.join(x.dir.name, "second.db")
x.ok("backup", second_backup)
backup_txns = {seed_backup: 10, second_backup: 11}
deadline = time.time() + race_seconds
written, refused_writes, problems, restores, refused_restores, reads = [], [], [], [], [], [0]
CLEAR = ("ledger is busy", "was replaced or moved while this command ran",
         "is in use by another program")


def race_writer(name):
    i = 0
    while time.time() < deadline:
        ref = f"{name}-{i}"
        i += 1
        code, _, err = x.run("record", "deposit", "--date", "2024-02-01", "--account",
                             "Race A" if name == "w1" else "Race B", "--amount", "1", "--ref", ref)
        if code == 0:
            written.append(ref)
        elif code == 3 and any(c in err for c in CLEAR):
            refused_writes.append(ref)
        else:
            problems.append(f"write {ref}: exit {code}: {err.strip()}")


def race_reader(command):
    while time.time() < deadline:
        code, out, err = x.run(*command)
        if code == 0:
            reads[0] += 1
        elif not (code == 3 and any(c in err for c in CLEAR)):
            problems.append(f"{' '.join(command)}: exit {code}: {err.strip()} {out.strip()}")


def race_restorer():
    n = 0
    while time.time() < deadline:
        backup_file = (seed_backup, second_backup)[n % 2]
        n += 1
        code, out, err = x.run("restore", backup_file)
        if code == 0:
            expected = f"({backup_txns[backup_file]} transactions)"
            if expected not in out:
                problems.append(f"restore reported {out.strip()}, expected {expected}")
            restores.append(out.strip().split("kept at ")[-1])
        elif code == 3 and any(c in err for c in CLEAR):
            refused_restores.append(err.strip())
        else:
            problems.append(f"restore: exit {code}: {err.strip()}")
        time.sleep(0.1)


threads = [threading.Thread(target=race_writer, args=(n,)) for n in ("w1", "w2")]
threads += [threading.Thread(target=race_reader, args=(c,)) for c in (["holdings"], ["verify"])]
threads += [threading.Thread(target=race_restorer)]
for t in threads:
    t.start()
for t in threads:
    t.join()
equal(problems, [], "commands that failed without a clear message")
ledgers = [x.path] + sorted(os.path.join(x.dir.name, n) for n in os.listdir(x.dir.name)
                            if ".replaced-" in n and not n.endswith(("-wal", "-shm", "-journal")))
equal(sorted(ledgers[1:]), sorted(restores), "one kept-aside copy per restore, none overwritten")
found = {}
for path in ledgers:
    sound(path)
    con = sqlite3.connect(path)
    for (ref,) in con.execute("SELECT ref FROM txn WHERE ref LIKE 'w_-%'"):
        found.setdefault(ref, []).append(path)
    con.close()
lost = [r for r in written if len(found.get(r, [])) != 1]
equal(lost, [], "successful writes not found exactly once")
ghosts = [r for r in refused_writes if r in found]
equal(ghosts, [], "refused writes that were stored anyway")
check(not [n for n in os.listdir(x.dir.name) if ".restoring-" in n], "staging files left behind")
check(restores and written, f"the race ran: {len(restores)} restores, {len(written)} writes")
print(f"restore race: {race_seconds:.0f} s of 2 writers, 2 readers and a restorer: {len(restores)} "
      f"restores ({len(refused_restores)} refused while in use), {len(written)} writes "
      f"({len(refused_writes)} refused), {reads[0]} reads; {len(ledgers)} ledgers verified, "
      "every write found once")

# --- imports killed at random moments -----------------------------------------
c = Ledger()
files = tempfile.TemporaryDirectory(prefix="keel-crash-")
symbols = [f"CK{i:02d}" for i in range(20)]
sec = os.path.join(files.name, "securities.csv")
with open(sec, "w") as f:
    f.write("symbol,name,kind,currency\n")
    for s in symbols:
        f.write(f"{s},Crash test {s},stock,USD\n")
c.ok("import", "securities", sec)
prices = os.path.join(files.name, "prices.csv")
days = 4000 if not SANITIZED else 1500
rows = 0
with open(prices, "w") as f:
    f.write("date,symbol,close\n")
    for d in range(days):
        y, rem = divmod(d, 360)
        day = f"{2000 + y:04d}-{rem // 30 + 1:02d}-{rem % 30 + 1:02d}"
        if rem // 30 + 1 == 2 and rem % 30 + 1 > 28:
            continue
        for s in symbols:
            f.write(f"{day},{s},{10 + (d % 97) / 4:.2f}\n")
            rows += 1
start = time.time()
subprocess.run([KEEL, "--db", c.path, "import", "prices", prices, "--quiet", "--dry-run"],
               check=True, capture_output=True)
full = time.time() - start
rng = random.Random(20261201)
trials = 20
outcomes = {"none": 0, "all": 0}
for trial in range(trials):
    con = sqlite3.connect(c.path)
    already = con.execute("SELECT count(*) FROM price").fetchone()[0]
    con.close()
    if already:  # start each trial from an empty price table through a fresh copy
        c = Ledger()
        c.ok("import", "securities", sec)
    p = subprocess.Popen([KEEL, "--db", c.path, "import", "prices", prices, "--quiet"],
                         stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    time.sleep(rng.uniform(0.0, full * 1.2))
    p.kill()
    p.wait()
    check("verified" in c.ok("verify"), f"verify after kill {trial}")
    n = sqlite3.connect(c.path).execute("SELECT count(*) FROM price").fetchone()[0]
    check(n in (0, rows), f"trial {trial}: {n} of {rows} price rows: a half-written import")
    outcomes["none" if n == 0 else "all"] += 1
c.ok("import", "prices", prices, "--quiet")
n = sqlite3.connect(c.path).execute("SELECT count(*) FROM price").fetchone()[0]
equal(n, rows, "the import completes when run again")
print(f"crash safety: {trials} imports of {rows} rows killed at random moments: "
      f"{outcomes['none']} left nothing, {outcomes['all']} had committed; verify passed each time")

# --- ledgers made by every earlier schema version -----------------------------
migrations = sorted(f for f in os.listdir(os.path.join(SOURCE, "migrations")) if f.endswith(".sql"))
for upto in range(1, len(migrations) + 1):
    m = Ledger()
    os.remove(m.path)
    con = sqlite3.connect(m.path)
    for name in migrations[:upto]:
        with open(os.path.join(SOURCE, "migrations", name)) as f:
            con.executescript(f.read())
    con.execute(f"PRAGMA user_version = {int(migrations[upto - 1][:4])}")
    con.execute("INSERT INTO account (name, currency, created_at) VALUES ('Old', 'EUR', 'x')")
    con.execute("INSERT INTO txn (account_id, date, kind, amount, fee, recorded_at) "
                "VALUES (1, '2020-01-02', 'deposit', '10', '0', 'x')")
    con.commit()
    con.close()
    os.chmod(m.path, 0o600)
    check("verified: 1 accounts, 1 transactions" in m.ok("verify"), f"ledger of version {upto}")
    version = sqlite3.connect(m.path).execute("PRAGMA user_version").fetchone()[0]
    equal(version, int(migrations[-1][:4]), f"version {upto} migrated to the latest")
future = Ledger()
con = sqlite3.connect(future.path)
con.execute("PRAGMA user_version = 9999")
con.commit()
con.close()
before = open(future.path, "rb").read()
err = future.fails("holdings")
check("newer than this keel understands" in err, err)
equal(open(future.path, "rb").read(), before, "a newer ledger is left untouched")
print(f"migrations: ledgers of versions 1..{len(migrations)} open and migrate; a newer one is refused")
