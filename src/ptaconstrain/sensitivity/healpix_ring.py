"""HEALPix pixel geometry of the RING scheme in numpy, without importing healpy.

Importing healpy costs a process about 0.3 s of CPU (its package imports its
plotting modules and with them ``matplotlib.pyplot``).  Drawing and writing a
sky map of an array's sensitivity needs only the pixel centres and the pixel of
a direction, in the RING ordering; these are the formulas of Górski et al.
(2005, ApJ 622, 759, section 4 and eqs. 4-9), written as in the HEALPix C++
library that healpy wraps (``T_Healpix_Base::pix2loc`` and ``loc2pix``), so
the integers are healpy's and the unit vectors agree with healpy's to a unit in
the last place (the sine and cosine are numpy's).  Everything else (NESTED
ordering, reading and writing maps, smoothing) stays with healpy.
"""

import numpy as np

from ..errors import InputError
from .positional import check_nside

__all__ = ["pixel_count", "nside_of", "ring_vectors", "ring_pixel"]

_HALF_PI = 0.5 * np.pi
_INV_HALF_PI = 2.0 / np.pi


def pixel_count(nside):
    """Number of pixels of a HEALPix map, 12 nside^2.

    Parameters
    ----------
    nside : int
        A power of 2.

    Returns
    -------
    int

    Examples
    --------
    >>> pixel_count(32)
    12288
    """
    nside = check_nside(nside)
    return 12 * nside * nside


def nside_of(npix):
    """The nside of a full HEALPix map of ``npix`` pixels (12 nside^2, nside a power of 2).

    Parameters
    ----------
    npix : int

    Returns
    -------
    int

    Raises
    ------
    InputError
        If ``npix`` is not 12 nside^2 for a power of 2 nside.

    Examples
    --------
    >>> nside_of(12288)
    32
    """
    npix = int(npix)
    nside = int(round(np.sqrt(npix / 12.0))) if npix > 0 else 0
    if nside < 1 or 12 * nside * nside != npix or nside & (nside - 1):
        raise InputError(f"map: {npix} pixels is not a full HEALPix map (12 nside^2)")
    return nside


def _isqrt(v):
    """floor(sqrt(v)) of non-negative integers, exact for v < 2^52."""
    r = np.sqrt(v + 0.5).astype(np.int64)
    r -= r * r > v
    r += (r + 1) * (r + 1) <= v
    return r


def ring_vectors(nside, pix):
    """Unit vectors of the centres of RING pixels ``pix`` (ICRS-like x, y, z).

    Górski et al. (2005), section 4: in the polar caps ring i (from the nearer
    pole) has z = +-(1 - i^2 / (3 nside^2)) and 4 i pixels at
    phi = (j - 1/2) pi / (2 i); in the equatorial belt ring i has
    z = 4/3 - 2 i / (3 nside) and 4 nside pixels, shifted by half a pixel on
    alternate rings.  Near the poles (``abs(z) > 0.99``) sin(theta) is taken from
    ``1 - abs(z)`` directly, as the HEALPix library does.

    Parameters
    ----------
    nside : int
        A power of 2.
    pix : int or array of int
        Pixel numbers in 0 .. 12 nside^2 - 1.

    Returns
    -------
    (x, y, z) : tuple of ndarray
        Cartesian components, each shaped like ``pix``.

    Examples
    --------
    >>> x, y, z = ring_vectors(1, [0, 4, 8])
    >>> [round(float(v), 6) for v in z]     # the three rings of nside 1
    [0.666667, 0.0, -0.666667]
    """
    nside = check_nside(nside)
    pix = np.asarray(pix, dtype=np.int64)
    npix = 12 * nside * nside
    ncap = 2 * nside * (nside - 1)
    fact2 = 4.0 / npix
    fact1 = (nside << 1) * fact2
    north, south = pix < ncap, pix >= npix - ncap
    belt = ~(north | south)
    z = np.empty(pix.shape)
    phi = np.empty(pix.shape)
    sth = np.empty(pix.shape)

    p = pix[north]
    iring = (1 + _isqrt(1 + 2 * p)) >> 1
    iphi = (p + 1) - 2 * iring * (iring - 1)
    tmp = (iring * iring) * fact2
    z[north] = 1.0 - tmp
    phi[north] = (iphi - 0.5) * _HALF_PI / iring
    sth[north] = np.sqrt(tmp * (2.0 - tmp))

    ip = pix[belt] - ncap
    t = ip // (4 * nside)
    iring = t + nside
    iphi = ip - 4 * nside * t + 1
    fodd = np.where((iring + nside) & 1, 1.0, 0.5)
    zb = (2 * nside - iring) * fact1
    z[belt] = zb
    phi[belt] = (iphi - fodd) * np.pi * 0.75 * fact1
    sth[belt] = np.sqrt((1.0 - zb) * (1.0 + zb))

    ip = npix - pix[south]
    iring = (1 + _isqrt(2 * ip - 1)) >> 1
    iphi = 4 * iring + 1 - (ip - 2 * iring * (iring - 1))
    tmp = (iring * iring) * fact2
    z[south] = tmp - 1.0
    phi[south] = (iphi - 0.5) * _HALF_PI / iring
    sth[south] = np.sqrt(tmp * (2.0 - tmp))

    # the library's sin(theta) from 1 - |z| only where |z| > 0.99; elsewhere from z
    far = np.abs(z) <= 0.99
    sth[far] = np.sqrt((1.0 - z[far]) * (1.0 + z[far]))
    return sth * np.cos(phi), sth * np.sin(phi), z


