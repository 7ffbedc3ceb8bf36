"""sensitivity/healpix_ring.py: the RING pixel geometry against healpy itself."""

import healpy as hp
import numpy as np
import pytest

from ptaconstrain.errors import InputError
from ptaconstrain.sensitivity import healpix_ring as hr


@pytest.mark.parametrize("nside", [1, 2, 4, 8, 32, 128, 1024])
def test_pixel_centres_are_healpys_bit_for_bit(nside):
    # outside reference: healpy.pix2vec (the HEALPix C++ library, Gorski et al. 2005)
    pix = np.arange(12 * nside**2)
    if pix.size > 200_000:  # the caps, the cap/belt edges and a spread of the belt
        ncap = 2 * nside * (nside - 1)
        pix = np.unique(np.r_[pix[:5000], pix[ncap - 5000 : ncap + 5000], pix[::97], pix[-5000:]])
    np.testing.assert_array_equal(np.array(hr.ring_vectors(nside, pix)), hp.pix2vec(nside, pix))


@pytest.mark.parametrize("nside", [1, 4, 32, 256])
def test_pixel_of_a_direction_is_healpys(nside):
    # outside reference: healpy.ang2pix(lonlat=True), RING; random directions uniform on
    # the sphere and any longitude, plus the poles, the cap/belt edge (|z| = 2/3,
    # latitude 41.81 deg), the equator, directions within 0.6 deg of a pole, and the
    # pixel centres themselves
    rng = np.random.default_rng(nside)
    lon = rng.uniform(-720.0, 720.0, 50_000)
    lat = np.degrees(np.arcsin(rng.uniform(-1.0, 1.0, 50_000)))
    lat[:200] = rng.uniform(89.4, 90.0, 200)
    lat[200:400] = -lat[:200]
    edge = np.degrees(np.arcsin(2.0 / 3.0))
    lat[400:407] = [90.0, -90.0, 0.0, edge, -edge, 89.99999, -89.99999]
    np.testing.assert_array_equal(
        hr.ring_pixel(nside, lon, lat), hp.ang2pix(nside, lon, lat, lonlat=True)
    )
    centre_lon, centre_lat = hp.pix2ang(nside, np.arange(12 * nside**2), lonlat=True)
    np.testing.assert_array_equal(
        hr.ring_pixel(nside, centre_lon, centre_lat), np.arange(12 * nside**2)
    )


def test_pixel_counts_and_their_inverse():
    # npix = 12 nside^2 (Gorski et al. 2005, eq. 2); healpy.nside2npix as reference
    for nside in (1, 2, 64, 8192):
        assert hr.pixel_count(nside) == hp.nside2npix(nside)
        assert hr.nside_of(12 * nside**2) == nside
    for bad in (0, 11, 12 * 3**2, 12 * 5**2 + 1):
        with pytest.raises(InputError, match="not a full HEALPix map"):
            hr.nside_of(bad)
    with pytest.raises(InputError, match="power of 2"):
        hr.ring_vectors(3, [0])
