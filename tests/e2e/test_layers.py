"""The include graph keeps to the module map in DEVELOPERS.md: every `#include "m/..."` from
src/<folder>/ names a folder that the map lets <folder> depend on, the graph has no cycle, and
SQL and SQLite stay in src/store/. Reads source files only (nothing is run)."""
import os
import re
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import SOURCE, equal  # noqa: E402

SRC = os.path.join(SOURCE, "src")
INCLUDE = re.compile(r'^\s*#\s*include\s+"([a-z_]+)/', re.M)
SQL_WORDS = re.compile(r"\b(SELECT|INSERT INTO|DELETE FROM|CREATE TABLE)\b")


def module_map():
    """{folder: set of folders it may depend on} from the map's table."""
    with open(os.path.join(SOURCE, "DEVELOPERS.md"), encoding="utf-8") as f:
        text = f.read()
    rows = re.findall(r"^\| `src/([a-z_]+)/` \|.*\| ([^|]*) \|$", text, re.M)
    folders = [name for name, _ in rows]
    allowed = {}
    for i, (name, deps) in enumerate(rows):
        if deps.strip() == "everything above":
            allowed[name] = set(folders[:i])
        else:
            allowed[name] = {d for d in re.findall(r"\b([a-z]+)\b", deps) if d in folders}
    return allowed


def includes():
    """{folder: {included folder: first file that includes it}}."""
    found = {}
    for folder in sorted(os.listdir(SRC)):
        uses = found.setdefault(folder, {})
        for root, _, files in os.walk(os.path.join(SRC, folder)):
            for name in sorted(files):
                path = os.path.join(root, name)
                with open(path, encoding="utf-8", errors="replace") as f:
                    for used in INCLUDE.findall(f.read()):
                        if used != folder:
                            uses.setdefault(used, os.path.relpath(path, SOURCE))
    return found


def cycle(graph):
    """A list of folders forming a cycle, or [] when the graph has none."""
    state = {}

    def visit(node, path):
        state[node] = "open"
        for nxt in sorted(graph.get(node, {})):
            if state.get(nxt) == "open":
                return path[path.index(nxt):] + [nxt] if nxt in path else [node, nxt]
            if nxt not in state:
                found = visit(nxt, path + [nxt])
                if found:
                    return found
        state[node] = "done"
        return []

    for node in sorted(graph):
        if node not in state:
            found = visit(node, [node])
            if found:
                return found
    return []


def sql_outside_store():
    """Files outside src/store/ that hold SQL text or include SQLite."""
    hits = []
    for root, _, files in os.walk(SRC):
        if os.path.relpath(root, SRC).split(os.sep)[0] == "store":
            continue
        for name in sorted(files):
            path = os.path.join(root, name)
            with open(path, encoding="utf-8", errors="replace") as f:
                text = f.read()
            if SQL_WORDS.search(text) or "SQLiteCpp/" in text or "<sqlite3.h>" in text:
                hits.append(os.path.relpath(path, SOURCE))
    return hits


allowed = module_map()
graph = includes()
equal(sorted(set(graph) - set(allowed)), [], "folders under src/ missing from the module map")
upward = sorted(f"{folder} -> {used} ({where})" for folder, uses in graph.items()
                for used, where in uses.items() if used not in allowed.get(folder, set()))
equal(upward, [], "includes the module map does not allow")
equal(cycle(graph), [], "a cycle in the include graph")
equal(sql_outside_store(), [], "files outside src/store/ with SQL or SQLite")
print(f"layers: {len(graph)} folders keep to the module map; no cycle; SQL stays in store")
