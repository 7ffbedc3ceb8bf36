"""The one input policy (ptaconstrain._inputs): units, plausible ranges, sky positions.

References: astropy's own parsers (``Angle(value, unit=...)``, ``Quantity``), element
by element, and astropy.cosmology for the distance of z = 10.
"""

import numpy as np
import pytest
from astropy import units as u
from astropy.coordinates import Angle, SkyCoord
from astropy.cosmology import Planck18
from astropy.table import Column, MaskedColumn
from hypothesis import given, settings
from hypothesis import strategies as st

from ptaconstrain import _inputs
from ptaconstrain.errors import InputError, PtaconstrainError

MINUS = "\u2212"
ra_deg = st.floats(0.0, 359.999, allow_nan=False)
dec_deg = st.floats(-90.0, 90.0, allow_nan=False)


sexa_ra = st.tuples(st.integers(0, 23), st.integers(0, 59), st.floats(0, 59.999))
sexa_dec = st.tuples(
    st.sampled_from(["+", "-", "", MINUS]),
    st.integers(0, 89),
    st.integers(0, 59),
    st.floats(0, 59.999),
)
style = st.sampled_from(["letters", "colons", "spaces"])


def _ra_text(t, how):
    h, m, s = t
    return {
        "letters": f"{h}h{m}m{s:.3f}s",
        "colons": f"{h:02d}:{m:02d}:{s:06.3f}",
        "spaces": f"{h} {m} {s:.3f}",
    }[how]


def _dec_text(t, how):
    sign, d, m, s = t
    return (
        sign
        + {
            "letters": f"{d}d{m}m{s:.3f}s",
            "colons": f"{d:02d}:{m:02d}:{s:06.3f}",
            "spaces": f"{d} {m} {s:.3f}",
        }[how]
    )


def _reference(value, is_ra):
    """astropy's Angle, element by element, with the unit the rule assigns."""
    if isinstance(value, str):
        text = value.strip().replace(MINUS, "-")
        sexagesimal = any(c in text for c in "hH:") or " " in text
        unit = u.hourangle if (is_ra and sexagesimal) else u.deg
        return Angle(text, unit=unit).deg
    return Angle(value, unit=u.deg).deg


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(ra_deg, dec_deg), min_size=1, max_size=8))
def test_floats_ints_and_numeric_strings_are_degrees(pairs):
    ra = np.array([p[0] for p in pairs])
    dec = np.array([p[1] for p in pairs])
    for r_in, d_in in (
        (ra, dec),
        (np.round(ra).astype(int) % 360, np.round(dec).astype(int)),
        (np.char.mod("%.9f", ra), np.char.mod("%.9f", dec)),
    ):
        r, d, bad = _inputs.angles_deg(r_in, d_in)
        assert not bad.any()
        ref_r = [_reference(x.item() if hasattr(x, "item") else x, True) for x in r_in]
        ref_d = [_reference(x.item() if hasattr(x, "item") else x, False) for x in d_in]
        np.testing.assert_allclose(r, ref_r, rtol=0, atol=1e-9)
        np.testing.assert_allclose(d, ref_d, rtol=0, atol=1e-9)


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(sexa_ra, sexa_dec, style), min_size=1, max_size=6))
def test_sexagesimal_strings_read_ra_in_hours(items):
    ra = [_ra_text(r, how) for r, _, how in items]
    dec = [_dec_text(d, how) for _, d, how in items]
    r, d, bad = _inputs.angles_deg(np.array(ra), np.array(dec))
    assert not bad.any()
    np.testing.assert_allclose(r, [_reference(x, True) for x in ra], rtol=0, atol=1e-9)
    np.testing.assert_allclose(d, [_reference(x, False) for x in dec], rtol=0, atol=1e-9)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(ra_deg, dec_deg, st.booleans()), min_size=1, max_size=8))
def test_masked_columns_give_nan_where_masked(items):
    ra = MaskedColumn([i[0] for i in items], mask=[i[2] for i in items])
    dec = MaskedColumn([i[1] for i in items])
    r, d, bad = _inputs.angles_deg(ra, dec)
    mask = np.array([i[2] for i in items])
    assert np.all(np.isnan(r[mask])) and not bad.any()
    np.testing.assert_allclose(r[~mask], np.asarray(ra)[~mask], rtol=0, atol=1e-12)
    np.testing.assert_allclose(d, np.asarray(dec), rtol=0, atol=1e-12)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(st.one_of(ra_deg, sexa_ra), dec_deg, style), min_size=1, max_size=6))
def test_object_columns_mixing_numbers_and_strings(items):
    ra = np.empty(len(items), dtype=object)
    for i, (r, _, how) in enumerate(items):
        ra[i] = _ra_text(r, how) if isinstance(r, tuple) else r
    dec = np.array([f"{i[1]:.9f}" for i in items], dtype=object)
    r, d, bad = _inputs.angles_deg(ra, dec)
    assert not bad.any()
    np.testing.assert_allclose(r, [_reference(x, True) for x in ra], rtol=0, atol=1e-9)
    np.testing.assert_allclose(d, [_reference(x, False) for x in dec], rtol=0, atol=1e-9)


def test_typographic_minus_and_blank_and_unreadable():
    r, d, bad = _inputs.angles_deg(
        ["10", "", "1O.5", "12h00m00s"], [f"{MINUS}5.5", "3", "4", f"{MINUS}00:30:00"]
    )
    assert d[0] == -5.5 and d[3] == pytest.approx(-0.5, abs=1e-12)
    assert np.isnan(r[1]) and not bad[1]
    assert bad.tolist() == [False, False, True, False]
    assert r[3] == pytest.approx(180.0, abs=1e-12)


