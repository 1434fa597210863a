"""Helpers for end-to-end tests: run the built keel binary on a scratch ledger."""
import csv
import hashlib
import io
import json
import os
import sqlite3
import subprocess
import tempfile

KEEL = os.environ.get("KEEL_BIN", "keel")
SOURCE = os.environ.get("KEEL_SOURCE_DIR", os.path.dirname(os.path.dirname(os.path.dirname(__file__))))


def csv_text(header, rows):
    """RFC 4180 text of a header and rows, for files a test feeds to keel."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    w.writerows(rows)
    return buf.getvalue()


def write_csv_files(folder, tables):
    """Writes each (name, header, rows) of `tables` as folder/name; returns name -> path."""
    paths = {}
    for name, header, rows in tables:
        paths[name] = os.path.join(folder, name)
        with open(paths[name], "w") as out:
            out.write(csv_text(header, rows))
    return paths


class Ledger:
    """A fresh ledger in a temporary folder; run() returns (code, stdout, stderr).

    Its own currency is `currency` (accounts and securities added without --currency take
    it); None leaves it to the first account, as `keel init` without --currency does."""

    def __init__(self, currency="USD"):
        self.dir = tempfile.TemporaryDirectory(prefix="keel-e2e-")
        self.path = os.path.join(self.dir.name, "ledger.db")
        self.ok("init", *(["--currency", currency] if currency else []))

    def run(self, *args, stdin=None):
        env = dict(os.environ, NO_COLOR="1")
        p = subprocess.run([KEEL, "--db", self.path, *args], capture_output=True, text=True,
                           input=stdin, env=env, timeout=300)
        return p.returncode, p.stdout, p.stderr

    def ok(self, *args):
        code, out, err = self.run(*args)
        if code != 0:
            raise AssertionError(f"keel {' '.join(args)} exited {code}: {err}")
        return out

    def json(self, *args):
        return json.loads(self.ok(*args, "--json"))

    def import_demo(self, transactions=True):
        """Imports the demo scenario's files (examples/demo/data, invented) in keel demo's
        order: exchange rates before the transactions, whose rows abroad need them."""
        data = os.path.join(SOURCE, "examples", "demo", "data")
        for what, name in (("accounts", "accounts"), ("securities", "securities"),
                           ("prices", "prices"), ("fx", "rates"), ("metrics", "metrics"),
                           ("distributions", "distributions"), ("splits", "splits"),
                           ("transactions", "transactions")):
            if what != "transactions" or transactions:
                self.ok("import", what, os.path.join(data, f"{name}.csv"),
                        *([] if what in ("accounts", "transactions") else ["--quiet"]))

    def fails(self, *args):
        """Runs a command that must fail; returns its stderr."""
        code, out, err = self.run(*args)
        if code == 0:
            raise AssertionError(f"keel {' '.join(args)} should have failed; printed {out}")
        return err.strip()


def check(condition, message):
    if not condition:
        raise AssertionError(message)


def equal(actual, expected, what):
    if actual != expected:
        raise AssertionError(f"{what}: expected {expected!r}, got {actual!r}")


def ledger_digest(path):
    """SHA-256 over the schema version, every table's definition and all its rows, ordered."""
    con = sqlite3.connect(f"file:{path}?mode=ro", uri=True)
    try:
        h = hashlib.sha256()
        h.update(repr(con.execute("PRAGMA user_version").fetchone()).encode())
        tables = con.execute("SELECT name, sql FROM sqlite_master WHERE type = 'table' "
                             "ORDER BY name").fetchall()
        for name, sql in tables:
            h.update(repr((name, sql)).encode())
            cols = [r[1] for r in con.execute(f'PRAGMA table_info("{name}")')]
            order = ", ".join(f'"{c}"' for c in cols)
            for row in con.execute(f'SELECT * FROM "{name}" ORDER BY {order}'):
                h.update(repr(row).encode())
        return h.hexdigest(), len(tables)
    finally:
        con.close()


def sound(path, keel_args=()):
    """Checks that a ledger is whole: the sqlite3 tool's integrity check says ok and
    keel verify passes. Returns its digest (ledger_digest), to compare contents."""
    p = subprocess.run(["sqlite3", path, "PRAGMA integrity_check"], capture_output=True, text=True,
                       timeout=300)
    equal((p.returncode, p.stdout.strip()), (0, "ok"), f"integrity_check of {path}")
    p = subprocess.run([KEEL, "--db", path, *keel_args, "verify"], capture_output=True, text=True,
                       env=dict(os.environ, NO_COLOR="1"), timeout=300)
    equal(p.returncode, 0, f"keel verify of {path}: {p.stderr}")
    return ledger_digest(path)[0]


def write_market(folder, names, prices, metrics, sectors=None):
    """securities.csv (invented stocks in USD), prices.csv (date, symbol,
    close) and metrics.csv (date, symbol, metric, value, known_on) in
    `folder`, for `keel import`; each name's sector from `sectors` (else
    Tools)."""
    with open(os.path.join(folder, "securities.csv"), "w") as f:
        f.write("symbol,name,kind,currency,lot_size,sector\n")
        f.writelines(f"{s},Invented {s},stock,USD,1,{(sectors or {}).get(s, 'Tools')}\n"
                     for s in names)
    with open(os.path.join(folder, "prices.csv"), "w") as f:
        f.write("date,symbol,close\n")
        f.writelines(",".join(row) + "\n" for row in prices)
    with open(os.path.join(folder, "metrics.csv"), "w") as f:
        f.write("date,symbol,metric,value,known_on\n")
        f.writelines(",".join(row) + "\n" for row in metrics)
