#!/usr/bin/env python3
"""Fails when a source file imports above its floor or when files import each other in a circle.

Run by scripts/test (no dependencies: the standard library only):

    python3 scripts/check_layers.py

What it checks:

* The bindings (bindings-py/src, bindings-c/src): every file belongs to a floor, given below by
  its top-level module (a file or a folder under src/). A file may import files on lower
  floors, and files of its own folder; never a file on a higher floor, nor a file of another
  module on the same floor. The floors mirror the core's layering.
* The bindings and the core (core/src): no circle among files. An edge is a use of another
  file's items, by `use` or by a path written inline (`crate::a::b::f(...)`), with comments left
  out. A `pub use` in a folder's mod.rs is the folder's facade and no edge; a path that names an
  item through a folder's mod.rs is followed to the file that defines the item.

Exit status 1 with one line per finding; 0 and a summary line otherwise.
"""

from __future__ import annotations

import re
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

# Floors of each binding, by top-level module. Lower numbers are lower floors.
FLOORS = {
    "bindings-py/src": {
        "plumbing": 0,
        "rotation": 1,
        "time": 1,
        "earth": 2,
        "motion": 3,
        "apparent": 4,
        "nav": 5,
        "graph": 6,
        "linearise": 6,
        "calibrate": 6,
        "aided": 6,
        "propagate": 7,
        "lib": 9,
    },
    "bindings-c/src": {
        "status": 0,
        "enums": 0,
        "types": 1,
        "rotation": 2,
        "motion": 2,
        "time": 2,
        "earth": 3,
        "nav": 3,
        "graph": 4,
        "linearise": 4,
        "calibrate": 4,
        "aided": 4,
        "propagate": 5,
        "lib": 9,
    },
}

ITEM = re.compile(r"^\s*pub(?:\([^)]*\))?\s+(?:const\s+|unsafe\s+|extern\s+\"C\"\s+)*(?:struct|enum|fn|const|static|type|trait|mod)\s+(\w+)", re.M)
MACRO = re.compile(r"^\s*macro_rules!\s+(\w+)", re.M)


def strip_comments(text: str) -> str:
    """The code without line and block comments (strings are left alone: no source here puts
    `//` or a path inside a string that would matter)."""
    text = re.sub(r"/\*.*?\*/", "", text, flags=re.S)
    return "\n".join(line.split("//", 1)[0] for line in text.splitlines())


def module_path(src: Path, file: Path) -> list[str]:
    parts = list(file.relative_to(src).with_suffix("").parts)
    if parts[-1] == "mod":
        parts.pop()
    if parts in (["lib"], ["main"]):
        return []
    return parts


class Crate:
    def __init__(self, src: Path) -> None:
        self.src = src
        self.files = sorted(p for p in src.rglob("*.rs") if "bin" not in p.relative_to(src).parts)
        self.by_module = {tuple(module_path(src, f)): f for f in self.files}
        self.defines = {f: set(ITEM.findall(strip_comments(f.read_text()))) | set(MACRO.findall(f.read_text())) for f in self.files}

    def resolve(self, segments: list[str]) -> Path | None:
        """The file a path from the crate root leads to: the deepest module file, then the file
        under a folder that defines the named item."""
        best: Path | None = self.by_module.get(())
        depth = 0
        for i in range(1, len(segments) + 1):
            f = self.by_module.get(tuple(segments[:i]))
            if f is None:
                break
            best, depth = f, i
        if best is None:
            return None
        if best.name == "mod.rs" and depth < len(segments):
            name = segments[depth]
            folder = best.parent
            owners = [g for g in self.files if g != best and folder in g.parents and name in self.defines[g]]
            if name not in self.defines[best] and len(owners) == 1:
                return owners[0]
        return best

    def imports(self, file: Path) -> set[Path]:
        """The files `file` uses."""
        code = strip_comments(file.read_text())
        here = module_path(self.src, file)
        paths: list[list[str]] = []
        # `use` trees, expanded.
        for m in re.finditer(r"\b(pub(?:\([^)]*\))?\s+)?use\s+([^;]+);", code):
            public, tree = m.group(1), re.sub(r"\s+", "", m.group(2))
            if public and file.name == "mod.rs":
                continue  # a folder's facade
            for path in expand(tree):
                paths.append(path)
        # Paths written inline.
        for m in re.finditer(r"\b((?:crate|super|self)(?:::\w+)+)", code):
            paths.append(m.group(1).split("::"))
        out: set[Path] = set()
        for path in paths:
            if not path:
                continue
            if path[0] == "crate":
                absolute = path[1:]
            elif path[0] in ("super", "self"):
                base = list(here) if file.name in ("mod.rs", "lib.rs") else list(here[:-1]) + [here[-1]] if here else []
                rest = list(path)
                if rest[0] == "self":
                    rest = rest[1:]
                else:
                    # `super` from a.rs (module [x, a]) is [x]; from x/mod.rs (module [x]) it is [].
                    while rest and rest[0] == "super":
                        base = base[:-1]
                        rest = rest[1:]
                absolute = base + rest
            else:
                continue
            target = self.resolve(absolute)
            if target is not None and target != file:
                out.add(target)
        return out


