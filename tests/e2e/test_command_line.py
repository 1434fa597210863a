"""The command line: global options after the command, `keel help CMD`, and examples at the end of
every --help that keel itself understands.

- `--db` and `--allow-unsafe-permissions` work after the command (and after its options) as they
  do before it.
- `keel help CMD ...` prints exactly what `keel CMD ... --help` prints, for every command of the
  reference; `keel help` what `keel --help` prints.
- Every --help ends with an "Examples:" block of one or two lines of that very command; each
  example runs (in a scratch folder, on a scratch ledger, without Chromium) without a
  command-line error (exit 2) or an internal one, and the manual page's EXAMPLES section lists
  them all.
"""
import os
import re
import shlex
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import KEEL, Ledger, check, equal  # noqa: E402


def keel(*args, env=None, cwd=None):
    p = subprocess.run([KEEL, *args], capture_output=True, text=True, timeout=300, cwd=cwd,
                       env=env or dict(os.environ, NO_COLOR="1"))
    return p.returncode, p.stdout, p.stderr


# --- global options after the command ---
led = Ledger()
led.ok("account", "add", "Alder Taxable")
code, out, err = keel("record", "deposit", "--date", "2024-01-02", "--account", "Alder Taxable",
                      "--amount", "100", "--db", led.path)
equal((code, out, err), (0, "posted 1: deposit on 2024-01-02 in 'Alder Taxable'\n", ""),
      "--db after the command and its options")
equal(keel("holdings", "--db", led.path, "--json")[0], 0, "--db between the command's options")
equal(keel("--db", led.path, "holdings", "--json")[1], keel("holdings", "--json", "--db",
                                                              led.path)[1],
      "--db before and after the command: the same report")
os.chmod(led.path, 0o666)
code, _, err = keel("account", "list", "--db", led.path)
equal(code, 3, f"a ledger others can write is refused: {err}")
code, out, err = keel("account", "list", "--db", led.path, "--allow-unsafe-permissions")
equal((code, err), (0, ""), "--allow-unsafe-permissions after the command")
check("Alder Taxable" in out, out)
os.chmod(led.path, 0o600)

# --- keel help CMD is CMD --help, for every command ---
reference = keel("reference")[1]
commands = [c.split()[1:] for c in re.findall(r"^## `(keel [^`]+)`$", reference, re.M)]
check(len(commands) >= 40, f"the reference lists {len(commands)} commands")
check(["help"] in commands and ["record", "buy"] in commands, "help and record buy are listed")
equal(keel("help"), keel("--help"), "keel help vs keel --help")
for words in commands:
    helped = keel("help", *words)
    equal(helped, keel(*words, "--help"), f"keel help {' '.join(words)}")

# --- every --help ends with examples that parse ---
scratch = tempfile.TemporaryDirectory(prefix="keel-examples-")
home = scratch.name
env = dict(os.environ, NO_COLOR="1", HOME=home, XDG_DATA_HOME=os.path.join(home, "data"),
           TMPDIR=home, KEEL_DB=os.path.join(home, "examples.db"), PATH="/nonexistent")
equal(keel("init", env=env)[0], 0, "a scratch ledger for the examples")
examples = {}
for words in [[]] + commands:
    code, out, _ = keel(*words, "--help")
    equal(code, 0, f"keel {' '.join(words)} --help")
    tail = out.rstrip("\n").split("\n\n")[-1].split("\n")
    name = " ".join(["keel", *words])
    equal(tail[0], "Examples:", f"{name} --help ends with examples")
    check(1 <= len(tail) - 1 <= 2, f"{name}: one or two examples, not {len(tail) - 1}")
    for line in tail[1:]:
        check(line.startswith("  keel "), f"{name}: an example is a keel command line: {line!r}")
        check(name == "keel" or f"{line.strip()} ".startswith(name + " "),
              f"{name}: an example of its own, not of another command: {line!r}")
        examples.setdefault(line.strip(), name)
for example, name in examples.items():
    args = shlex.split(example.split(" > ")[0])[1:]  # the output a redirection saves is dropped
    code, out, err = keel(*args, env=env, cwd=home)
    check(code in (0, 1, 3), f"{name}: example '{example}' exited {code}: {err}")
    check("internal error" not in err, f"{name}: example '{example}': {err}")

manual = keel("manpage")[1]
check("\n.SH EXAMPLES\n" in manual, "the manual page has EXAMPLES")
section = manual.split("\n.SH EXAMPLES\n")[1].split("\n.SH ")[0]
for example in examples:
    check(example.replace("-", "\\-") in section, f"the manual page's EXAMPLES show {example}")
print(f"command line: {len(commands)} commands, {len(examples)} examples")
