"""Distance <-> redshift (cosmo.py), above all the shipped Planck18 table.

Outside reference: astropy.cosmology (Planck18.luminosity_distance and
z_at_value, which integrate the Friedmann equation and invert it numerically).
"""

import pickle
import subprocess
import sys

import numpy as np
import pytest
from astropy import units as u
from astropy.cosmology import WMAP9, Planck18, default_cosmology, z_at_value

from ptaconstrain import cosmo
from ptaconstrain.binary.host import Host

Z = np.geomspace(1e-4, 10, 400)


def test_shipped_table_matches_astropy_planck18_distance():
    # astropy.cosmology.Planck18.luminosity_distance; the issue asks for 1e-6 relative
    # over 1e-4 <= z <= 10; the spline on 3000 nodes is good to ~1e-12, so 1e-9 here
    dz = cosmo.DistanceRedshift(cosmo.PLANCK18)
    assert dz.tabulated
    ref = Planck18.luminosity_distance(Z).to_value(u.Mpc)
    np.testing.assert_allclose(dz.distance(Z), ref, rtol=1e-9)
    np.testing.assert_allclose(cosmo.luminosity_distance_at(Z).to_value(u.Mpc), ref, rtol=1e-9)
    np.testing.assert_allclose(dz.redshift(ref), Z, rtol=1e-9)


def test_shipped_table_inverse_matches_z_at_value():
    # astropy.cosmology.z_at_value (bounded root finding, ztol 1e-10 here)
    z = np.array([1e-4, 3e-3, 0.0222, 0.1, 0.7, 2.0, 6.5, 10.0])
    d = Planck18.luminosity_distance(z)
    ref = np.array([z_at_value(Planck18.luminosity_distance, di, ztol=1e-10).value for di in d])
    np.testing.assert_allclose(cosmo.redshift_at(d, cosmo.PLANCK18), ref, rtol=1e-6)
    # and the table is what astropy's own Planck18 object is converted with
    np.testing.assert_allclose(cosmo.redshift_at(d, Planck18), ref, rtol=1e-6)


def test_table_nodes_are_those_cosmo_computes_for_planck18():
    # the generator (examples/make_cosmology_table.py) calls cosmo.spline_nodes
    tab = cosmo.DistanceRedshift(cosmo.PLANCK18)
    computed = cosmo.DistanceRedshift(Planck18.clone(name="Planck18 copy"))
    assert tab.tabulated and not computed.tabulated
    for shipped, fresh in zip(tab._nodes, cosmo.spline_nodes(Planck18), strict=True):
        np.testing.assert_allclose(shipped, fresh, rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(tab.distance(Z), computed.distance(Z), rtol=1e-9)


def test_hermite_evaluation_is_scipy_cubic_spline():
    # reference: scipy.interpolate.CubicSpline through the same nodes (what cosmo.py
    # evaluated before); values and slopes at the nodes fix each interval's cubic
    from scipy.interpolate import CubicSpline

    lz, ld, _ = cosmo.spline_nodes(WMAP9)
    dz = cosmo.DistanceRedshift(WMAP9)
    x = np.log(np.geomspace(1e-8, 20, 5001))
    np.testing.assert_allclose(
        np.log(dz.distance(np.exp(x))), CubicSpline(lz, ld)(x), rtol=0, atol=1e-12
    )
    # the inverse (reciprocal slopes) agrees with the spline of ln z against ln D_L
    y = np.log(dz.distance(np.exp(x)))
    np.testing.assert_allclose(
        np.log(dz.redshift(np.exp(y))), CubicSpline(ld, lz)(y), rtol=0, atol=1e-9
    )
    # and round-trips
    np.testing.assert_allclose(dz.redshift(dz.distance(Z)), Z, rtol=1e-9)


def test_astropy_default_cosmology_is_still_honoured():
    # WMAP9 differs from Planck18 by ~2% at z = 0.05 (astropy's own distances)
    with default_cosmology.set(WMAP9):
        assert cosmo.get_cosmology() is WMAP9
        h = Host("A", 1e10, redshift=0.05)
        d = cosmo.luminosity_distance_at(0.05)
    assert h.cosmology is WMAP9
    ref = WMAP9.luminosity_distance(0.05)
    assert h.distance.to_value(u.Mpc) == pytest.approx(ref.to_value(u.Mpc), rel=1e-6, abs=0)
    assert d.to_value(u.Mpc) == pytest.approx(ref.to_value(u.Mpc), rel=1e-6, abs=0)
    assert abs(ref / Planck18.luminosity_distance(0.05) - 1) > 0.01  # the test can fail


def test_default_needs_no_astropy_cosmology_import():
    # a fresh interpreter: a host at a distance and a redshift, without astropy.cosmology
    code = (
        "import sys\nfrom ptaconstrain.binary.host import Host\n"
        "h = Host('A', 2e10, 100)\ng = Host('B', 2e10, redshift=0.05)\n"
        "assert h.cosmology.name == 'Planck18'\n"
        "print(h.redshift, g.distance.value, 'astropy.cosmology' in sys.modules)"
    )
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True
    ).stdout.split()
    assert out[2] == "False"
    # astropy.cosmology.z_at_value / luminosity_distance, as above
    assert float(out[0]) == pytest.approx(
        z_at_value(Planck18.luminosity_distance, 100 * u.Mpc, ztol=1e-10).value, rel=1e-6, abs=0
    )
    assert float(out[1]) == pytest.approx(
        Planck18.luminosity_distance(0.05).to_value(u.Mpc), rel=1e-6, abs=0
    )


def test_stand_in_behaves_as_planck18():
    p = cosmo.PLANCK18
    assert p == Planck18 and p.name == "Planck18"
    # H(z) and other attributes come from astropy's Planck18 itself
    assert p.H(0.5) == Planck18.H(0.5)
    assert pickle.loads(pickle.dumps(p)) is p
