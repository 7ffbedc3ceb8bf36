"""The package's shape: every module imports alone, imports point downward, no cycles.

The layering is the one drawn in DEVELOPERS.md.  These tests read the code's own
imports (``ast``) and import each module in a fresh interpreter.
"""

import ast
import json
import subprocess
import sys
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest

import ptaconstrain

ROOT = Path(ptaconstrain.__file__).resolve().parent

#: rank of each top-level part; a module may import (at module level) only parts of
#: lower or equal rank
LAYERS = {
    "errors": 0,
    "_version": 0,
    "data": 0,
    "cosmo": 1,
    "_files": 1,
    "_inputs": 2,
    "binary": 3,
    "sensitivity": 3,
    "analysis": 4,
    "catalogue": 4,
    "report": 5,
    "demo": 6,
    "cli": 7,
    "__main__": 8,
    "__init__": 9,
}
#: results may draw and tabulate themselves: the analysis and catalogue layers may
#: import the report layer inside a function (lazily), never at module level
LAZY_UPWARD = {("analysis", "report"), ("catalogue", "report"), ("sensitivity", "report")}


def _modules():
    out = []
    for path in sorted(ROOT.rglob("*.py")):
        rel = path.relative_to(ROOT).with_suffix("")
        parts = ["ptaconstrain", *rel.parts]
        if parts[-1] == "__init__":
            parts = parts[:-1]
        out.append((".".join(parts), path))
    return out


MODULES = _modules()


def _part(module):
    bits = module.split(".")
    return bits[1] if len(bits) > 1 else "__init__"


def _imports(module, path):
    """(target module, name or None, lazy?) for every ptaconstrain import in ``path``."""
    tree = ast.parse(path.read_text())
    is_pkg = path.name == "__init__.py"
    package = module if is_pkg else module.rsplit(".", 1)[0]
    found = []

    def visit(node, lazy):
        for child in ast.iter_child_nodes(node):
            inner = lazy or isinstance(child, (ast.FunctionDef, ast.AsyncFunctionDef))
            if isinstance(child, ast.ImportFrom):
                if child.level:
                    base = package.split(".")
                    base = base[: len(base) - (child.level - 1)]
                    target = ".".join(base + ([child.module] if child.module else []))
                else:
                    target = child.module or ""
                if target.startswith("ptaconstrain"):
                    for alias in child.names:
                        found.append((target, alias.name, lazy))
            elif isinstance(child, ast.Import):
                for alias in child.names:
                    if alias.name.startswith("ptaconstrain"):
                        found.append((alias.name, None, lazy))
            visit(child, inner)

    visit(tree, False)
    return found


#: below the report layer nothing draws or touches HEALPix at import time (DESIGN.md:
#: matplotlib and healpy are imported inside the functions that need them)
_LIGHT_PARTS = {
    "errors",
    "_version",
    "data",
    "cosmo",
    "_files",
    "_inputs",
    "binary",
    "sensitivity",
    "analysis",
    "catalogue",
}
_PROBE = (
    "import json, sys, {name}; print(json.dumps(sorted(m for m in sys.modules "
    "if m in ('matplotlib', 'healpy') or m.startswith('ptaconstrain.'))))"
)


def _loaded_alone(name):
    """Import ``name`` in a fresh interpreter: (name, error line or None, modules loaded)."""
    res = subprocess.run(
        [sys.executable, "-c", _PROBE.format(name=name)],
        capture_output=True,
        text=True,
        timeout=300,
    )
    if res.returncode != 0:
        return name, (res.stderr.strip().splitlines()[-1:] or [""])[0], []
    return name, None, json.loads(res.stdout.strip().splitlines()[-1])


@pytest.mark.slow
def test_every_module_imports_alone_in_a_fresh_interpreter():
    names = [m for m, _ in MODULES if not m.endswith("__main__")]  # those run the CLI
    with ThreadPoolExecutor(max_workers=4) as pool:
        results = list(pool.map(_loaded_alone, names))
    failures = [(n, err) for n, err, _ in results if err is not None]
    assert not failures, failures
    heavy, sibling = [], []
    for name, _, loaded in results:
        part = _part(name)
        if part in _LIGHT_PARTS:
            heavy += [(name, m) for m in loaded if m in ("matplotlib", "healpy")]
        other = {"binary": "sensitivity", "sensitivity": "binary"}.get(part)
        if other:  # siblings: neither loads the other, not even indirectly
            sibling += [(name, m) for m in loaded if _part(m) == other]
    assert not heavy, heavy
    assert not sibling, sibling


