"""``ptaconstrain data`` and shipped names in place of file paths on every command."""

import shlex

import pytest
from astropy.table import QTable
from click.testing import CliRunner

from ptaconstrain import data
from ptaconstrain.cli import main


def _run(*args):
    return CliRunner().invoke(main, list(args))


def test_data_lists_every_shipped_file_on_one_line_each():
    res = _run("data")
    assert res.exit_code == 0, res.output
    lines = res.output.strip().splitlines()
    assert len(lines) == 1 + len(data.shipped())
    for f, line in zip(data.shipped(), lines[1:], strict=True):
        assert line.split()[0] == f.name and f.description in line


def test_data_name_prints_the_path():
    res = _run("data", "demo_array")
    assert res.exit_code == 0 and res.output.strip() == str(data.path("demo_array"))


def test_unknown_data_name_is_one_line():
    res = _run("data", "no_such_thing")
    assert res.exit_code == 2 and len(res.stderr.strip().splitlines()) == 1
    assert "ptaconstrain data" in res.stderr


def test_exclude_takes_a_shipped_curve_from_any_directory(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)  # no checkout here: only the package data can serve
    res = _run(
        "exclude",
        "--mass",
        "2e10",
        "--distance",
        "100",
        "--curve",
        "synthetic_h0_limit",
        "--grid",
        "30",
        "--format",
        "png",
        "--out",
        "res",
    )
    assert res.exit_code == 0, res.output
    meta = QTable.read(tmp_path / "res" / "host_exclusion.ecsv").meta
    assert meta["files"]["curve"]["shipped"] == "synthetic_h0_limit"
    assert meta["files"]["curve"]["path"] == str(data.path("synthetic_h0_limit"))


@pytest.mark.parametrize(
    "args, words",
    [
        (
            ["exclude", "--mass", "2e10", "--distance", "100", "--curve", "demo_array"],
            "is a pulsar list, not a sensitivity curve",
        ),
        (
            ["exclude", "--mass", "2e10", "--distance", "100", "--limit-map", "synthetic_h0_limit"],
            "is a sensitivity curve, not a HEALPix limit map",
        ),
        (["curve", "--array", "demo_hosts"], "is a hosts table, not a pulsar list"),
        (
            ["rank", "demo_array", "--curve", "synthetic_h0_limit"],
            "not a galaxy catalogue or hosts table",
        ),
        (["rank", "missing_catalogue", "--curve", "synthetic_h0_limit"], "file not found"),
    ],
)
def test_wrong_shipped_names_are_one_line_errors_and_write_nothing(tmp_path, args, words):
    out = tmp_path / "out"
    res = _run(*args, "--out", str(out))
    assert res.exit_code == 2, res.output
    err = res.stderr.strip()
    assert err.startswith("Error:") and len(err.splitlines()) == 1 and words in err
    assert not out.exists()


def _help_examples():
    """Every ``ptaconstrain ...`` command line shown in a --help text (continuations joined)."""
    found = []
    for command in [[], ["exclude"], ["curve"], ["threshold-map"], ["rank"], ["data"], ["demo"]]:
        text = _run(*command, "--help").output.replace("\\\n", " ")
        found += [
            line.strip() for line in text.splitlines() if line.strip().startswith("ptaconstrain ")
        ]
    return list(dict.fromkeys(found))


def test_help_examples_name_shipped_data_not_checkout_paths():
    examples = _help_examples()
    assert len(examples) >= 8
    assert not [e for e in examples if "src/" in e or "data/" in e]


@pytest.mark.slow
@pytest.mark.parametrize(
    "example",
    [
        e
        for e in _help_examples()
        if not e.startswith("ptaconstrain demo")  # the demo: tests/cli/test_demo.py
        and "# your own" not in e
    ],
)  # an example for the user's own data says so
def test_every_help_example_runs_from_an_empty_directory(tmp_path, monkeypatch, example):
    # issue 12: the examples work from any directory after pip install
    monkeypatch.chdir(tmp_path)
    args = shlex.split(example, comments=True)[1:]
    res = _run(*args)
    assert res.exit_code == 0, res.output
