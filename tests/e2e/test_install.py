"""keel installs and packages like a Debian tool, and the installed keel needs nothing from the
folders it was built in.

- `cmake --install` into a scratch prefix puts exactly the binary, its OFX module, the gzipped
  manual page, the bash and zsh completions and the copyright file there.
- The installed binary holds no path of the source or build folder (`strings`), and runs from a
  copy of the prefix in another scratch folder, with an environment that names nothing of the
  tree, inside a mount namespace where tmpfs mounts hide the source and build folders (unshare
  from util-linux; where the kernel refuses a namespace the run goes on without it and says so).
  There it runs `keel demo`, `keel --help` and `keel --version`, and imports an OFX statement
  through the module it finds relative to itself; a copy of the binary without the module
  refuses the OFX file, saying where it looked, and books nothing.
- libcrypto (SHA-256) and libxlsxwriter are not loaded at start-up (`LD_DEBUG=files` of
  `keel --version`) but by the command that needs them: the installed keel opens libxlsxwriter
  for `statement --xlsx`, and libcrypto for an import. With the library's file replaced by an
  empty one (a bind mount in the same namespace) it refuses, naming the library and the option,
  and writes or books nothing.
- `man -l` formats the installed page without a warning and shows every section; the installed
  completions complete.
- `cpack -G DEB` builds a .deb whose control fields (package, version, dependencies found by
  dpkg-shlibdeps, description, maintainer) are right; `dpkg -x` unpacks it into a scratch root
  whose files are those above under /usr, and its keel runs the demo in the same hidden setting.

Skips (exit 77) only when a tool it needs is missing: cmake, cpack, dpkg-deb, man (man-db),
strings and readelf (binutils), unshare, bash and zsh are all installed by README's first
command.
"""
import gzip
import os
import re
import shutil
import sqlite3
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import KEEL, SOURCE, check, equal  # noqa: E402

TOOLS = ["cmake", "cpack", "dpkg-deb", "man", "strings", "readelf", "ldd", "unshare", "bash", "zsh"]
missing = [t for t in TOOLS if not shutil.which(t)]
if missing:
    print(f"SKIP: missing {', '.join(missing)}; see README's install line")
    sys.exit(77)

SOURCE_DIR = os.path.realpath(SOURCE)
BUILD_DIR = os.path.realpath(os.environ.get("KEEL_BUILD_DIR", os.path.dirname(KEEL)))
work = tempfile.TemporaryDirectory(prefix="keel-install-")
scratch = os.path.realpath(work.name)
check(not scratch.startswith(SOURCE_DIR + os.sep) and not scratch.startswith(BUILD_DIR + os.sep),
      f"the scratch folder {scratch} must lie outside the source and build folders")

INSTALLED = {
    "bin/keel",
    "lib/keel/keel-ofx.so",
    "share/man/man1/keel.1.gz",
    "share/bash-completion/completions/keel",
    "share/doc/keel/copyright",
}


def files_under(root):
    return {os.path.relpath(os.path.join(d, f), root) for d, _, fs in os.walk(root) for f in fs}


def run(args, **kw):
    return subprocess.run(args, capture_output=True, text=True, timeout=600, **kw)


# --- cmake --install into a scratch prefix ---
prefix = os.path.join(scratch, "prefix")
p = run(["cmake", "--install", BUILD_DIR, "--prefix", prefix])
equal(p.returncode, 0, f"cmake --install: {p.stderr}")
equal(files_under(prefix), INSTALLED | {"share/zsh/site-functions/_keel"},
      "files cmake --install puts in the prefix")

# --- no path of the tree inside the binary ---
# (AddressSanitizer writes each source file's name into the binary for its reports, so a
# sanitizer build is exempt; the runs below, with the tree hidden, hold for it too.)
for installed in ("bin/keel", "lib/keel/keel-ofx.so"):
    strings = run(["strings", "-a", os.path.join(prefix, installed)]).stdout
    if os.environ.get("KEEL_SANITIZED") == "1":
        print(f"note: sanitizer build; {installed} names its source files for AddressSanitizer")
    else:
        for tree in (SOURCE_DIR, BUILD_DIR):
            check(tree not in strings, f"the installed {installed} names {tree}")


