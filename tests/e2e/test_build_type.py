"""A build configured without a build type is a Release build (optimised); a type given on the
command line is kept. Configures scratch build folders only (nothing is compiled)."""
import os
import re
import shutil
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import SOURCE, equal  # noqa: E402

cmake = shutil.which("cmake")
if not cmake:
    print("SKIP: cmake is not on PATH")
    sys.exit(77)


def configured_type(*args):
    with tempfile.TemporaryDirectory(prefix="keel-configure-") as build:
        generator = ["-G", "Ninja"] if shutil.which("ninja") else []
        subprocess.run([cmake, "-S", SOURCE, "-B", build, *generator, *args], check=True,
                       capture_output=True, text=True, timeout=300)
        with open(os.path.join(build, "CMakeCache.txt"), encoding="utf-8") as f:
            return re.search(r"^CMAKE_BUILD_TYPE:\w+=(.*)$", f.read(), re.M).group(1)


equal(configured_type(), "Release", "build type when none is given")
equal(configured_type("-DCMAKE_BUILD_TYPE=Debug"), "Debug", "build type given on the command line")
print("build type: Release by default, a given type kept")
