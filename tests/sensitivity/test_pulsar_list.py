"""The pulsar-list format (ptaconstrain.sensitivity.pulsar_list): columns, units, positions."""

import numpy as np
import pytest
from astropy import units as u
from astropy.coordinates import Angle, BarycentricMeanEcliptic, SkyCoord
from astropy.table import QTable, Table

from ptaconstrain.sensitivity.pulsar_array import ArrayError
from ptaconstrain.sensitivity.pulsar_list import array_from_table, load_array


def _table(**over):
    t = QTable()
    t["name"] = ["A", "B"]
    t["ra"] = [10.0, 250.0] * u.deg
    t["dec"] = [-5.0, 40.0] * u.deg
    t["toa_rms"] = [0.5, 1.0] * u.us
    t["cadence"] = [14.0, 28.0] * u.d
    t["span"] = [10.0, 6.0] * u.yr
    for k, v in over.items():
        if v is None:
            del t[k]
        else:
            t[k] = v
    return t


def test_load_array_from_ecsv_with_span_and_sexagesimal(tmp_path):
    # Sexagesimal parsing against astropy.coordinates.SkyCoord directly.
    t = _table()
    t["ra"] = ["00h40m00s", "16h40m00s"]
    t["dec"] = ["-05d00m00s", "+40d00m00s"]
    t["red_amp"] = [0.0, 1e-14]
    t["red_gamma"] = [np.nan, 3.0]
    t.meta["end_mjd"] = 59000.0
    path = tmp_path / "psr.ecsv"
    t.write(path, format="ascii.ecsv")
    arr = load_array(path)
    expect = SkyCoord(
        ["00h40m00s", "16h40m00s"], ["-05d00m00s", "+40d00m00s"], unit=(u.hourangle, u.deg)
    )
    assert np.allclose(arr.coord.ra.deg, expect.ra.deg, atol=0)
    assert np.allclose(arr.end_mjd, 59000.0, atol=0)
    assert arr.pulsar_spans.to_value(u.yr) == pytest.approx([10.0, 6.0], rel=1e-6, abs=0)
    assert arr.name == "psr" and arr.red_amp[1] == 1e-14


def test_position_rule_numeric_text_is_degrees_colons_are_hours_unicode_minus():
    # The package's one sky rule, checked against astropy.coordinates.Angle:
    # "187.7" is degrees (not hours), "12:30:49" is hours for RA, degrees for
    # Dec, and a typographic minus (U+2212) is a minus.
    t = _table()
    t["ra"] = ["187.7", "12:30:49"]
    t["dec"] = ["\u22125.5", "\u221212:23:28"]
    arr = array_from_table(t)
    assert arr.coord.ra.deg == pytest.approx(
        [Angle("187.7d").deg, Angle("12:30:49", unit=u.hourangle).deg], abs=1e-9
    )
    assert arr.coord.dec.deg == pytest.approx([-5.5, Angle("-12:23:28", unit=u.deg).deg], abs=1e-9)


def test_plain_table_columns_with_units_are_converted():
    # A (non-Q) Table with column units: ms -> us and hours of RA as an angle unit,
    # converted by astropy.units.
    t = Table()
    t["name"] = ["A", "B"]
    t["ra"] = Table.Column([1.0, 13.0], unit=u.hourangle)
    t["dec"] = Table.Column([-5.0, 40.0], unit=u.deg)
    t["toa_rms"] = Table.Column([0.0005, 0.001], unit=u.ms)
    t["cadence"] = Table.Column([2.0, 4.0], unit=u.week)
    t["span"] = [10.0, 6.0]
    arr = array_from_table(t)
    assert arr.coord.ra.deg == pytest.approx([15.0, 195.0], rel=1e-6, abs=0)
    assert arr.toa_rms.to_value(u.us) == pytest.approx([0.5, 1.0], rel=1e-6, abs=0)
    assert arr.cadence.to_value(u.d) == pytest.approx([14.0, 28.0], rel=1e-6, abs=0)


def test_load_array_ecliptic_columns_and_mjd_epochs():
    # Ecliptic J2000 -> ICRS through astropy's BarycentricMeanEcliptic frame;
    # sexagesimal ecliptic longitudes are degrees (only an RA is in hours).
    t = _table(ra=None, dec=None, span=None)
    t["elon"] = ["100:00:00", "300"]
    t["elat"] = [10.0, -60.0] * u.deg
    t["start_mjd"] = [53000.0, 54000.0]
    t["end_mjd"] = [59000.0, 59500.0]
    arr = array_from_table(t)
    expect = SkyCoord(
        [100.0, 300.0] * u.deg, [10.0, -60.0] * u.deg, frame=BarycentricMeanEcliptic
    ).icrs
    assert arr.coord.separation(expect).max().to_value(u.arcsec) < 1e-6
    assert arr.n_toas[0] == int(6000 // 14) + 1


@pytest.mark.parametrize(
    "over, words",
    [
        ({"toa_rms": None}, "column 'toa_rms' is missing"),
        ({"ra": None, "dec": None}, "position columns are missing"),
        ({"dec": None}, "column 'dec' is missing"),
        ({"span": None}, "column 'span' is missing"),
        ({"toa_rms": [np.nan, 1.0] * u.us}, "row 1 (A): toa_rms is NaN"),
        ({"cadence": [14.0, -3.0] * u.d}, "row 2 (B): cadence"),
        ({"name": ["A", "A"]}, "appears twice"),
        ({"span": [0.5, 6.0] * u.yr}, "at least 1 yr"),
        ({"cadence": [14.0, 400.0] * u.d}, "TOAs"),
        ({"toa_rms": [0.5, 1.0] * u.m}, "has unit m"),
        ({"red_amp": [-14.0, 0.0], "red_gamma": [3.0, 3.0]}, "not log10 A"),
        ({"red_amp": [1e-14, 0.0]}, "red_gamma is missing"),
        ({"ra": ["10", "abc"]}, "row 2 (B): cannot read position"),
        ({"dec": [-5.0, 95.0] * u.deg}, "row 2 (B): position"),
        ({"ra": [10.0, 250.0] * u.m}, "not an angle"),
    ],
)
def test_bad_pulsar_lists_name_column_and_fix(over, words):
    with pytest.raises(ArrayError) as err:
        array_from_table(_table(**over))
    msg = str(err.value)
    assert words in msg and "\n" not in msg


def test_missing_file_is_named(tmp_path):
    with pytest.raises(ArrayError, match="not found"):
        load_array(tmp_path / "none.ecsv")
