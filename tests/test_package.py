"""The package's front door: lazy public names, a cheap import, ``python -m ptaconstrain``."""

import importlib
import os
import subprocess
import sys
from pathlib import Path

import pytest

import ptaconstrain

# the source tree of the package under test, so that child interpreters import the same one
SRC = str(Path(ptaconstrain.__file__).resolve().parent.parent)
HEAVY = ("astropy", "matplotlib", "healpy", "scipy")


def _python(code, *args):
    env = dict(os.environ, PYTHONPATH=SRC + os.pathsep + os.environ.get("PYTHONPATH", ""))
    return subprocess.run(
        [sys.executable, *(("-c", code) if code else ()), *args],
        capture_output=True,
        text=True,
        env=env,
        timeout=120,
    )


def _loaded_after(statement):
    code = (
        f"import sys\n{statement}\n"
        f"print(sorted({{m.split('.')[0] for m in sys.modules}} & set({HEAVY!r})))"
    )
    r = _python(code)
    assert r.returncode == 0, r.stderr
    return r.stdout.strip()


def test_import_ptaconstrain_loads_no_heavy_library():
    assert _loaded_after("import ptaconstrain") == "[]"


def test_the_command_line_group_loads_no_heavy_library():
    # `ptaconstrain --help` must stay fast: commands import the library in their bodies
    assert _loaded_after("import ptaconstrain.cli") == "[]"


def test_a_circular_exclusion_loads_no_scipy():
    # scipy.special (the Bessel functions of eccentric orbits) costs every process that
    # imports it ~0.15 s of CPU; a circular map (every `exclude` by default) needs none
    loaded = _loaded_after(
        "from ptaconstrain import Host, exclusion_map, load_curve\n"
        "from ptaconstrain.data import path\n"
        "exclusion_map(Host('Lean', 2e10, 100), load_curve(path('synthetic_h0_limit.ecsv')))"
    )
    assert "astropy" in loaded and "scipy" not in loaded


def test_the_demo_module_needs_no_click():
    assert _loaded_after("import ptaconstrain.demo; assert 'click' not in sys.modules") == "[]"


@pytest.mark.parametrize("name", [n for n in ptaconstrain.__all__ if n != "__version__"])
def test_each_public_name_is_the_object_of_its_module(name):
    value = getattr(ptaconstrain, name)
    module = importlib.import_module(value.__module__)
    assert getattr(module, name) is value
    assert name in dir(ptaconstrain)


def test_front_door_imports_and_runs():
    from astropy import units as u

    from ptaconstrain import Host, exclusion_map, load_curve
    from ptaconstrain.data import path as data_file

    result = exclusion_map(
        Host("Front door", 2e10, 100),
        load_curve(data_file("synthetic_h0_limit.ecsv")),
        period=[1, 10] * u.yr,
        mass_ratio=[0.01, 1],
    )
    assert result.host.name == "Front door" and result.is_limit


def test_unknown_name_is_an_attribute_error():
    with pytest.raises(AttributeError, match="no attribute 'exclusion'"):
        ptaconstrain.exclusion  # noqa: B018


def test_errors_are_value_errors_and_warnings_user_warnings():
    assert issubclass(ptaconstrain.PtaconstrainError, ValueError)
    assert issubclass(ptaconstrain.PtaconstrainWarning, UserWarning)


def test_python_dash_m_ptaconstrain_shows_help():
    r = _python(None, "-m", "ptaconstrain", "--help")
    assert r.returncode == 0, r.stderr
    assert r.stdout.startswith("Usage: ptaconstrain ") and "exclude" in r.stdout
    assert "--debug" in r.stdout


def test_python_dash_m_ptaconstrain_reports_input_errors_in_one_line(tmp_path):
    r = _python(
        None,
        "-m",
        "ptaconstrain",
        "exclude",
        "--mass",
        "2e10",
        "--distance",
        "100",
        "--curve",
        str(tmp_path / "missing.ecsv"),
        "--out",
        str(tmp_path / "o"),
    )
    assert r.returncode != 0 and r.stdout == ""
    assert len(r.stderr.strip().splitlines()) == 1 and "not found" in r.stderr
    assert not (tmp_path / "o").exists()
