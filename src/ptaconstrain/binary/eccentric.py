"""Eccentric binaries: harmonic content, orbital decay and merger time.

An eccentric binary of orbital frequency f_orb radiates at every harmonic
n f_orb (n = 1, 2, ...).  Peters & Mathews (1963, Phys. Rev. 131, 435) give
the share of the power in each harmonic, g(n, e), whose sum is the
enhancement factor F(e) of the total power over a circular orbit of the same
period; Peters (1964, Phys. Rev. 136, B1224) gives the decay of the semi-major
axis and the eccentricity and the time to merge.  Every eccentric formula of
the project lives here; the circular ones stay in :mod:`.waveform`, and every
function here reduces to them at e = 0.

Conventions as in :mod:`.waveform`: ``period`` is the observer-frame orbital
period, ``frequency`` a GW frequency 2 / P of the circular quadrupole, so the
harmonic n lies at the GW frequency n f_orb = (n / 2) f.
"""

import numpy as np
from astropy import constants as const
from astropy import units as u

from .._inputs import check_eccentricity
from . import waveform as wf

__all__ = [
    "POWER_FRACTION",
    "harmonic_power",
    "enhancement_factor",
    "harmonic_amplitude_ratio",
    "harmonic_numbers",
    "decay_rates",
    "merger_time",
    "merger_time_factor",
    "pericentre_isco_frequency",
    "pericentre_isco_factor",
]

_G = const.G
_C = const.c

#: Share of the total power F(e) the harmonics kept must hold (:func:`harmonic_numbers`).
POWER_FRACTION = 0.999


def harmonic_power(n, eccentricity):
    """Power in harmonic n relative to a circular orbit of the same period, g(n, e).

    Peters & Mathews (1963), eq. 20:
    g(n, e) = n^4/32 {[J_{n-2}(ne) - 2e J_{n-1}(ne) + (2/n) J_n(ne)
    + 2e J_{n+1}(ne) - J_{n+2}(ne)]^2 + (1 - e^2) [J_{n-2}(ne) - 2 J_n(ne)
    + J_{n+2}(ne)]^2 + 4/(3 n^2) J_n(ne)^2},
    with the Bessel functions of the first kind of ``scipy.special.jv``.  At
    e = 0 only n = 2 radiates, g(2, 0) = 1.

    Parameters
    ----------
    n : int or array of int >= 1
        Harmonic number (GW frequency n f_orb).
    eccentricity : float or array in [0, 1)

    Returns
    -------
    ndarray, broadcast over the inputs.

    Examples
    --------
    >>> float(harmonic_power(2, 0.0))
    1.0
    """
    from scipy import special  # here, not at import: ~0.15 s that circular orbits never need

    n = np.asarray(n, dtype=float)
    e = np.asarray(eccentricity, dtype=float)
    x = n * e
    jm2, jm1, j0, jp1, jp2 = (special.jv(n + k, x) for k in (-2, -1, 0, 1, 2))
    a = jm2 - 2.0 * e * jm1 + (2.0 / n) * j0 + 2.0 * e * jp1 - jp2
    b = jm2 - 2.0 * j0 + jp2
    return n**4 / 32.0 * (a**2 + (1.0 - e**2) * b**2 + 4.0 / (3.0 * n**2) * j0**2)


def enhancement_factor(eccentricity):
    """Total GW power relative to a circular orbit of the same period, F(e).

    Peters & Mathews (1963), eq. 17:
    F(e) = (1 + 73/24 e^2 + 37/96 e^4) (1 - e^2)^(-7/2) = sum_n g(n, e).

    Parameters
    ----------
    eccentricity : float or array in [0, 1)

    Returns
    -------
    ndarray

    Examples
    --------
    >>> round(float(enhancement_factor(0.5)), 4)
    4.8843
    """
    e2 = np.asarray(eccentricity, dtype=float) ** 2
    return (1.0 + 73.0 / 24.0 * e2 + 37.0 / 96.0 * e2**2) * (1.0 - e2) ** -3.5


def harmonic_amplitude_ratio(n, eccentricity):
    """Strain amplitude of harmonic n over the circular h0 at the same orbital frequency.

    h_n = (2 / n) sqrt(g(n, e)) h0.  Derivation: the GW luminosity of a
    monochromatic signal of amplitude h at frequency f from distance D is
    L = (pi c^3 / G) D^2 f^2 <h+^2 + hx^2> averaged over the sphere
    (Maggiore 2008, eq. 1.160, from memory), i.e. L is proportional to h^2 f^2
    for a fixed angular pattern.  The harmonic n carries L_n = g(n, e) L_circ
    (Peters & Mathews 1963, eq. 19), where L_circ is the luminosity of the
    circular binary of the same orbital frequency, whose amplitude h0 sits at
    f = 2 f_orb.  Hence h_n^2 (n f_orb)^2 = g(n, e) h0^2 (2 f_orb)^2 and
    h_n = (2/n) sqrt(g(n, e)) h0 (the same relation as Amaro-Seoane et al. 2010,
    eq. 10, from memory).  The angular pattern of each harmonic differs from the
    circular one; h_n is the orientation-averaged equivalent amplitude, so its
    use with orientation-averaged S/N and sky-averaged limits is consistent, not
    per orientation exact.  At e = 0, h_2 = h0 and all other h_n vanish.

    Parameters
    ----------
    n : int or array of int >= 1
    eccentricity : float or array in [0, 1)

    Returns
    -------
    ndarray

    Examples
    --------
    >>> float(harmonic_amplitude_ratio(2, 0.0))
    1.0
    """
    n = np.asarray(n, dtype=float)
    return (2.0 / n) * np.sqrt(harmonic_power(n, eccentricity))