# --- run where the tree cannot be reached ---
def hidden_run(keel, *args, path="/usr/bin:/bin", env_extra=None, emptied=()):
    """Runs keel with the source and build folders hidden, from a scratch folder, with an
    environment that names nothing of the tree (plus env_extra), and each file of `emptied`
    replaced by an empty one. Returns (code, stdout, stderr)."""
    home = os.path.join(scratch, "home")
    os.makedirs(os.path.join(home, "tmp"), exist_ok=True)
    env = {"PATH": "/usr/bin:/bin", "HOME": home, "TMPDIR": os.path.join(home, "tmp"),
           "LANG": "C.UTF-8", "NO_COLOR": "1", **(env_extra or {})}
    hide = [SOURCE_DIR] + ([] if BUILD_DIR.startswith(SOURCE_DIR + os.sep) else [BUILD_DIR])
    script = "set -e\n" + "".join(f"mount -t tmpfs keel-hidden '{d}'\n" for d in hide) + "".join(
        f"mount --bind /dev/null '{f}'\n" for f in emptied) + (
        f"test ! -e '{SOURCE_DIR}/CMakeLists.txt'\ntest ! -e '{BUILD_DIR}/CMakeCache.txt'\n"
        f"exec env PATH='{path}' \"$@\"\n")
    wrapped = ["unshare", "--mount", "--map-root-user", "sh", "-c", script, "hidden", keel, *args]
    p = run(wrapped, env=env, cwd=home)
    if p.returncode != 0 and "unshare" in p.stderr and not hidden_run.warned:
        print(f"note: no mount namespace here ({p.stderr.strip()}); running without one")
        hidden_run.warned = True
    if hidden_run.warned:
        check(not emptied, "emptying a library file needs a mount namespace")
        p = run(["env", f"PATH={path}", keel, *args], env=env, cwd=home)
    return p.returncode, p.stdout, p.stderr


hidden_run.warned = False


def check_demo(keel, where, path="/usr/bin:/bin"):
    demo = os.path.join(scratch, where)
    code, out, err = hidden_run(keel, "demo", "--dir", demo, path=path)
    equal((code, err), (0, ""), f"{where}: keel demo exit status and stderr")
    check(out.startswith("keel demo: the Ardwyn household of Thistlecombe (invented)"), out[:200])
    check(f"(keel propose --rule {demo}/rule.toml --as-of 2025-12-31)" in out,
          f"{where}: the demo proposes with the rule it wrote")
    check(re.search(r"^\S.*\s(buy|sell)\s+\d+\s", out, re.M), f"{where}: the proposal has orders")
    check(os.path.getsize(os.path.join(demo, "statement-2025.html")) > 10000,
          f"{where}: the demo writes its statement")
    for tree in (SOURCE_DIR, BUILD_DIR):
        check(tree not in out, f"{where}: the demo's output names {tree}")
    return out


# An invented statement (examples/import), copied out of the source folder that the runs hide.
statement = os.path.join(scratch, "broker-statement.ofx")
shutil.copyfile(os.path.join(SOURCE_DIR, "examples", "import", "broker-statement.ofx"), statement)


def ofx_import(keel, where):
    """Books the statement into a fresh ledger with `keel`; (code, stdout, stderr) of the import."""
    ledger = os.path.join(scratch, where, "ledger.db")
    os.makedirs(os.path.dirname(ledger))
    for args in (["init", "--currency", "EUR"], ["account", "add", "Brokerage"],
                 ["security", "add", "QRX", "--name", "Quarry Rex", "--kind", "stock"],
                 ["security", "add", "VLM", "--name", "Vellum Mills", "--kind", "stock"]):
        code, _, err = hidden_run(keel, "--db", ledger, *args)
        equal((code, err), (0, ""), f"{where}: keel {' '.join(args)}")
    return hidden_run(keel, "--db", ledger, "import", "transactions", statement, "--account",
                      "Brokerage")


