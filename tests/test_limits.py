"""The documented ranges and the memory limit of the input policy (ptaconstrain._inputs)."""

import numpy as np
import pytest
from astropy import units as u
from click.testing import CliRunner

from ptaconstrain import _inputs
from ptaconstrain._inputs import (
    ResourceError,
    check_field,
    check_memory,
    check_name,
    in_range,
    parse_bytes,
    set_memory_limit,
)
from ptaconstrain.cli import main
from ptaconstrain.data import path as data_file
from ptaconstrain.errors import InputError


@pytest.fixture(autouse=True)
def _default_limit():
    set_memory_limit(None)
    yield
    set_memory_limit(None)


@pytest.mark.parametrize(
    "field, value",
    [
        ("snr", float("nan")),
        ("snr", float("inf")),
        ("snr", 0),
        ("snr", -1),
        ("snr", 1e300),
        ("confidence", 5),
        ("confidence", -0.5),
        ("confidence", 1),
        ("q_index", 1e300),
        ("mass_err_dex", 1e300),
        ("fraction_err", 3.0),
        ("red_amp", float("inf")),
        ("red_gamma", 1e300),
        ("span", "1e6 yr"),
        ("cadence", "1 min"),
        ("period", "1e-300 yr"),
        ("period", "1e300 yr"),
        ("q_index", "abc"),
    ],
)
def test_values_outside_the_documented_ranges_are_refused_in_one_line(field, value):
    with pytest.raises(InputError) as err:
        check_field(value, field)
    text = str(err.value)
    assert text.startswith(f"{field}: ") and "\n" not in text


@pytest.mark.parametrize(
    "field, value",
    [
        ("snr", 5),
        ("confidence", 0.95),
        ("q_index", -1),
        ("mass_err_dex", 0.3),
        ("span", "15 yr"),
        ("cadence", "14 d"),
        ("cadence", "1 hour"),
        ("red_amp", 1e-14),
        ("red_gamma", 13 / 3),
        ("period", "1 yr"),
    ],
)
def test_usual_values_pass(field, value):
    check_field(value, field)


def test_a_table_column_names_its_first_bad_row():
    with pytest.raises(InputError, match=r"cadence \(row 2, B\): 0.000694[0-9]* d is outside"):
        check_field(np.array([14.0, 1 / 1440, 7.0]) * u.d, "cadence", rows=["1, A", "2, B", "3, C"])


def test_ranges_hold_in_their_stated_units():
    # 1 hour is the shortest cadence (CADENCE_MIN); 100 yr the longest span (SPAN_MAX)
    assert in_range("3600 s", "cadence", 1, 2, unit="hour").value == pytest.approx(
        1.0, rel=1e-6, abs=0
    )
    with pytest.raises(InputError):
        check_field("3599 s", "cadence")
    check_field("100 yr", "span")
    with pytest.raises(InputError):
        check_field("100.1 yr", "span")


def test_memory_sizes_and_the_limit():
    assert parse_bytes("16GB") == 16_000_000_000
    assert parse_bytes("2 GiB") == 2 * 1024**3
    with pytest.raises(InputError):
        parse_bytes("lots")
    assert _inputs.memory_limit() == _inputs.DEFAULT_MAX_MEMORY
    with pytest.raises(ResourceError, match="lower --grid.*--max-memory"):
        check_memory(5e9, "the grid", "lower --grid")
    set_memory_limit("16GB")
    check_memory(5e9, "the grid", "lower --grid")


def test_the_environment_variable_raises_the_limit(monkeypatch):
    monkeypatch.setenv("PTACONSTRAIN_MAX_MEMORY", "32GB")
    assert _inputs.memory_limit() == 32_000_000_000


def test_names_are_bounded():
    assert check_name("  Fictus A ") == "Fictus A"
    for bad in ("", "x" * 121, "a\nb"):
        with pytest.raises(InputError):
            check_name(bad)


def test_max_memory_lets_a_large_sky_map_through_the_estimate(tmp_path):
    # nside 512: 12 * 512^2 pixels x 4 float64 = 100 MB; a 50MB limit refuses it before any
    # work, and --max-memory 1GB lets the same estimate pass (the run then fails later on
    # the unknown frequency, which shows that the estimate was passed)
    array = str(data_file("demo_array.ecsv"))
    args = [
        "threshold-map",
        "--array",
        array,
        "--frequency",
        "1 Hz",
        "--nside",
        "512",
        "--out",
        str(tmp_path / "m"),
    ]
    r = CliRunner().invoke(main, args + ["--max-memory", "50MB"])
    assert r.exit_code == 1 and "needs about 101 MB" in r.output and "lower --nside" in r.output
    r = CliRunner().invoke(main, args + ["--max-memory", "1GB"])
    assert r.exit_code != 0 and "memory" not in r.output
    assert not (tmp_path / "m").exists()
