"""End to end: import, export, round trip into an empty ledger, refusals.

Drives the keel binary named by KEEL_BIN on data from tests/bench/gen_market.py.
"""
import os
import subprocess
import sys
import tempfile

KEEL = os.environ["KEEL_BIN"]
SRC = os.environ["KEEL_SOURCE_DIR"]
KINDS = ["securities", "prices", "metrics", "distributions", "splits"]


def keel(db, *args, ok=True):
    p = subprocess.run([KEEL, "--db", db, *args], capture_output=True, text=True)
    if ok and p.returncode != 0:
        sys.exit(f"keel {' '.join(args)} failed ({p.returncode}):\n{p.stderr}")
    return p


def main():
    with tempfile.TemporaryDirectory() as tmp:
        data = os.path.join(tmp, "data")
        subprocess.run([sys.executable, os.path.join(SRC, "tests/bench/gen_market.py"), data,
                        "--securities", "12", "--years", "1"], check=True)
        a, b = os.path.join(tmp, "a.db"), os.path.join(tmp, "b.db")
        for db in (a, b):
            keel(db, "init")
        for kind in KINDS:
            out = keel(a, "import", kind, os.path.join(data, f"{kind}.csv")).stdout
            assert " added " in out, out
        exports = {}
        for kind in KINDS:
            path = os.path.join(tmp, f"export-{kind}.csv")
            keel(a, "export", kind, "--out", path)
            exports[kind] = open(path, encoding="utf-8").read()
            keel(b, "import", kind, path)
        for kind in KINDS:
            again = keel(b, "export", kind, "--csv").stdout
            assert again == exports[kind], f"{kind}: round trip differs"
            assert len(again.splitlines()) > 1, kind
        # JSON export carries the same rows.
        import json
        rows = json.loads(keel(a, "export", "prices", "--json").stdout)
        assert len(rows) == len(exports["prices"].splitlines()) - 1
        assert set(rows[0]) == {"date", "symbol", "close"}

        # Re-import adds nothing and is not recorded again.
        runs_before = keel(a, "imports").stdout
        out = keel(a, "import", "prices", os.path.join(data, "prices.csv")).stdout
        assert "added 0," in out and "note: the same file was imported" in out, out
        assert keel(a, "imports").stdout == runs_before

        # A bad file is refused with exact messages and changes nothing.
        bad = os.path.join(tmp, "bad.csv")
        with open(bad, "w", encoding="utf-8") as f:
            f.write("date,symbol,close\n2011-01-03,K0001,abc\n2011-02-29,K0001,1\n"
                    "2011-01-03,NOSUCH,1\n")
        before = keel(a, "export", "prices").stdout
        p = keel(a, "import", "prices", bad, ok=False)
        assert p.returncode == 1, p.returncode
        expected = (
            f"{bad}:2: column 'close': 'abc' is not a decimal number: expected digits\n"
            f"{bad}:3: column 'date': 2011-02-29 is not a day of the calendar\n"
            f"{bad}:4: column 'symbol': unknown security 'NOSUCH'; import or add it first\n"
            f"keel: error: {bad}: 3 errors; nothing was changed\n")
        assert p.stderr == expected, p.stderr
        assert keel(a, "export", "prices").stdout == before

        # The example vendor layout imports through its mapping.
        c = os.path.join(tmp, "c.db")
        keel(c, "init")
        sec = os.path.join(tmp, "sec.csv")
        with open(sec, "w", encoding="utf-8") as f:
            f.write("symbol,name,kind,currency\nQRX,Quarix,stock,EUR\nVLM,Velmora,fund,EUR\n")
        keel(c, "import", "securities", sec)
        ex = os.path.join(SRC, "examples/import")
        keel(c, "import", "prices", os.path.join(ex, "vendor-closes.csv"),
             "--map", os.path.join(ex, "vendor-closes.toml"))
        assert keel(c, "export", "prices").stdout == (
            "date,symbol,close\n2024-01-02,QRX,1234.5\n2024-01-03,QRX,1240\n"
            "2024-01-02,VLM,98.1\n2024-01-03,VLM,98.25\n")
        p = keel(c, "import", "nonsense", sec, ok=False)
        assert p.returncode == 1 and "expected one of: accounts, transactions, actions, securities" in p.stderr
    print("intake e2e: ok")


if __name__ == "__main__":
    main()