def harmonic_numbers(eccentricity, fraction=POWER_FRACTION):
    """The harmonics that hold ``fraction`` of the power: n = 1 ... N, those with g > 0.

    Rule: N is the smallest number with sum_{n=1}^{N} g(n, e) >= fraction x F(e)
    (99.9 % by default); harmonics with g(n, e) = 0 (all but n = 2 at e = 0)
    carry nothing and are dropped.  N grows roughly as (1 - e^2)^(-3/2): 2 at
    e = 0, 8 at 0.3, 15 at 0.5, 37 at 0.7, 612 at 0.95.

    Parameters
    ----------
    eccentricity : float in [0, 0.95]
    fraction : float in (0, 1)

    Returns
    -------
    ndarray of int, ascending.

    Examples
    --------
    >>> harmonic_numbers(0.0).tolist()
    [2]
    >>> int(harmonic_numbers(0.5).max())
    15
    """
    e = check_eccentricity(eccentricity)
    if e == 0.0:  # J_m(0) = 0 for m != 0: g(n, 0) is 1 at n = 2 and 0 elsewhere
        return np.array([2])
    target = fraction * float(enhancement_factor(e))
    # the peak harmonic is ~2 (1 + e)^1.1954 / (1 - e^2)^1.5 (Wen 2003, eq. 37, from
    # memory); 8 times it (at least 16) holds 99.9 % below e = 0.95, and the loop
    # doubles the range if not
    size = int(16 + 16 * (1.0 + e) ** 1.1954 / (1.0 - e**2) ** 1.5)
    while True:
        n = np.arange(1, size + 1)
        g = harmonic_power(n, e)
        total = np.cumsum(g)
        if total[-1] >= target:
            last = int(np.searchsorted(total, target)) + 1
            keep = n[:last]
            return keep[g[:last] > 0]
        size *= 2


def decay_rates(total_mass, mass_ratio, separation, eccentricity):
    """Rates of change of the semi-major axis and eccentricity, source frame.

    Peters (1964), eqs. 5.6 and 5.7, with m1 m2 = M^2 eta:
    da/dt = -(64/5) G^3 m1 m2 M / (c^5 a^3 (1 - e^2)^(7/2)) (1 + 73/24 e^2 + 37/96 e^4),
    de/dt = -(304/15) e G^3 m1 m2 M / (c^5 a^4 (1 - e^2)^(5/2)) (1 + 121/304 e^2).

    Parameters
    ----------
    total_mass : Quantity [mass]
    mass_ratio : float or array, 0 < q <= 1
    separation : Quantity [length]
        Semi-major axis a.
    eccentricity : float or array in [0, 1)

    Returns
    -------
    (Quantity [m/s], Quantity [1/s])

    Examples
    --------
    >>> from astropy import units as u
    >>> da0, de0 = decay_rates(1e9 * u.Msun, 1.0, 0.01 * u.pc, 0.0)
    >>> da5, de5 = decay_rates(1e9 * u.Msun, 1.0, 0.01 * u.pc, 0.5)
    >>> float(de0.value), round(float(da5 / da0), 4)   # circular stays circular; x F(0.5)
    (-0.0, 4.8843)
    """
    eta = wf.symmetric_mass_ratio(mass_ratio)
    e = np.asarray(eccentricity, dtype=float)
    beta = 64.0 / 5.0 * _G**3 * total_mass**3 * eta / _C**5
    a = separation
    dadt = -beta / a**3 * enhancement_factor(e)
    dedt = -(19.0 / 12.0) * beta * e / (a**4 * (1.0 - e**2) ** 2.5) * (1.0 + 121.0 / 304.0 * e**2)
    return dadt.to(u.m / u.s), dedt.to(1 / u.s)


