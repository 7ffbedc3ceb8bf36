"""How the command line reports problems: input errors, bugs, and soft assumptions."""

import traceback
import warnings

import pytest
from click.testing import CliRunner

from ptaconstrain.cli import EXIT_INTERNAL, main
from ptaconstrain.errors import InputError, PtaconstrainWarning


def _run(args):
    return CliRunner().invoke(main, args)


def _args(curve_file, out):
    return [
        "exclude",
        "--mass",
        "2e10",
        "--distance",
        "100",
        "--curve",
        str(curve_file),
        "--out",
        str(out),
        "--grid",
        "20",
        "--format",
        "png",
    ]


@pytest.mark.parametrize(
    "exc", [RuntimeError("boom"), KeyError("frequency"), ValueError("a bug, not an input")]
)
def test_a_bug_is_reported_as_an_internal_error(monkeypatch, tmp_path, curve_file, exc):
    def broken(*args, **kwargs):
        raise exc

    monkeypatch.setattr("ptaconstrain.sensitivity.curve.load_curve", broken)
    out = tmp_path / "res"
    r = _run(_args(curve_file, out))
    assert r.exit_code == EXIT_INTERNAL == 70
    lines = r.output.strip().splitlines()
    assert len(lines) == 1, r.output
    assert lines[0].startswith(f"internal error: {type(exc).__name__}: ")
    assert "please report it" in lines[0] and "--debug" in lines[0]
    assert "Traceback" not in r.output
    assert not out.exists() or not any(out.iterdir())


def test_debug_lets_the_traceback_through(monkeypatch, tmp_path, curve_file):
    def broken(*args, **kwargs):
        raise RuntimeError("boom")

    monkeypatch.setattr("ptaconstrain.sensitivity.curve.load_curve", broken)
    r = _run(["--debug"] + _args(curve_file, tmp_path / "res"))
    assert isinstance(r.exception, RuntimeError)
    assert "internal error" not in r.output
    text = "".join(traceback.format_exception(*r.exc_info))
    assert text.startswith("Traceback") and "broken" in text


def test_input_error_is_one_line_with_status_1(monkeypatch, tmp_path, curve_file):
    def refuse(*args, **kwargs):
        raise InputError("curve: 'x.ecsv' has no frequency column; add one in Hz")

    monkeypatch.setattr("ptaconstrain.sensitivity.curve.load_curve", refuse)
    out = tmp_path / "res"
    r = _run(_args(curve_file, out))
    assert r.exit_code == 1
    assert r.output.strip() == ("Error: curve: 'x.ecsv' has no frequency column; add one in Hz")
    assert not out.exists() or not any(out.iterdir())


def test_usage_error_keeps_status_2(tmp_path):
    r = _run(["exclude", "--distance", "100", "--out", str(tmp_path)])
    assert r.exit_code == 2 and len(r.output.strip().splitlines()) == 1
    assert r.output.startswith("Error:") and "--mass" in r.output


def test_os_error_names_the_path(monkeypatch, tmp_path, curve_file):
    def unreadable(*args, **kwargs):
        raise PermissionError(13, "Permission denied", "/data/limit.ecsv")

    monkeypatch.setattr("ptaconstrain.sensitivity.curve.load_curve", unreadable)
    r = _run(_args(curve_file, tmp_path / "res"))
    assert r.exit_code == 1
    assert r.output.strip() == "Error: /data/limit.ecsv: permission denied"


def _warning_load_curve(monkeypatch):
    from ptaconstrain.sensitivity import curve as curve_module

    real = curve_module.load_curve

    def load(*args, **kwargs):
        for _ in range(2):  # the same assumption twice gives one note
            warnings.warn("span: none recorded; 10 yr assumed", PtaconstrainWarning, stacklevel=2)
        return real(*args, **kwargs)

    monkeypatch.setattr(curve_module, "load_curve", load)


def test_soft_assumptions_become_one_note_each(monkeypatch, tmp_path, curve_file):
    _warning_load_curve(monkeypatch)
    r = _run(_args(curve_file, tmp_path / "res"))
    assert r.exit_code == 0, r.output
    notes = [line for line in r.output.splitlines() if line.startswith("Note:")]
    assert notes == ["Note: span: none recorded; 10 yr assumed"]


def test_a_failed_command_prints_no_notes(monkeypatch, tmp_path, curve_file):
    _warning_load_curve(monkeypatch)
    r = _run(_args(curve_file, tmp_path / "res") + ["--period-range", "100,200"])
    assert r.exit_code == 2  # the period grid misses the band: a usage error
    assert len(r.output.strip().splitlines()) == 1 and "Note:" not in r.output


def test_no_arguments_shows_the_help_not_an_error():
    r = _run([])
    assert r.output.startswith("Usage:") and "Error" not in r.output
    assert "exclude" in r.output and len(r.output.splitlines()) > 5


def test_a_library_deprecation_is_no_note(monkeypatch, tmp_path, curve_file):
    # a third-party deprecation (e.g. pandas under lsdb) concerns our code, not the results
    from ptaconstrain.sensitivity import curve as curve_module

    real = curve_module.load_curve

    def load(*args, **kwargs):
        warnings.warn_explicit(
            "option x is deprecated", FutureWarning, "thirdparty.py", 1, module="thirdparty"
        )
        warnings.warn_explicit(
            "call y is deprecated", DeprecationWarning, "thirdparty.py", 2, module="thirdparty"
        )
        return real(*args, **kwargs)

    monkeypatch.setattr(curve_module, "load_curve", load)
    r = _run(_args(curve_file, tmp_path / "res"))
    assert r.exit_code == 0, r.output
    assert "Note:" not in r.output
