"""Every command the documentation shows is run, and its output compared with what is printed.

A ```console block in README.md, docs/*.md or examples/**/README.md is a terminal session:

    $ keel record deposit --date 2025-01-02 --account Taxable --amount 10000
    posted #1 deposit 2025-01-02 Taxable 10000
    $ keel record sell --date 2025-01-03 --account Taxable --symbol KESTR --quantity 1 --price 1
    error: ...
    [exit 1]

A line starting with "$ " is a command; the lines after it, up to the next command, are exactly
what it prints (standard output and standard error, as a terminal shows them, colour off). A last
line "[exit N]" says the command exits N (default 0). A line of just "..." stands for any number
of lines, for outputs too long to show whole; a "…" inside a line stands for any text, for what
differs from run to run (the time of an import, say). Commands are `keel ...` and `export NAME=VALUE`;
each document runs its blocks in order against a fresh scratch folder that stands in for ~/keel,
from the source folder (so examples/... paths work), with the scratch path shown as ~/keel.

A ```sh block may not show a keel command (so none escapes this test), except those in SH_ALLOWED,
which have tests of their own.

KEEL_DOCS_UPDATE=1 rewrites each block that does not match with what the commands printed (the
"..." lines of that block are lost; put them back by hand).
"""
import difflib
import glob
import os
import re
import shlex
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import KEEL, SOURCE, check  # noqa: E402

# Shell lines that may appear outside a session, and the test that covers each.
SH_ALLOWED = {
    "keel completion": "test_docs_reference.py",
    "keel manpage": "test_docs_reference.py",
    "keel reference": "test_docs_reference.py",
}
BLOCK = re.compile(r"^```(\w*)\n(.*?)^```", flags=re.S | re.M)
EXIT = re.compile(r"^\[exit (\d+)\]$")


def documents():
    names = ["README.md"] + sorted(glob.glob("docs/*.md", root_dir=SOURCE))
    names += sorted(glob.glob("examples/**/README.md", root_dir=SOURCE, recursive=True))
    return names


def parse_session(text):
    """[(command line, expected lines, expected exit)] of one console block."""
    steps = []
    for line in text.splitlines():
        if line.startswith("$ "):
            steps.append([line[2:], [], 0])
        elif not steps:
            raise ValueError(f"output before the first command: {line!r}")
        elif EXIT.match(line):
            steps[-1][2] = int(EXIT.match(line).group(1))
        else:
            steps[-1][1].append(line)
    return steps


def line_matches(expected, actual):
    if "…" not in expected:
        return expected == actual
    return re.fullmatch(".*".join(map(re.escape, expected.split("…"))), actual) is not None


def matches(expected, actual):
    """Whether the actual lines fit the expected ones, where a "..." line spans any lines."""
    if not expected:
        return not actual
    if expected[0] == "...":
        return any(matches(expected[1:], actual[i:]) for i in range(len(actual) + 1))
    return (bool(actual) and line_matches(expected[0], actual[0])
            and matches(expected[1:], actual[1:]))


class Session:
    """One document's run: a scratch ~/keel and the variables its exports set."""

    def __init__(self):
        self.scratch = tempfile.TemporaryDirectory(prefix="keel-docs-")
        self.home = os.path.join(self.scratch.name, "keel")
        os.makedirs(self.home)
        # HOME is the scratch folder too: a session that names no ledger must
        # not reach the default one of the person running the tests.
        self.env = dict(os.environ, NO_COLOR="1", COLUMNS="100", HOME=self.scratch.name)
        for name in ("KEEL_DB", "XDG_DATA_HOME", "XDG_CONFIG_HOME"):
            self.env.pop(name, None)

    def expand(self, word):
        return word.replace("~/keel", self.home)

    def run(self, line):
        """(printed lines, exit code) of one command line."""
        words = shlex.split(line, comments=True)
        if words[0] == "export" and len(words) == 2 and "=" in words[1]:
            name, value = words[1].split("=", 1)
            self.env[name] = self.expand(value)
            return [], 0
        if words[0] != "keel":
            raise ValueError(f"a session runs keel and export only, not {words[0]!r}")
        p = subprocess.run([KEEL, *map(self.expand, words[1:])], cwd=SOURCE, env=self.env,
                           stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True,
                           timeout=300)
        text = p.stdout.replace(self.home, "~/keel")
        return [l.rstrip() for l in text.splitlines()], p.returncode


