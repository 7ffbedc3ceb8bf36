import numpy as np
import pytest
from astropy import units as u
from astropy.coordinates import SkyCoord
from astropy.cosmology import WMAP9, Planck18

from ptaconstrain.binary.host import Host, as_quantity
from ptaconstrain.binary.waveform import strain_amplitude


def test_redshift_gives_planck18_luminosity_distance():
    # reference: astropy.cosmology.Planck18
    h = Host("A", 1e10, redshift=0.05)
    assert h.distance.to_value(u.Mpc) == pytest.approx(
        Planck18.luminosity_distance(0.05).to_value(u.Mpc), rel=1e-10)


def test_cosmology_is_selectable():
    h = Host("A", 1e10, redshift=0.05, cosmology=WMAP9)
    assert h.distance.to_value(u.Mpc) == pytest.approx(
        WMAP9.luminosity_distance(0.05).to_value(u.Mpc), rel=1e-10)


def test_distance_gives_redshift_consistent_with_cosmology():
    h = Host("A", 1e10, 300 * u.Mpc)
    assert Planck18.luminosity_distance(h.redshift).to_value(u.Mpc) == pytest.approx(300, rel=1e-6)


def test_mass_rescales_linearly_with_distance():
    # dynamical masses scale as M ~ D (e.g. Kormendy & Ho 2013, sec. 2); h0 ~ D^(2/3)
    near = Host("A", 1e10, 50, mass_distance=50)
    far = Host("A", 1e10, 100, mass_distance=50)
    assert far.mass.to_value(u.Msun) == pytest.approx(2e10)
    h_near = strain_amplitude(near.mass, 1.0, 1e-8 * u.Hz, near.distance)
    h_far = strain_amplitude(far.mass, 1.0, 1e-8 * u.Hz, far.distance)
    assert (h_far / h_near).value == pytest.approx(2 ** (2 / 3), rel=1e-12)


def test_sky_position_from_strings_matches_skycoord():
    h = Host("A", 1e10, 20, ra="12h30m49.4s", dec="+12d23m28s")
    ref = SkyCoord("12h30m49.4s", "+12d23m28s", frame="icrs")
    assert h.coord.separation(ref).to_value(u.arcsec) < 1e-6


def test_fractional_mass_error_converts_to_dex():
    # sigma_log10 = sigma_frac / ln 10 for small errors (first-order propagation)
    h = Host("A", 1e10, 20, mass_err_frac=0.23)
    assert h.mass_err_dex[0] == pytest.approx(0.23 / np.log(10))


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
        ({"mass": "2e10 kg", "distance": 10}, "check the units"),
        ({"mass": 1e9, "distance": 10, "ra": 400.0, "dec": 10.0}, "RA"),
        ({"mass": 1e9, "distance": 10, "ra": 10.0, "dec": 95.0}, "Dec"),
        ({"mass": 1e9, "distance": 100, "redshift": 0.5}, "far from the distance"),
        ({"mass": 1e9, "distance": 100, "distance_err_frac": 2.0}, "distance_err_frac"),
        ({"mass": 1e9, "distance": 100, "velocity_err": 300}, "redshift distance"),
    ],
)
def test_invalid_host_fields_name_the_field(kwargs, field):
    with pytest.raises(ValueError, match=field):
        Host("A", **kwargs)


def test_as_quantity_reads_strings_and_bare_numbers():
    assert as_quantity("2e10 solMass", u.Msun, "mass").value == pytest.approx(2e10)
    assert as_quantity(3, u.Mpc, "distance").to_value(u.kpc) == pytest.approx(3000)
    assert as_quantity("1 Gpc", u.Mpc, "distance").value == pytest.approx(1000)


def test_redshift_and_distance_may_differ_by_peculiar_motion():
    # a nearby galaxy: D = 17 Mpc from a distance indicator, cz = 1300 km/s (20% apart)
    h = Host("A", 1e9, 17, redshift=1300 / 299792.458)
    assert h.distance.to_value(u.Mpc) == 17
