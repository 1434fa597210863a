"""Every `keel ...` command shown in README.md and the user guide runs as written.

Each document's shell blocks are run in order against one fresh ledger (paths under ~/keel/
are moved into a scratch folder); every command must exit 0. Lines that are not keel
commands (export, source, man) are skipped.
"""
import os
import re
import shlex
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import KEEL, SOURCE, check  # noqa: E402

DOCS = ["README.md", os.path.join("docs", "guide.md")]
SKIP = {"demo", "completion", "manpage", "reference"}  # exercised by their own tests


def commands(path):
    text = open(os.path.join(SOURCE, path), encoding="utf-8").read()
    for block in re.findall(r"```sh\n(.*?)```", text, flags=re.S):
        for line in block.splitlines():
            line = line.split("  #")[0].strip()
            if line.startswith("keel "):
                yield line


ran = 0
for doc in DOCS:
    scratch = tempfile.TemporaryDirectory(prefix="keel-docs-")
    env = dict(os.environ, KEEL_DB=os.path.join(scratch.name, "ledger.db"), NO_COLOR="1")
    os.makedirs(os.path.join(scratch.name, "backups"))
    for line in commands(doc):
        args = shlex.split(line.replace("~/keel/", scratch.name + "/"))[1:]
        if args[0] in SKIP:
            continue
        p = subprocess.run([KEEL, *args], capture_output=True, text=True, env=env, timeout=120)
        check(p.returncode == 0, f"{doc}: '{line}' exited {p.returncode}: {p.stderr.strip()}")
        ran += 1
check(ran >= 30, f"only {ran} commands found in the docs")
print(f"docs examples: {ran} commands from {len(DOCS)} documents ran")
