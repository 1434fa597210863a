"""Helpers for end-to-end tests: run the built keel binary on a scratch ledger."""
import json
import os
import subprocess
import tempfile

KEEL = os.environ.get("KEEL_BIN", "keel")
SOURCE = os.environ.get("KEEL_SOURCE_DIR", os.path.dirname(os.path.dirname(os.path.dirname(__file__))))


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