def expand(tree: str) -> list[list[str]]:
    """`a::{b, c::{d, e}}` as [[a, b], [a, c, d], [a, c, e]] (globs and renames dropped)."""
    tree = re.sub(r"\bas\w+", "", tree)
    brace = tree.find("{")
    if brace < 0:
        parts = [p for p in tree.split("::") if p and p != "*"]
        return [parts] if parts else []
    prefix = [p for p in tree[:brace].split("::") if p]
    inner = tree[brace + 1 : tree.rfind("}")]
    items, depth, current = [], 0, ""
    for ch in inner:
        if ch == "," and depth == 0:
            items.append(current)
            current = ""
            continue
        depth += ch == "{"
        depth -= ch == "}"
        current += ch
    items.append(current)
    out = []
    for item in items:
        if item in ("", "self"):
            if item == "self":
                out.append(prefix)
            continue
        for sub in expand(item):
            out.append(prefix + sub)
    return out


def top_module(src: Path, file: Path) -> str:
    first = file.relative_to(src).parts[0]
    return first[:-3] if first.endswith(".rs") else first


def circles(graph: dict[Path, set[Path]]) -> list[list[Path]]:
    """The strongly connected components with more than one file (Tarjan)."""
    index: dict[Path, int] = {}
    low: dict[Path, int] = {}
    stack: list[Path] = []
    on: set[Path] = set()
    found: list[list[Path]] = []
    counter = [0]

    def visit(v: Path) -> None:
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on.add(v)
        for w in sorted(graph.get(v, ())):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            component = []
            while True:
                w = stack.pop()
                on.discard(w)
                component.append(w)
                if w == v:
                    break
            if len(component) > 1:
                found.append(sorted(component))

    sys.setrecursionlimit(10000)
    for v in sorted(graph):
        if v not in index:
            visit(v)
    return found


def main() -> int:
    problems: list[str] = []
    edges = 0
    for src_name in ["core/src", "bindings-py/src", "bindings-c/src"]:
        src = ROOT / src_name
        crate = Crate(src)
        graph = {f: crate.imports(f) for f in crate.files}
        edges += sum(len(v) for v in graph.values())
        floors = FLOORS.get(src_name)
        if floors is not None:
            for f, targets in graph.items():
                mine = top_module(src, f)
                if mine not in floors:
                    problems.append(f"{f.relative_to(ROOT)}: module `{mine}` has no floor in scripts/check_layers.py")
                    continue
                for t in targets:
                    theirs = top_module(src, t)
                    if theirs == mine or t.name == "lib.rs":
                        continue
                    if floors.get(theirs, 99) >= floors[mine]:
                        problems.append(
                            f"{f.relative_to(ROOT)} (floor {floors[mine]}) imports {t.relative_to(ROOT)} "
                            f"(floor {floors.get(theirs, '?')}): only lower floors may be imported"
                        )
        for component in circles(graph):
            names = " ↔ ".join(str(f.relative_to(ROOT)) for f in component)
            problems.append(f"circle among files: {names}")
    if problems:
        print("\n".join(problems))
        print(f"check_layers: {len(problems)} problem(s)")
        return 1
    print(f"check_layers: no upward import and no circle ({edges} file edges checked in core, Python and C)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
