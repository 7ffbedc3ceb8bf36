"""Catalogue rows: the one input policy per row (positions, distances, masses), rejections."""

import numpy as np
import pytest
from astropy import units as u
from astropy.coordinates import Angle
from astropy.cosmology import Planck18
from astropy.table import MaskedColumn, Table
from curves_for_tests import bucket_limit

from ptaconstrain.catalogue import CatalogError, ColumnMap, rank_catalog
from ptaconstrain.cosmo import DistanceRedshift

CURVE = bucket_limit()


def _table(**cols):
    base = {
        "name": ["A", "B", "C"],
        "ra": [10.0, 200.0, 300.0],
        "dec": [-20.0, 5.0, 60.0],
        "distance": [30.0, 60.0, 90.0],
    }
    base.update(cols)
    return Table(base)


def test_mass_source_preference_and_relation_order():
    t = _table(
        mass=[3e9, np.nan, np.nan],
        mass_err=[3e8, np.nan, np.nan],
        velocity_dispersion=[300.0, 280.0, np.nan],
        k_abs_mag=[-26.0, -25.5, -25.0],
    )
    r = rank_catalog(t, CURVE, metric="h0_ratio")
    src = dict(zip(r.table["name"], r.table["mass_source"], strict=True))
    assert src == {"A": "measured", "B": "kh13_sigma", "C": "kh13_kband"}
    row = r.table[r.table["name"] == "A"][0]
    # err / (M ln 10) dex for a fractional error (first-order propagation)
    assert row["log_mass_sigma"] == pytest.approx(0.1 / np.log(10), rel=1e-12, abs=0)
    r2 = rank_catalog(t, CURVE, relations=["kh13_kband", "kh13_sigma"])
    src2 = dict(zip(r2.table["name"], r2.table["mass_source"], strict=True))
    assert src2["B"] == "kh13_kband"


@pytest.mark.parametrize(
    "change, reason",
    [
        ({"name": ["A", "B", "A"]}, "duplicate name"),
        ({"mass": [np.nan, 2e9, 3e9]}, "no usable mass"),
        ({"distance": [-5.0, 60.0, 90.0]}, "impossible distance"),
        ({"distance": [0.0, 60.0, 90.0]}, "impossible distance"),
        ({"distance": [np.inf, 60.0, 90.0]}, "impossible distance"),
        ({"mass": [-1e9, 2e9, 3e9]}, "impossible mass"),
        ({"dec": [95.0, 5.0, 60.0]}, "sky position out of range"),
        # ICRS right ascension lies in [0, 360) deg (IAU convention, common practice): a value
        # outside is a units or sign mistake and must not be wrapped silently
        ({"ra": [400.0, 200.0, 300.0]}, "sky position out of range"),
        ({"ra": [-10.0, 200.0, 300.0]}, "sky position out of range"),
        ({"ra": [360.0, 200.0, 300.0]}, "sky position out of range"),
        ({"ra": [np.nan, 200.0, 300.0]}, "sky position missing"),
        ({"ra": ["1O.5", "200", "300"]}, "sky position unreadable"),
        # plausibility (ptaconstrain._inputs: 1e3-1e13 solMass, 0.1 Mpc to z = 10)
        ({"mass": [50.0, 2e9, 3e9]}, "mass is outside the plausible 1e3-1e13 solMass"),
        ({"mass": [1e14, 2e9, 3e9]}, "mass is outside the plausible 1e3-1e13 solMass"),
        ({"distance": [0.05, 60.0, 90.0]}, "distance is outside the plausible 0.1 Mpc"),
        ({"distance": [2e5, 60.0, 90.0]}, "distance is outside the plausible 0.1 Mpc"),
    ],
)
def test_bad_rows_error_or_skip_with_reason(change, reason):
    cols = {"mass": [1e9, 2e9, 3e9]}
    cols.update(change)
    t = _table(**cols)
    with pytest.raises(CatalogError, match=reason) as err:
        rank_catalog(t, CURVE)
    assert "np.str_" not in str(err.value)  # the name is quoted plainly
    r = rank_catalog(t, CURVE, on_bad="skip")
    assert len(r.table) == 2
    counts = r.rejections.counts
    assert sum(counts.values()) == 1 and reason in next(iter(counts))
    assert any(reason in line for line in r.summary_lines())
    assert reason in r.rejections.table()["reason"][0]


