"""CI runs exactly the test command README.md gives, after installing exactly the packages the
README's first command installs, so a reader's machine and CI cannot drift apart."""
import os
import re
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import SOURCE, equal  # noqa: E402

readme = open(os.path.join(SOURCE, "README.md"), encoding="utf-8").read()
start = readme.index("## Quick start")
quick = readme[start:readme.index("\n## ", start)]
first, test = re.findall(r"```sh\n(.*?)\n```", quick, flags=re.S)
ci = [line for line in open(os.path.join(SOURCE, ".ci", "run"), encoding="utf-8").read().splitlines()
      if line and not line.startswith("#")]


def packages(command):
    """The package names of the 'apt-get install' step of a shell command line."""
    step = next(part for part in command.split("&&") if "apt-get install" in part).split()
    return sorted(w for w in step[step.index("install") + 1:] if not w.startswith("-"))


equal(ci[-1], test, "the last line of .ci/run is README's test command")
apt = next(line for line in ci if "apt-get install" in line)
equal(packages(apt), packages(first), "packages .ci/run installs vs README's first command")
print(f"CI command matches README; {len(packages(apt))} packages")