#: the optional scale extra (Parquet, HATS, Dask): loaded only by the code paths that use it
_SCALE = ("lsdb", "hats", "nested_pandas", "dask", "distributed", "pyarrow", "pandas")
_SCALE_PROBE = f"""
import json, sys
from click.testing import CliRunner
import ptaconstrain
from ptaconstrain.cli import main
for args in (["--help"], ["rank", "--help"]):
    assert CliRunner().invoke(main, args).exit_code == 0
import ptaconstrain.catalogue, ptaconstrain.report.ranking_files
import ptaconstrain.catalogue.dask_engine, ptaconstrain.catalogue.cluster
print(json.dumps(sorted({{m.split(".")[0] for m in sys.modules}} & set({_SCALE!r}))))
"""


def test_base_import_and_help_load_no_scale_library():
    # pyproject: the 'scale' extra is optional; `ptaconstrain --help`, `rank --help` and
    # every module of the ranking import without it (DESIGN.md: the scale engine lazily)
    res = subprocess.run(
        [sys.executable, "-c", _SCALE_PROBE], capture_output=True, text=True, timeout=300
    )
    assert res.returncode == 0, res.stderr
    assert json.loads(res.stdout.strip().splitlines()[-1]) == []


def test_no_private_names_imported_across_modules():
    bad = []
    for module, path in MODULES:
        for target, name, _ in _imports(module, path):
            module_names = {m for m, _ in MODULES}
            if f"{target}.{name}" in module_names:
                continue  # a package-internal module such as _inputs is meant to be shared
            if name and name.startswith("_") and not name.startswith("__"):
                bad.append(f"{module} imports {name} from {target}")
    assert not bad, bad


def test_imports_point_downward():
    bad = []
    for module, path in MODULES:
        src = _part(module)
        for target, name, lazy in _imports(module, path):
            dst = _part(target)
            if target == "ptaconstrain" and name in LAYERS:  # from .. import data
                dst = name
            if dst == src or dst not in LAYERS or src not in LAYERS:
                continue
            if LAYERS[dst] > LAYERS[src] and not (lazy and (src, dst) in LAZY_UPWARD):
                bad.append(
                    f"{module} -> {target}{'' if not name else ':' + name}"
                    f"{' (lazy)' if lazy else ''}"
                )
    assert not bad, bad


def test_binary_and_sensitivity_are_siblings():
    # DESIGN.md: neither imports the other; analysis/ and catalogue/ combine them
    bad = [
        f"{m} -> {t}"
        for m, p in MODULES
        for t, _, _ in _imports(m, p)
        if {_part(m), _part(t)} == {"binary", "sensitivity"}
    ]
    assert not bad, bad


def test_no_import_cycles_at_module_level():
    graph = {m: set() for m, _ in MODULES}
    for module, path in MODULES:
        for target, name, lazy in _imports(module, path):
            if lazy:
                continue
            full = f"{target}.{name}" if name and f"{target}.{name}" in graph else target
            if full in graph and full != module:
                graph[module].add(full)
    # a package imports its own submodules from __init__; that is not a cycle
    # unless a submodule imports the package's __init__ back
    state, cycle = {}, []

    def dfs(node, stack):
        state[node] = 1
        stack.append(node)
        for nxt in graph[node]:
            if state.get(nxt) == 1:
                cycle.append(stack[stack.index(nxt) :] + [nxt])
            elif nxt not in state:
                dfs(nxt, stack)
        stack.pop()
        state[node] = 2

    for node in graph:
        if node not in state:
            dfs(node, [])
    assert not cycle, cycle


@pytest.mark.parametrize("module", [m for m, _ in MODULES if "." in m])
def test_module_has_a_docstring(module):
    path = dict(MODULES)[module]
    assert ast.get_docstring(ast.parse(path.read_text())), f"{module} has no docstring"