def test_redshift_only_rows_use_the_cosmology():

    t = _table(velocity_dispersion=[300.0, 250.0, 200.0])
    t["distance"] = np.ma.masked_array([30.0, 0.0, 90.0], mask=[False, True, False])
    t["redshift"] = np.ma.masked_array([0.0, 0.02, 0.0], mask=[True, False, True])
    r = rank_catalog(t, CURVE)
    row = r.table[r.table["name"] == "B"][0]
    ref = Planck18.luminosity_distance(0.02).to_value(u.Mpc)
    assert row["distance"].to_value(u.Mpc) == pytest.approx(ref, rel=1e-8, abs=0)


def test_the_distance_redshift_converter_rows_use_matches_astropy():
    from astropy.cosmology import z_at_value

    dz = DistanceRedshift(Planck18)
    z = np.array([1e-4, 0.01, 0.1, 1.0, 5.0])
    ref = Planck18.luminosity_distance(z).to_value(u.Mpc)
    np.testing.assert_allclose(dz.distance(z), ref, rtol=1e-8)
    zz = z_at_value(Planck18.luminosity_distance, 250 * u.Mpc).value
    assert dz.redshift(250.0) == pytest.approx(zz, rel=1e-7, abs=0)


def _ranked(t, **kw):
    r = rank_catalog(t, CURVE, **kw)
    return {str(row["name"]): row for row in r.table}, r


@pytest.mark.parametrize(
    "ra, dec, unit_ra",
    [
        # text holding decimal degrees is degrees (it used to be read as hours: 187.7 -> 295.5)
        (["187.7", "10.0"], ["12.4", "-5.0"], "deg"),
        # sexagesimal text: RA in hours, Dec in degrees
        (["12h30m49s", "00:40:00"], ["+12d23m28s", "-05:00:00"], "hourangle"),
        (["12 30 49", "0 40 0"], ["12 23 28", "-5 0 0"], "hourangle"),
    ],
)
def test_text_positions_follow_the_one_rule(ra, dec, unit_ra):
    t = Table(
        {"name": ["A", "B"], "ra": ra, "dec": dec, "distance": [20.0, 40.0], "mass": [3e9, 4e9]}
    )
    rows, _ = _ranked(t)
    for name, r, d in zip("AB", ra, dec, strict=True):
        # reference: astropy's own Angle parser with the unit the rule assigns
        assert rows[name]["ra"].to_value(u.deg) == pytest.approx(
            Angle(r, unit=unit_ra).deg, abs=1e-9
        )
        assert rows[name]["dec"].to_value(u.deg) == pytest.approx(
            Angle(d, unit="deg").deg, abs=1e-9
        )


def test_numeric_ra_beside_sexagesimal_dec_stays_degrees():
    # each column is read on its own: numbers are degrees (it used to become 10 h = 150 deg)
    t = Table(
        {
            "name": ["A", "B"],
            "ra": [10.0, 200.0],
            "dec": ["-05:00:00", "\u221220:30:00"],
            "distance": [20.0, 40.0],
            "mass": [3e9, 4e9],
        }
    )
    rows, _ = _ranked(t)
    assert rows["A"]["ra"].to_value(u.deg) == 10.0
    assert rows["A"]["dec"].to_value(u.deg) == pytest.approx(-5.0, abs=1e-12)
    assert rows["B"]["dec"].to_value(u.deg) == pytest.approx(-20.5, abs=1e-12)


def test_masked_position_is_missing_not_zero():
    t = Table(
        {
            "name": ["A", "B"],
            "ra": MaskedColumn([10.0, 20.0], mask=[True, False]),
            "dec": [5.0, 6.0],
            "distance": [20.0, 40.0],
            "mass": [3e9, 4e9],
        }
    )
    _, r = _ranked(t, on_bad="skip")
    assert list(r.table["name"]) == ["B"]
    assert r.rejections.counts == {"sky position missing (blank or NaN)": 1}


