"""docs/commands.md is exactly what `keel reference` prints, so the docs cannot drift."""
import os
import subprocess
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import KEEL, SOURCE  # noqa: E402

printed = subprocess.run([KEEL, "reference"], capture_output=True, text=True, check=True).stdout
with open(os.path.join(SOURCE, "docs", "commands.md"), encoding="utf-8") as f:
    stored = f.read()
if printed != stored:
    raise AssertionError("docs/commands.md is stale: regenerate it with 'keel reference > docs/commands.md'")
print("docs reference: up to date")
