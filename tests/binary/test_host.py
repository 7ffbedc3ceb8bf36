import re

import numpy as np
import pytest
from astropy import units as u
from astropy.coordinates import SkyCoord
from astropy.cosmology import WMAP9, Planck18, default_cosmology, z_at_value

from ptaconstrain.binary.host import Host, hosts_from_table
from ptaconstrain.binary.waveform import strain_amplitude
from ptaconstrain.errors import InputError


# The distance <-> redshift spline of ptaconstrain.cosmo is accurate to 1e-8 (its docstring);
# the tolerances below leave a factor 10 on that.
def test_redshift_gives_planck18_luminosity_distance():
    # reference: astropy.cosmology.Planck18
    h = Host("A", 1e10, redshift=0.05, cosmology=Planck18)
    assert h.distance.to_value(u.Mpc) == pytest.approx(
        Planck18.luminosity_distance(0.05).to_value(u.Mpc), rel=1e-7, abs=0
    )


def test_cosmology_is_selectable():
    # reference: astropy.cosmology.WMAP9
    h = Host("A", 1e10, redshift=0.05, cosmology=WMAP9)
    assert h.distance.to_value(u.Mpc) == pytest.approx(
        WMAP9.luminosity_distance(0.05).to_value(u.Mpc), rel=1e-7, abs=0
    )


def test_host_honours_astropy_default_cosmology():
    # reference: WMAP9.luminosity_distance (astropy), selected as the default cosmology
    with default_cosmology.set(WMAP9):
        h = Host("A", 1e10, redshift=0.05)
    assert h.cosmology is WMAP9
    assert h.distance.to_value(u.Mpc) == pytest.approx(
        WMAP9.luminosity_distance(0.05).to_value(u.Mpc), rel=1e-7, abs=0
    )
    assert abs(WMAP9.luminosity_distance(0.05) - Planck18.luminosity_distance(0.05)) > 5 * u.Mpc


@pytest.mark.parametrize("d_mpc", [0.5, 20.0, 300.0, 5000.0])
def test_distance_gives_redshift_as_z_at_value(d_mpc):
    # reference library: astropy.cosmology.z_at_value on Planck18
    h = Host("A", 1e10, d_mpc * u.Mpc, cosmology=Planck18)
    ref = z_at_value(Planck18.luminosity_distance, d_mpc * u.Mpc, zmin=1e-9, zmax=20).value
    assert h.redshift == pytest.approx(ref, rel=1e-6, abs=0)


def test_decimal_strings_are_degrees():
    # reference: astropy SkyCoord(187.7*u.deg, 12.4*u.deg); the one rule: plain numbers are degrees
    h = Host("A", 1e10, 20, ra="187.7", dec="12.4")
    ref = SkyCoord(187.7 * u.deg, 12.4 * u.deg, frame="icrs")
    assert h.coord.separation(ref).to_value(u.arcsec) < 1e-6
    assert h.coord.ra.deg == pytest.approx(187.7, abs=1e-12)


@pytest.mark.parametrize(
    "kwargs, words",
    [
        # 95 km = 3.08e-18 Mpc (IAU 2012 au and parsec definitions, via astropy.units)
        ({"mass": 1e9, "distance": "95 km"}, "distance: '95 km' (3.08e-18 Mpc)"),
        ({"mass": 1e9, "distance": 1e6}, "distance: 1e+06 Mpc"),
        ({"mass": 9.5, "distance": 10}, "10**9.5"),
        ({"mass": 1e9, "redshift": 11}, "redshift: 11"),
        ({"mass": 1e9, "redshift": "1300 km/s"}, "not cz"),
    ],
)
def test_implausible_values_are_one_line_input_errors(kwargs, words):
    with pytest.raises(InputError, match=re.escape(words)) as err:
        Host("A", **kwargs)
    assert "\n" not in str(err.value)