def test_log10_masses_in_the_mass_column_are_refused_with_a_hint():
    t = Table(
        {
            "name": ["A", "B", "C"],
            "ra": [1.0, 2.0, 3.0],
            "dec": [0.0, 1.0, 2.0],
            "distance": [20.0, 30.0, 40.0],
            "mass": [9.3, 9.6, np.nan],
            "velocity_dispersion": [np.nan, np.nan, 250.0],
        }
    )
    with pytest.raises(CatalogError) as err:
        rank_catalog(t, CURVE)
    msg = str(err.value)
    assert "\n" not in msg and "row 1 ('A')" in msg and "mass = 9.3 solMass" in msg
    assert "log10(M/solMass)" in msg and "log_mass" in msg
    rows, r = _ranked(t, on_bad="skip")
    assert list(rows) == ["C"]  # never ranked at 9.3 solMass
    ((reason, n),) = r.rejections.counts.items()
    assert n == 2 and "outside the plausible" in reason and "log10(M/solMass)" in reason


def test_kpc_read_as_mpc_is_refused_with_a_hint():
    t = Table(
        {
            "name": ["A", "B", "C"],
            "ra": [1.0, 2.0, 3.0],
            "dec": [0.0, 1.0, 2.0],
            "distance": [3.0e4, 6.0e4, np.nan],
            "redshift": [np.nan, np.nan, 0.01],
            "mass": [3e9, 4e9, 5e9],
        }
    )
    with pytest.raises(CatalogError, match="looks like kpc") as err:
        rank_catalog(t, CURVE)
    assert "\n" not in str(err.value) and "row 1 ('A')" in str(err.value)
    rows, r = _ranked(t, on_bad="skip")
    assert list(rows) == ["C"]
    assert sum(n for reason, n in r.rejections.counts.items() if "kpc" in reason) == 2


def test_declared_units_are_trusted_and_converted():
    t = Table(
        {
            "name": ["A", "B"],
            "ra": [1.0, 2.0],
            "dec": [0.0, 1.0],
            "distance": [3.0e4, 6.0e4],
            "mass": [3e9, 4e9],
        }
    )
    with pytest.raises(CatalogError, match="kpc"):  # bare numbers: refused
        rank_catalog(t, CURVE)
    rows, _ = _ranked(t, columns=ColumnMap(units={"distance": "Mpc"}))  # stated: trusted
    assert rows["B"]["distance"].to_value(u.Mpc) == 6.0e4
    t["distance"].unit = u.kpc  # a unit in the file wins
    rows, _ = _ranked(t)
    assert rows["B"]["distance"].to_value(u.Mpc) == pytest.approx(60.0, rel=1e-12, abs=0)


def test_wrong_physical_type_names_the_column_and_unit():
    t = Table({"name": ["A"], "ra": [1.0], "dec": [0.0], "distance": [20.0], "mass": [3e9]})
    t["distance"].unit = u.km / u.s
    with pytest.raises(CatalogError) as err:
        rank_catalog(t, CURVE)
    msg = str(err.value)
    assert "\n" not in msg and "'distance'" in msg and "Mpc" in msg and "length" in msg


@pytest.mark.parametrize(
    "z, words",
    [(12.0, "redshift is outside"), (-0.01, "redshift is"), (1e-7, "distance from the redshift")],
)
def test_redshift_only_rows_out_of_range(z, words):
    t = Table(
        {
            "name": ["A", "B"],
            "ra": [1.0, 2.0],
            "dec": [0.0, 1.0],
            "redshift": [z, 0.02],
            "mass": [3e9, 4e9],
        }
    )
    with pytest.raises(CatalogError, match=words):
        rank_catalog(t, CURVE)
    rows, _ = _ranked(t, on_bad="skip")
    assert list(rows) == ["B"]


def test_rejected_table_records_the_value():
    t = _table(mass=[1e9, 20.0, 3e9])
    r = rank_catalog(t, CURVE, on_bad="skip")
    rej = r.rejections.table()
    assert list(rej["row"]) == [2] and rej["value"][0] == "mass = 20 solMass"