def test_exponent_numbers_stay_numbers_beside_unreadable_text():
    # astropy's Angle parser does not take exponents; the rule reads them as numbers
    # (Python float is the reference), with or without an unreadable neighbour
    for ra in (["1e-05", "2.5E1"], ["1e-05", "2.5E1", "1O.5"]):
        r, _, bad = _inputs.angles_deg(ra, ["0"] * len(ra))
        assert r[:2].tolist() == [1e-05, 25.0] and bad.tolist() == [False, False, True][: len(ra)]


def test_a_column_unit_is_honoured_and_a_wrong_one_refused():
    r, _, _ = _inputs.angles_deg(Column([1.0], unit=u.hourangle), Column([0.0], unit=u.deg))
    assert r[0] == pytest.approx(15.0, abs=1e-12)
    with pytest.raises(InputError, match="not an angle"):
        _inputs.angles_deg(Column([1.0], unit=u.m), [0.0])


def test_sky_out_of_range():
    mask = _inputs.sky_out_of_range([0, 359.9, 360, -1, 10, 10], [0, 0, 0, 0, 90.1, -90])
    assert mask.tolist() == [False, False, True, True, True, False]


# ----------------------------------------------------------------- quantities
@pytest.mark.parametrize(
    "value, unit, expected",
    [
        (95, "Mpc", 95.0),
        ("95 Mpc", "Mpc", 95.0),
        ("95000 kpc", "Mpc", 95.0),
        (95 * u.Mpc, "Mpc", 95.0),
        ("8 nHz", "Hz", 8e-9),
        (f"{MINUS}3 km/s", "km/s", -3.0),
    ],
)
def test_quantity_reads_numbers_strings_and_quantities(value, unit, expected):
    q = _inputs.quantity(value, unit, "field")
    assert q.unit == u.Unit(unit) and q.value == pytest.approx(expected, rel=1e-12, abs=0)


@pytest.mark.parametrize(
    "value, words",
    [("95 km/s", "not a length"), ("far", "cannot read"), (np.nan, "finite"), (np.inf, "finite")],
)
def test_quantity_refuses_with_one_line_naming_the_field(value, words):
    with pytest.raises(InputError, match=words) as err:
        _inputs.quantity(value, "Mpc", "distance")
    assert str(err.value).startswith("distance:") and "\n" not in str(err.value)
    assert isinstance(err.value, PtaconstrainError) and isinstance(err.value, ValueError)


def test_check_mass_range_and_log_hint():
    assert _inputs.check_mass("2e10 solMass").to_value(u.Msun) == 2e10
    with pytest.raises(InputError, match="log10 mass") as err:
        _inputs.check_mass(9.3)
    assert "1e3-1e13 solMass" in str(err.value)
    with pytest.raises(InputError, match="outside the plausible"):
        _inputs.check_mass(1e14)
    with pytest.raises(InputError, match="not a mass"):
        _inputs.check_mass("3 Mpc")


def test_check_distance_range_is_z10_in_the_given_cosmology():
    d10 = Planck18.luminosity_distance(10).to_value(u.Mpc)  # astropy.cosmology
    assert _inputs.check_distance(d10 * 0.999, cosmology=Planck18).value == d10 * 0.999
    with pytest.raises(InputError, match="outside the plausible 0.1 Mpc"):
        _inputs.check_distance(d10 * 1.001, cosmology=Planck18)
    with pytest.raises(InputError, match="outside the plausible"):
        _inputs.check_distance("10 kpc")
    assert _inputs.check_distance("950 kpc").to_value(u.Mpc) == pytest.approx(0.95, rel=1e-6, abs=0)


def test_column_hints():
    assert "log10" in _inputs.mass_column_hint([9.3, 8.7, 10.1])
    assert _inputs.mass_column_hint([2e9, 3e9]) == ""
    assert "kpc" in _inputs.distance_column_hint([2e4, 5e4, 9e4])
    assert _inputs.distance_column_hint([20.0, 50.0]) == ""


# --------------------------------------------------------------- coordinates
@pytest.mark.parametrize(
    "kw, ra, dec",
    [
        ({"coord": "187.7 12.4"}, 187.7, 12.4),
        ({"coord": "12h30m00s +12d30m00s"}, 187.5, 12.5),
        ({"coord": "12 30 00 -12 30 00"}, 187.5, -12.5),
        ({"coord": f"187.7,{MINUS}12.4"}, 187.7, -12.4),
        ({"ra": "12:30:00", "dec": "-5"}, 187.5, -5.0),
        ({"ra": 10, "dec": "-05:00:00"}, 10.0, -5.0),
        ({"coord": SkyCoord(10 * u.deg, 20 * u.deg, frame="galactic")}, None, None),
    ],
)
def test_coord_from(kw, ra, dec):
    c = _inputs.coord_from(**kw)
    if ra is None:  # a SkyCoord in another frame comes back as the same place in ICRS
        ref = kw["coord"].icrs
        ra, dec = ref.ra.deg, ref.dec.deg
    assert c.ra.deg == pytest.approx(ra, abs=1e-9) and c.dec.deg == pytest.approx(dec, abs=1e-9)


@pytest.mark.parametrize(
    "kw, words",
    [
        ({}, None),
        ({"coord": "1 2", "ra": 1}, "not both"),
        ({"ra": 1}, "both RA and Dec"),
        ({"coord": "1 2 3"}, "cannot read"),
        ({"ra": 370, "dec": 0}, "out of range"),
        ({"ra": "12x", "dec": 0}, "cannot read"),
    ],
)
def test_coord_from_refusals(kw, words):
    if words is None:
        assert _inputs.coord_from(**kw) is None
        return
    with pytest.raises(InputError, match=words) as err:
        _inputs.coord_from(**kw)
    assert "\n" not in str(err.value)
