"""The promise every command keeps under hostile input, as one assertion.

Either the command succeeds (exit 0), or it fails with exactly one line
``Error: ...`` (exit 1, or 2 for a usage error), no traceback, no internal
error, and nothing in ``--out`` (the directory is absent or empty).

Shared by the fuzz tests (test input and checks, not library code); importable
because pytest puts tests/ on sys.path (pyproject: pythonpath).
"""

import resource
from contextlib import contextmanager
from pathlib import Path

from click.testing import CliRunner

from ptaconstrain.cli import main
from ptaconstrain.data import path as data_file

#: address-space cap while a fuzz case runs: a runaway allocation becomes a
#: MemoryError (an internal error, so a failing case) instead of exhausting the machine
ADDRESS_SPACE_CAP = 8 * 1024**3

CURVE = str(data_file("synthetic_h0_limit.ecsv"))
ARRAY = str(data_file("demo_array.ecsv"))


@contextmanager
def capped_memory(limit=ADDRESS_SPACE_CAP):
    soft, hard = resource.getrlimit(resource.RLIMIT_AS)
    cap = limit if hard == resource.RLIM_INFINITY else min(limit, hard)
    resource.setrlimit(resource.RLIMIT_AS, (cap, hard))
    try:
        yield
    finally:
        resource.setrlimit(resource.RLIMIT_AS, (soft, hard))


def run(args):
    with capped_memory():
        return CliRunner().invoke(main, [str(a) for a in args])


def left_in(out):
    """Every entry left under ``out`` (hidden ones too), or [] if it does not exist."""
    out = Path(out)
    if out.is_file():
        return [out.name]
    return sorted(str(p.relative_to(out)) for p in out.rglob("*")) if out.exists() else []


def assert_promise(result, out, allow_success=True):
    """Check the promise for one command run; returns True when it succeeded."""
    text = result.output or ""
    lines = [ln for ln in text.strip().splitlines() if ln.strip()]
    assert "Traceback" not in text, text
    assert "internal error" not in text, text
    if result.exit_code == 0:
        assert allow_success, f"accepted: {text}"
        return True
    assert result.exit_code in (1, 2), (result.exit_code, text)
    assert len(lines) == 1 and lines[0].startswith("Error: "), text
    assert left_in(out) == [], (left_in(out), text)
    return False