def ring_pixel(nside, lon, lat):
    """RING pixel containing each direction (longitude, latitude in degrees).

    The inverse of :func:`ring_vectors`'s tiling (Górski et al. 2005, section 4):
    in the belt (``abs(z) <= 2/3``) the pixel follows from the two families of edge
    lines through the point, in the caps from the ring of the nearer pole.

    Parameters
    ----------
    nside : int
        A power of 2.
    lon, lat : float or array
        Longitude and latitude [deg], broadcast together.

    Returns
    -------
    ndarray of int
        Pixel numbers in 0 .. 12 nside^2 - 1.

    Examples
    --------
    >>> ring_pixel(1, [45.0, 0.0, 45.0], [60.0, 0.0, -60.0]).tolist()
    [0, 4, 8]
    """
    nside = check_nside(nside)
    lon, lat = np.broadcast_arrays(np.asarray(lon, float), np.asarray(lat, float))
    theta = _HALF_PI - np.radians(lat)
    phi = np.radians(lon)
    z = np.cos(theta)
    za = np.abs(z)
    v = phi * _INV_HALF_PI
    r = np.fmod(v, 4.0)  # the library's fmodulo: v itself in [0, 4), else into [0, 4)
    tt = np.where(v >= 0, np.where(v < 4.0, v, r), r + 4.0)
    tt = np.where(tt == 4.0, 0.0, tt)
    npix = 12 * nside * nside
    ncap = 2 * nside * (nside - 1)
    nl4 = 4 * nside
    out = np.empty(z.shape, dtype=np.int64)

    belt = za <= 2.0 / 3.0
    t1 = nside * (0.5 + tt[belt])
    t2 = nside * z[belt] * 0.75
    jp = (t1 - t2).astype(np.int64)  # ascending edge line
    jm = (t1 + t2).astype(np.int64)  # descending edge line
    ir = nside + 1 + jp - jm  # ring from z = 2/3, 1 .. 2 nside + 1
    kshift = 1 - (ir & 1)
    ip = ((jp + jm - nside + kshift + 1 + 2 * nl4) >> 1) % nl4
    out[belt] = ncap + (ir - 1) * nl4 + ip

    cap = ~belt
    ttc, zc, zac = tt[cap], z[cap], za[cap]
    tp = ttc - ttc.astype(np.int64)
    # near a pole the library takes sin(theta) itself, not 1 - |z|
    th = theta[cap]
    near = (th < 0.01) | (th > 3.14159 - 0.01)
    tmp = np.where(
        near & (zac >= 0.99),
        nside * np.sin(th) / np.sqrt((1.0 + zac) / 3.0),
        nside * np.sqrt(3.0 * (1.0 - zac)),
    )
    jp = (tp * tmp).astype(np.int64)
    jm = ((1.0 - tp) * tmp).astype(np.int64)
    ir = jp + jm + 1  # ring from the nearer pole
    ip = (ttc * ir).astype(np.int64)
    out[cap] = np.where(zc > 0, 2 * ir * (ir - 1) + ip, npix - 2 * ir * (ir + 1) + ip)
    return out
