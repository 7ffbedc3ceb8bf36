"""Exclusion and sampling never import probability (no cycle).  Importing every module
alone is checked in tests/test_layout.py; the docstring examples run as doctests
(--doctest-modules, pyproject.toml)."""

import ast
import importlib
import importlib.util

import pytest


def _imported_modules(module):
    """Every module named in an import statement of ``module``'s source (ast)."""
    with open(importlib.util.find_spec(module).origin) as fh:
        tree = ast.parse(fh.read())
    names = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            names.add("." * node.level + (node.module or ""))
            names.update("." * node.level + a.name for a in node.names if not node.module)
        elif isinstance(node, ast.Import):
            names.update(a.name for a in node.names)
    return names


def test_the_import_scanner_sees_probability_imports():
    assert ".exclusion" in _imported_modules("ptaconstrain.analysis.probability")


@pytest.mark.parametrize(
    "module",
    [
        "ptaconstrain.analysis.exclusion",
        "ptaconstrain.analysis.sampling",
        "ptaconstrain.analysis.isco_counts",
    ],
)
def test_exclusion_and_sampling_never_import_probability(module):
    assert not any(name.endswith("probability") for name in _imported_modules(module))