def test_mass_rescales_linearly_with_distance():
    # dynamical masses scale as M ~ D (e.g. Kormendy & Ho 2013, sec. 2); h0 ~ D^(2/3)
    near = Host("A", 1e10, 50, mass_distance=50)
    far = Host("A", 1e10, 100, mass_distance=50)
    assert far.mass.to_value(u.Msun) == pytest.approx(2e10, rel=1e-6, abs=0)
    h_near = strain_amplitude(near.mass, 1.0, 1e-8 * u.Hz, near.distance)
    h_far = strain_amplitude(far.mass, 1.0, 1e-8 * u.Hz, far.distance)
    assert (h_far / h_near).value == pytest.approx(2 ** (2 / 3), rel=1e-12, abs=0)


def test_sky_position_from_strings_matches_skycoord():
    h = Host("A", 1e10, 20, ra="12h30m49.4s", dec="+12d23m28s")
    ref = SkyCoord("12h30m49.4s", "+12d23m28s", frame="icrs")
    assert h.coord.separation(ref).to_value(u.arcsec) < 1e-6


def test_fractional_mass_error_converts_to_dex():
    # sigma_log10 = sigma_frac / ln 10 for small errors (first-order propagation)
    h = Host("A", 1e10, 20, mass_err_frac=0.23)
    assert h.mass_err_dex[0] == pytest.approx(0.23 / np.log(10), rel=1e-6, abs=0)


@pytest.mark.parametrize(
    "kwargs, field",
    [
        ({"mass": -1e9, "distance": 10}, "mass"),
        ({"mass": np.nan, "distance": 10}, "mass"),
        ({"mass": "3 km", "distance": 10}, "mass"),
        ({"mass": 1e9, "distance": -10}, "distance"),
        ({"mass": 1e9, "distance": "10 kg"}, "distance"),
        ({"mass": 1e9}, "distance"),
        ({"mass": 1e9, "redshift": -0.1}, "redshift"),
        ({"mass": 1e9, "distance": 10, "ra": 10.0}, "sky position"),
        ({"mass": 1e9, "distance": 10, "ra": "nonsense", "dec": "x"}, "sky position"),
        ({"mass": 1e9, "distance": 10, "velocity_dispersion": 0}, "velocity_dispersion"),
        ({"mass": 1e9, "distance": 10, "mass_err_dex": -0.1}, "mass_err_dex"),
        ({"mass": 1e9, "distance": 10, "mass_distance": 0}, "mass_distance"),
        ({"mass": "2e10 kg", "distance": 10}, "bare numbers are solMass"),
        ({"mass": 1e9, "distance": 10, "ra": 400.0, "dec": 10.0}, "RA"),
        ({"mass": 1e9, "distance": 10, "ra": 10.0, "dec": 95.0}, "Dec"),
        ({"mass": 1e9, "distance": 100, "redshift": 0.5}, "far from the distance"),
        ({"mass": 1e9, "distance": 100, "distance_err_frac": 2.0}, "distance_err_frac"),
        ({"mass": 1e9, "distance": 100, "velocity_err": 300}, "redshift distance"),
    ],
)
def test_invalid_host_fields_name_the_field(kwargs, field):
    with pytest.raises(InputError, match=field):
        Host("A", **kwargs)


def test_host_reads_strings_with_units():
    h = Host("A", "2e10 solMass", "1 Gpc", velocity_dispersion="300000 m/s")
    assert h.mass.to_value(u.Msun) == pytest.approx(2e10, rel=1e-6, abs=0)
    assert h.distance.to_value(u.Mpc) == pytest.approx(1000, rel=1e-6, abs=0)
    assert h.velocity_dispersion.to_value(u.km / u.s) == pytest.approx(300, rel=1e-6, abs=0)


def test_hosts_from_table_names_the_row():
    from astropy.table import Table

    t = Table({"name": ["A", "B"], "mass": [1e9, 5.0], "distance": [20.0, 30.0]})
    with pytest.raises(InputError, match="row 2: mass"):
        hosts_from_table(t)
    t["mass"][1] = 2e9
    hosts = hosts_from_table(t)
    assert [h.name for h in hosts] == ["A", "B"]


def test_redshift_and_distance_may_differ_by_peculiar_motion():
    # a nearby galaxy: D = 17 Mpc from a distance indicator, cz = 1300 km/s (20% apart)
    h = Host("A", 1e9, 17, redshift=1300 / 299792.458)
    assert h.distance.to_value(u.Mpc) == 17