def render(steps, outputs):
    lines = []
    for (command, _, _), (printed, code) in zip(steps, outputs):
        lines.append("$ " + command)
        lines.extend(printed)
        if code:
            lines.append(f"[exit {code}]")
    return "\n".join(lines) + "\n"


def check_sh_block(doc, body):
    for line in body.splitlines():
        line = line.split("  #")[0].strip()
        shown = re.sub(r"^(source <\(|man -l )", "", line)
        if shown.startswith(("keel ", "build/keel ")):
            check(any(shown.startswith(a) for a in SH_ALLOWED),
                  f"{doc}: '{line}' is a command outside a ```console session, so no test "
                  "compares its output; show it as a session")


def run_document(doc, update):
    """Number of commands run; rewrites the document when update is set."""
    path = os.path.join(SOURCE, doc)
    text = open(path, encoding="utf-8").read()
    session, ran, failures, pieces, last = Session(), 0, [], [], 0
    for block in BLOCK.finditer(text):
        kind, body = block.group(1), block.group(2)
        if kind == "sh":
            check_sh_block(doc, body)
        if kind != "console":
            continue
        steps = parse_session(body)
        outputs = [session.run(command) for command, _, _ in steps]
        ran += len(steps)
        block_ok = True
        for (command, expected, code), (printed, actual_code) in zip(steps, outputs):
            if code == actual_code and matches(expected, printed):
                continue
            block_ok = False
            diff = "\n".join(difflib.unified_diff(expected, printed, "shown", "printed",
                                                  lineterm=""))
            line_no = text.count("\n", 0, block.start()) + 1
            failures.append(f"{doc}:{line_no}: '$ {command}' (exit shown {code}, "
                            f"printed {actual_code})\n{diff}")
        if update and not block_ok:
            pieces += [text[last:block.start(2)], render(steps, outputs)]
            last = block.end(2)
    if update and pieces:
        with open(path, "w", encoding="utf-8") as f:
            f.write("".join(pieces) + text[last:])
        print(f"rewrote {doc}")
    elif failures:
        check(False, "documentation and program disagree (KEEL_DOCS_UPDATE=1 rewrites):\n"
              + "\n\n".join(failures))
    return ran


# The matching rules themselves, so a loose matcher cannot pass every document.
check(matches(["a", "...", "d"], ["a", "b", "c", "d"]), "'...' spans lines")
check(matches(["a", "..."], ["a"]), "'...' spans no lines")
check(not matches(["a", "b"], ["a", "b", "c"]), "an extra printed line is a difference")
check(not matches(["a", "...", "d"], ["a", "b"]), "a missing last line is a difference")
check(matches(["run at …Z ok"], ["run at 2026-01-02T03:04:05Z ok"]), "'…' spans text")
check(not matches(["run at …Z ok"], ["run at 2026 ok"]), "text around '…' must match")

def source_files():
    """The files a session run from the source folder could leave there by a relative path."""
    found = {name for name in os.listdir(SOURCE) if os.path.isfile(os.path.join(SOURCE, name))}
    for top in ("docs", "examples"):
        for folder, _, names in os.walk(os.path.join(SOURCE, top)):
            found |= {os.path.relpath(os.path.join(folder, n), SOURCE) for n in names}
    return found


update = os.environ.get("KEEL_DOCS_UPDATE") == "1"
before = source_files()
counts = {doc: run_document(doc, update) for doc in documents()}
# A session writes its files under ~/keel: nothing new may appear in the source tree.
left = sorted(source_files() - before)
check(not left, f"sessions left files in the source tree: {left}")
shown = {doc: n for doc, n in counts.items() if n}
check(sum(shown.values()) >= 60, f"only {sum(shown.values())} commands found in the docs")
for doc in ("README.md", "docs/guide.md"):
    check(counts[doc] > 0, f"{doc} shows no session")
print("docs examples: " + ", ".join(f"{doc} {n}" for doc, n in shown.items()))