def check_ofx_import(keel, where):
    code, out, err = ofx_import(keel, where)
    equal((code, err), (0, ""), f"{where}: OFX import through the installed module")
    check("6 rows read; added 7, 0 already booked" in out, f"{where}: {out}")


elsewhere = os.path.join(scratch, "elsewhere", "keel")
shutil.copytree(prefix, elsewhere, symlinks=True)
installed_keel = os.path.join(elsewhere, "bin", "keel")
demo_out = check_demo(installed_keel, "demo-installed")
check(f"wrote PDF {scratch}/demo-installed/statement-2025.pdf" in demo_out or not shutil.which(
    "chromium"), "with Chromium on PATH the installed demo prints the PDF too")
code, out, err = hidden_run(installed_keel, "--help")
equal((code, err), (0, ""), "keel --help")
check(out.startswith("keel: an exact ledger of your own accounts"), out[:200])
check(re.search(r"^  demo\s", out, re.M), "keel --help lists the commands")
equal(hidden_run(installed_keel, "--version")[:2], (0, "keel 0.1.0\n"), "keel --version")
check_ofx_import(installed_keel, "ofx-installed")
lonely_keel = os.path.join(scratch, "lonely", "bin", "keel")
os.makedirs(os.path.dirname(lonely_keel))
shutil.copy2(installed_keel, lonely_keel)
code, out, err = ofx_import(lonely_keel, "ofx-lonely")
equal((code, out, err), (1, "", f"keel: error: {statement}: reading OFX needs keel's OFX module, "
                                 f"keel-ofx.so, found neither in {scratch}/lonely/lib/keel nor in "
                                 f"{scratch}/lonely/bin; install keel with it, or import the "
                                 "statement as CSV\n"),
      "a keel without its OFX module refuses the file, saying where it looked")
con = sqlite3.connect(os.path.join(scratch, "ofx-lonely", "ledger.db"))
equal(con.execute("SELECT count(*) FROM txn").fetchone()[0], 0, "the refused import books nothing")
con.close()


# --- libcrypto and libxlsxwriter: opened by the commands that need them ---
def opened(stderr):
    """{soname: file} of the libraries a run opened itself (dlopen), from LD_DEBUG=files,libs."""
    files = {os.path.basename(f): f for f in re.findall(r"calling init: (\S+)", stderr)}
    return {n: files.get(n) for n in re.findall(r"file=(\S+) \[0\];  dynamically loaded by",
                                                  stderr)}


debug = {"LD_DEBUG": "files,libs"}
code, out, err = hidden_run(installed_keel, "--version", env_extra=debug)
equal(code, 0, "keel --version under LD_DEBUG")
for library in ("libcrypto", "libxlsxwriter", "libofx", "libminizip"):
    check(f"file={library}." not in err, f"keel --version loads no {library}")
demo_db = os.path.join(scratch, "demo-installed", "keel.db")
workbook = os.path.join(scratch, "demo-installed", "statement-2025.xlsx")
code, out, err = hidden_run(installed_keel, "--db", demo_db, "statement", "--year", "2025",
                            "--xlsx", workbook, env_extra=debug)
equal((code, out), (0, f"wrote XLSX {workbook}\n"), "the installed keel writes the XLSX")
xlsx_library = opened(err)
equal(sorted(xlsx_library), ["libxlsxwriter.so.4"], "statement --xlsx opens libxlsxwriter itself")
prices = os.path.join(scratch, "prices.csv")
with open(prices, "w", encoding="utf-8") as f:
    f.write("date,symbol,close\n2025-12-31,QRX,12.5\n")
ledger_args = ["--db", os.path.join(scratch, "ofx-installed", "ledger.db")]
code, out, err = hidden_run(installed_keel, *ledger_args, "import", "prices", prices,
                            env_extra=debug)