def merger_time_factor(eccentricity):
    """Merger time of an eccentric orbit over that of a circular one of the same a.

    Peters (1964), eq. 5.14: with c0 = a0 (1 - e0^2) e0^(-12/19)
    (1 + 121/304 e0^2)^(-870/2299) and beta = (64/5) G^3 m1 m2 M / c^5,
    T(a0, e0) = (12/19) (c0^4 / beta) int_0^e0 e^(29/19) (1 + 121/304 e^2)^(1181/2299)
    / (1 - e^2)^(3/2) de, while T_c(a0) = a0^4 / (4 beta) (eq. 5.10).  Their
    ratio depends on e0 only; the integral is done by ``scipy.integrate.quad``.

    Parameters
    ----------
    eccentricity : float in [0, 1)

    Returns
    -------
    float, 1 at e0 = 0, decreasing towards (768/425) (1 - e0^2)^(7/2) as e0 -> 1.

    Examples
    --------
    >>> merger_time_factor(0.0), round(merger_time_factor(0.5), 4)
    (1.0, 0.3578)
    """
    from scipy import integrate

    e0 = float(eccentricity)
    if e0 == 0.0:
        return 1.0

    def integrand(e):
        return (
            e ** (29.0 / 19.0)
            * (1.0 + 121.0 / 304.0 * e**2) ** (1181.0 / 2299.0)
            / (1.0 - e**2) ** 1.5
        )

    integral, _ = integrate.quad(integrand, 0.0, e0, epsabs=0.0, epsrel=1e-12, limit=200)
    c0_over_a0 = (
        (1.0 - e0**2) * e0 ** (-12.0 / 19.0) * (1.0 + 121.0 / 304.0 * e0**2) ** (-870.0 / 2299.0)
    )
    return float(4.0 * 12.0 / 19.0 * c0_over_a0**4 * integral)


def merger_time(total_mass, mass_ratio, period, eccentricity, redshift=0.0):
    """Observer-frame time left before an eccentric binary of orbital period P merges.

    T = T_c(a) x :func:`merger_time_factor` (Peters 1964, eq. 5.14), with T_c the
    circular time of :func:`ptaconstrain.binary.waveform.coalescence_time` at the
    GW frequency 2 / P (which equals a^4 / (4 beta), eq. 5.10, at the Kepler
    semi-major axis a); at e = 0 it is that circular time exactly.

    Parameters
    ----------
    total_mass : Quantity [mass]
    mass_ratio : float or array, 0 < q <= 1
    period : Quantity [time]
        Observer-frame orbital period.
    eccentricity : float in [0, 0.95]
    redshift : float or array

    Returns
    -------
    Quantity [yr], broadcast over the inputs.

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain.binary.waveform import coalescence_time, gw_frequency
    >>> merger_time(1e10 * u.Msun, 1.0, 5 * u.yr, 0.0).to(u.kyr)
    <Quantity 2.023 kyr>
    >>> coalescence_time(1e10 * u.Msun, 1.0, gw_frequency(5 * u.yr)).to(u.kyr)   # e = 0
    <Quantity 2.023 kyr>
    """
    e = check_eccentricity(eccentricity)
    tc = wf.coalescence_time(total_mass, mass_ratio, wf.gw_frequency(period), redshift)
    return tc * merger_time_factor(e)


def pericentre_isco_frequency(total_mass, eccentricity, redshift=0.0):
    """Highest GW frequency 2 / P at which the pericentre stays outside the ISCO.

    Criterion: an orbit exists only while its pericentre distance a (1 - e)
    exceeds the test-mass Schwarzschild ISCO radius 6 G M / c^2 (Maggiore 2008,
    eq. 4.39, applied at pericentre).  With Kepler's third law a ~ P^(2/3) this
    is f < f_ISCO (1 - e)^(3/2), f_ISCO of
    :func:`ptaconstrain.binary.waveform.isco_frequency`.  (The exact last stable
    eccentric orbit of a test mass has semi-latus rectum p = (6 + 2e) G M / c^2,
    Cutler, Kennefick & Poisson 1994; the pericentre rule asks for a semi-major
    axis larger by 6 (1 + e) / (6 + 2e), at most 1.48 for e <= 0.95, and equals
    it at e = 0.)

    Parameters
    ----------
    total_mass : Quantity [mass]
    eccentricity : float in [0, 0.95]
    redshift : float or array

    Returns
    -------
    Quantity [Hz]

    Examples
    --------
    >>> from astropy import units as u
    >>> pericentre_isco_frequency(1 * u.Msun, 0.0)     # the circular f_ISCO at e = 0
    <Quantity 4397.2 Hz>
    >>> pericentre_isco_frequency(1 * u.Msun, 0.5)
    <Quantity 1554.6 Hz>
    """
    return wf.isco_frequency(total_mass, redshift) * pericentre_isco_factor(eccentricity)


def pericentre_isco_factor(eccentricity):
    """(1 - e)^(3/2): the pericentre ISCO frequency over the circular f_ISCO.

    See :func:`pericentre_isco_frequency` for the criterion; exactly 1 at e = 0.

    Parameters
    ----------
    eccentricity : float in [0, 0.95]

    Returns
    -------
    float

    Examples
    --------
    >>> round(pericentre_isco_factor(0.5), 4)   # 0.5^(3/2)
    0.3536
    """
    return (1.0 - check_eccentricity(eccentricity)) ** 1.5
