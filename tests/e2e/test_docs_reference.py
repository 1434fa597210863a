"""Generated documents match the program: docs/commands.md is what `keel reference`
prints, docs/keel.1 what `keel manpage` prints; the bash completion completes."""
import os
import shutil
import subprocess
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import KEEL, SOURCE, equal  # noqa: E402


def printed(*args):
    return subprocess.run([KEEL, *args], capture_output=True, text=True, check=True).stdout


for args, stored in ((("reference",), "commands.md"), (("manpage",), "keel.1")):
    with open(os.path.join(SOURCE, "docs", stored), encoding="utf-8") as f:
        if printed(*args) != f.read():
            raise AssertionError(f"docs/{stored} is stale: regenerate it with "
                                 f"'keel {' '.join(args)} > docs/{stored}'")


def complete(line):
    """Words bash offers for the last word of `line`, using keel's completion script."""
    script = printed("completion", "bash")
    words = line.split(" ")
    probe = (f"{script}\nCOMP_WORDS=({' '.join(repr(w) for w in words)}); "
             f"COMP_CWORD={len(words) - 1}; _keel_complete; printf '%s\\n' \"${{COMPREPLY[@]}}\"")
    out = subprocess.run(["bash", "-c", probe], capture_output=True, text=True, check=True).stdout
    return sorted(out.split())


equal(complete("keel rec"), ["reconcile", "record"], "command completion")
equal(complete("keel reco"), ["reconcile", "record"], "command completion, two choices")
equal(complete("keel recor"), ["record"], "command completion, one choice")
equal(complete("keel record bu"), ["buy"], "subcommand completion")
equal(complete("keel record buy --acc"), ["--account"], "option completion")
equal(complete("keel --db x.db account l"), ["list"], "completion past a global option")

# zsh: the script sourced into an interactive setup registers its function (the installed file,
# autoloaded from $fpath, is tested by test_install.py).
if shutil.which("zsh"):
    script = printed("completion", "zsh")
    registered = subprocess.run(
        ["zsh", "-f", "-c", 'autoload -Uz compinit && compinit -u -D && source /dev/stdin && '
         'print -r -- "$_comps[keel]"'], input=script, capture_output=True, text=True, check=True)
    equal(registered.stdout.strip(), "_keel", "zsh completion registered when sourced")
else:
    print("note: zsh is not installed; its completion was not tried (README installs it)")
print("generated docs: up to date; completion works")