equal(code, 0, f"the installed keel imports prices: {out} {err[-400:]}")
crypto_library = opened(err)
equal(sorted(crypto_library), ["libcrypto.so.3"], "an import opens libcrypto itself")

if hidden_run.warned:
    print("note: no mount namespace; the runs without libcrypto and libxlsxwriter are skipped")
else:
    refused = os.path.join(scratch, "refused.xlsx")
    code, out, err = hidden_run(installed_keel, "--db", demo_db, "statement", "--year", "2025",
                                "--xlsx", refused,
                                emptied=[xlsx_library["libxlsxwriter.so.4"]])
    equal((code, out), (1, ""), f"without libxlsxwriter: exit status and output ({err})")
    check(err.startswith("keel: error: --xlsx: writing XLSX needs the shared library "
                         "libxlsxwriter.so.4, which cannot be loaded from LD_LIBRARY_PATH, "
                         "/etc/ld.so.cache, /lib or /usr/lib: "), err)
    equal([f for f in os.listdir(scratch) if "refused" in f], [],
          "no workbook, nor its temporary file, without libxlsxwriter")
    before = sqlite3.connect(ledger_args[1]).execute("SELECT count(*) FROM price").fetchone()
    more = os.path.join(scratch, "more-prices.csv")
    with open(more, "w", encoding="utf-8") as f:
        f.write("date,symbol,close\n2025-12-30,QRX,12.25\n")
    code, out, err = hidden_run(installed_keel, *ledger_args, "import", "prices", more,
                                emptied=[crypto_library["libcrypto.so.3"]])
    equal((code, out), (1, ""), f"without libcrypto: exit status and output ({err})")
    check(err.startswith("keel: error: computing a SHA-256 digest needs the shared library "
                         "libcrypto.so.3, which cannot be loaded from LD_LIBRARY_PATH, "
                         "/etc/ld.so.cache, /lib or /usr/lib: "), err)
    equal(sqlite3.connect(ledger_args[1]).execute("SELECT count(*) FROM price").fetchone(),
          before, "an import without libcrypto books nothing")

# --- the manual page, as man shows it ---
page = os.path.join(prefix, "share", "man", "man1", "keel.1.gz")
with gzip.open(page, "rt", encoding="utf-8") as f:
    equal(f.read(), run([KEEL, "manpage"]).stdout, "the installed page is what keel manpage prints")
p = run(["man", "--warnings", "-l", page],
        env=dict(os.environ, MANPAGER="cat", MANWIDTH="80", LANG="C.UTF-8"))
equal((p.returncode, p.stderr), (0, ""), "man -l on the installed page: status and warnings")
for section in ("NAME", "SYNOPSIS", "DESCRIPTION", "COMMANDS", "EXAMPLES", "ENVIRONMENT", "FILES",
                "EXIT STATUS"):
    check(re.search(rf"^{section}$", p.stdout, re.M), f"man shows the section {section}")

# --- the installed completions complete ---
bash_script = os.path.join(prefix, "share", "bash-completion", "completions", "keel")
probe = (f"source '{bash_script}'; COMP_WORDS=(keel record bu); COMP_CWORD=2; _keel_complete; "
         'printf "%s\\n" "${COMPREPLY[@]}"')
equal(run(["bash", "-c", probe]).stdout.split(), ["buy"], "bash completion from the installed file")
zsh_dir = os.path.join(prefix, "share", "zsh", "site-functions")
probe = (f"fpath=('{zsh_dir}' $fpath); autoload -Uz _keel\n"
         "compadd() { [[ $1 == -- ]] && shift; local w n=1; for w; do\n"
         "  [[ $w == ${PREFIX}* ]] && { print -r -- $w; n=0; }; done; return n; }\n"
         "words=(keel record bu); CURRENT=3; PREFIX=bu; _keel\n")
equal(run(["zsh", "-f", "-c", probe]).stdout.split(), ["buy"],
      "zsh completion autoloaded from the installed folder")

# --- the .deb ---
packages = os.path.join(scratch, "packages")
p = run(["cpack", "-G", "DEB", "-B", packages, "--config",
         os.path.join(BUILD_DIR, "CPackConfig.cmake")], cwd=BUILD_DIR)
