"""The test suite's own hygiene: no comparison whose default absolute tolerance hides the value.

``pytest.approx(x)`` accepts anything within 1e-12 of ``x`` (on top of rel=1e-6), and
``np.allclose`` / ``np.isclose`` anything within 1e-8 (on top of rtol=1e-5) -- the pytest and
numpy documentation of ``approx`` and ``isclose``. A strain of 1e-15, a PSD of 1e-30 s^3 or a
rate of 1e-10 /yr then passes whatever its value: the test cannot fail. So every such call in
tests/ (and in the doctests of src/) names its absolute tolerance: ``abs=0`` / ``atol=0`` with
a relative tolerance, or an absolute one that means something for the compared quantity (an
angle in degrees). A call on values of order one may instead carry the comment
``# approx-ok: values of order 1`` on one of its lines.

``approx(x, abs=0)`` without ``rel`` is an exact comparison (pytest uses only the absolute
tolerance when ``rel`` is not given), so that form is refused too: write ``==`` or give ``rel``.
"""

import ast
import pathlib

import pytest

ROOT = pathlib.Path(__file__).resolve().parent.parent
OPT_OUT = "# approx-ok:"
# function name -> the keyword that sets its absolute tolerance
CHECKED = {"approx": "abs", "allclose": "atol", "isclose": "atol"}


def _checked_name(func):
    """The checked function a call refers to (approx, np.allclose, np.isclose), or None."""
    if isinstance(func, ast.Name) and func.id == "approx":
        return "approx"
    if isinstance(func, ast.Attribute):
        if func.attr == "approx":
            return "approx"
        if func.attr in ("allclose", "isclose") and isinstance(func.value, ast.Name):
            if func.value.id in ("np", "numpy"):
                return func.attr
    return None


def loose_comparisons(source, filename):
    """``file:line: reason`` for each call that relies on a default absolute tolerance."""
    tree = ast.parse(source, filename)
    lines = source.splitlines()
    found = []
    calls = [n for n in ast.walk(tree) if isinstance(n, ast.Call)]
    for node in sorted(calls, key=lambda n: (n.lineno, n.col_offset)):
        name = _checked_name(node.func)
        if name is None:
            continue
        span = lines[node.lineno - 1 : node.end_lineno]
        if any(OPT_OUT in line for line in span):
            continue
        keywords = {k.arg: k.value for k in node.keywords}
        if CHECKED[name] not in keywords:
            found.append(
                f"{filename}:{node.lineno}: {name}() without {CHECKED[name]}= (its default "
                f"absolute tolerance passes any small value); give {CHECKED[name]}=0 and a "
                f"relative tolerance, or mark it '{OPT_OUT} values of order 1'"
            )
        elif name == "approx" and "rel" not in keywords:
            tol = keywords["abs"]
            if isinstance(tol, ast.Constant) and tol.value == 0:
                found.append(
                    f"{filename}:{node.lineno}: approx(..., abs=0) without rel= is an exact "
                    "comparison; give rel= (or write ==)"
                )
    return found


def _doctest_sources(path):
    """The doctest lines of one source file, as a parseable snippet per line."""
    for number, line in enumerate(path.read_text().splitlines(), 1):
        text = line.strip()
        if text.startswith(">>> ") and any(f"{n}(" in text for n in CHECKED):
            yield number, text[4:]


def test_the_check_flags_default_tolerances_and_accepts_explicit_ones():
    bad = (
        "assert h == pytest.approx(1e-15)\n"
        "assert np.allclose(psd, ref, rtol=1e-12)\n"
        "assert np.isclose(\n    a,\n    b,\n)\n"
        "assert x == approx(y, rel=0.1)\n"
        "assert x == pytest.approx(y, abs=0)\n"
    )
    found = loose_comparisons(bad, "bad.py")
    assert [f.split(":")[1] for f in found] == ["1", "2", "3", "7", "8"]
    assert "exact comparison" in found[-1]
    good = (
        "assert h == pytest.approx(1e-15, rel=1e-12, abs=0)\n"
        "assert np.allclose(psd, ref, rtol=1e-12, atol=0)\n"
        "assert np.isclose(\n    a,  # approx-ok: values of order 1\n    b,\n)\n"
        "assert ra == pytest.approx(15.0, abs=1e-9)\n"
        "np.testing.assert_allclose(a, b, rtol=1e-9)\n"
    )
    assert loose_comparisons(good, "good.py") == []


def test_no_comparison_in_the_suite_relies_on_a_default_absolute_tolerance():
    found = []
    for path in sorted((ROOT / "tests").rglob("*.py")):
        found += loose_comparisons(path.read_text(), str(path.relative_to(ROOT)))
    # src/ is absent when the suite runs from a copy of tests/ against the installed wheel
    for path in sorted((ROOT / "src").rglob("*.py")) if (ROOT / "src").is_dir() else []:
        for number, snippet in _doctest_sources(path):
            try:
                hits = loose_comparisons(snippet, "doctest")
            except SyntaxError:  # a continued statement: checked by eye
                continue
            name = path.relative_to(ROOT)
            found += [f"{name}:{number}:{h.split(':', 2)[2]}" for h in hits]
    if found:
        pytest.fail("\n".join(found), pytrace=False)