equal(p.returncode, 0, f"cpack: {p.stdout}{p.stderr}")
debs = [f for f in os.listdir(packages) if f.endswith(".deb")]
equal(len(debs), 1, f"one .deb in {os.listdir(packages)}")
deb = os.path.join(packages, debs[0])
arch = run(["dpkg", "--print-architecture"]).stdout.strip()
equal(debs[0], f"keel_0.1.0_{arch}.deb", "file name of the .deb")


def field(name):
    return run(["dpkg-deb", "-f", deb, name]).stdout.rstrip("\n")


equal(field("Package"), "keel", "Package")
equal(field("Version"), "0.1.0", "Version")
equal(field("Architecture"), arch, "Architecture")
equal(field("Section"), "utils", "Section")
check(re.fullmatch(r"[^<>]+ <[^<>@ ]+@[^<>@ ]+>", field("Maintainer")), field("Maintainer"))
depends = {re.sub(r"\s*\(.*\)", "", d.strip()) for d in field("Depends").split(",")}
check({"libc6", "libfmt9", "libsqlite3-0", "libstdc++6", "libtomlplusplus3",
       "libxlsxwriter4", "libofx7", "libssl3"} <= depends,
      f"Depends names the libraries keel links or opens: {depends}")
# ... and nothing else: every package named owns a library the binary loads (ldd, dpkg -S),
# or one it opens when needed (above).
loaded = [lib for installed in ("bin/keel", "lib/keel/keel-ofx.so") for lib in
          re.findall(r"=> (/\S+)", run(["ldd", os.path.join(prefix, installed)]).stdout)]
loaded += list(xlsx_library.values()) + list(crypto_library.values())
owners = set()
for lib in loaded:
    found = run(["dpkg", "-S", os.path.realpath(lib)])
    if found.returncode != 0:
        found = run(["dpkg", "-S", lib])
    owners |= {line.split(":")[0] for line in found.stdout.splitlines()}
check(depends <= owners, f"Depends {sorted(depends)} beyond the owners of loaded libraries "
                         f"{sorted(owners)}")
equal(field("Recommends"), "chromium", "Recommends")
description = field("Description").split("\n")
equal(description[0],
      "exact ledger of your own brokerage accounts, with rule-based rebalancing", "synopsis")
check(len(description) > 3 and all(line.startswith(" ") and len(line) <= 81 for line in
                                   description[1:]), f"a long description in lines: {description}")
check("no investment or tax advice" in " ".join(description), "the description cautions")

root = os.path.join(scratch, "root")
p = run(["dpkg", "-x", deb, root])
equal(p.returncode, 0, f"dpkg -x: {p.stderr}")
equal(files_under(root), {"usr/" + f for f in INSTALLED | {"share/zsh/vendor-completions/_keel"}},
      "files of the .deb")
with open(os.path.join(root, "usr", "share", "doc", "keel", "copyright"), encoding="utf-8") as f:
    copyright_text = f.read()
check(copyright_text.startswith(
    "Format: https://www.debian.org/doc/packaging-manuals/copyright-format/1.0/\n"
    "Upstream-Name: keel\n"), "the copyright file is machine-readable")
check(re.search(r"^Files: \*\nCopyright: .+\nLicense: .+", copyright_text, re.M),
      "the copyright file covers every file")
deb_keel = os.path.join(root, "usr", "bin", "keel")
for packed in ("bin/keel", "lib/keel/keel-ofx.so"):
    check(".symtab" not in run(["readelf", "-S", os.path.join(root, "usr", packed)]).stdout,
          f"the packaged {packed} is stripped")
check_demo(deb_keel, "demo-deb", path="/nonexistent")  # no Chromium: the HTML only
check_ofx_import(deb_keel, "ofx-deb")

size = os.path.getsize(deb)
print(f"install: prefix and .deb check out; binary {os.path.getsize(installed_keel)} bytes, "
      f".deb {size} bytes")
