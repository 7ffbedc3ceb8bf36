"""Continuous-wave strain and orbital evolution of circular binaries.

Every formula of the project's binary model lives here once, with its
citation; everything else calls these functions.  All functions broadcast
over their inputs (``mass_ratio[:, None]`` against ``frequency[None, :]``
gives a grid with no loop) and take and return astropy Quantities.

Conventions (the documentation's physics page, docs/physics.rst):

* ``total_mass`` is M = m1 + m2 in the source rest frame; ``mass_ratio`` is
  q = m2/m1 in (0, 1]; eta = q / (1 + q)^2; chirp mass Mc = M eta^(3/5).
* ``period`` is the orbital period and ``frequency`` the gravitational-wave
  frequency f = 2 / P, both in the observer frame, P_obs = (1 + z) P_rest.
* Redshifted chirp mass Mz = (1 + z) Mc.
"""

import numpy as np
from astropy import constants as const
from astropy import units as u

from ..errors import InputError

__all__ = [
    "symmetric_mass_ratio",
    "mass_ratio_from_eta",
    "chirp_mass",
    "strain_amplitude",
    "strain_prefactor",
    "gw_frequency",
    "orbital_period",
    "separation",
    "isco_frequency",
    "frequency_derivative",
    "coalescence_time",
    "is_chirping",
    "hardening_radius",
    "period_at_separation",
    "gravitational_radius",
]

_G = const.G
_C = const.c


def _check_mass_ratio(q):
    q = np.asarray(q, dtype=float)
    if not np.all(np.isfinite(q)) or np.any(q <= 0) or np.any(q > 1):
        bad = q[~(np.isfinite(q) & (q > 0) & (q <= 1))].ravel()[0]
        raise InputError(f"mass_ratio: {bad:g} is not in (0, 1]; give q = m2/m1 with m2 <= m1")
    return q


def symmetric_mass_ratio(mass_ratio):
    """Symmetric mass ratio eta = q / (1 + q)^2 (0 < eta <= 1/4).

    Parameters
    ----------
    mass_ratio : float or array, 0 < q <= 1

    Returns
    -------
    ndarray, dimensionless.

    Examples
    --------
    >>> symmetric_mass_ratio([1.0, 0.5, 0.1])
    array([0.25      , 0.22222222, 0.08264463])
    """
    q = _check_mass_ratio(mass_ratio)
    return q / (1.0 + q) ** 2


def mass_ratio_from_eta(eta):
    """Closed-form inverse of eta = q / (1 + q)^2 on the branch q <= 1.

    Solves eta q^2 + (2 eta - 1) q + eta = 0 and keeps the smaller root,
    written as q = 2 eta / ((1 - 2 eta) + sqrt(1 - 4 eta)) so that it stays
    accurate for small eta (no cancellation).  Values of eta >= 1/4 return
    q = 1; eta <= 0 returns 0.

    Parameters
    ----------
    eta : float or array

    Returns
    -------
    ndarray, dimensionless, in [0, 1].

    Examples
    --------
    >>> mass_ratio_from_eta([0.25, 2 / 9, 0.0])
    array([1. , 0.5, 0. ])
    """
    eta = np.clip(np.asarray(eta, dtype=float), 0.0, 0.25)
    with np.errstate(invalid="ignore", divide="ignore"):
        q = 2.0 * eta / ((1.0 - 2.0 * eta) + np.sqrt(1.0 - 4.0 * eta))
    return np.where(np.isnan(eta), np.nan, q)


def chirp_mass(total_mass, mass_ratio):
    """Chirp mass Mc = M eta^(3/5) (Peters & Mathews 1963; Maggiore 2008, eq. 4.2).

    Parameters
    ----------
    total_mass : Quantity [mass]
        M = m1 + m2.
    mass_ratio : float or array, 0 < q <= 1

    Returns
    -------
    Quantity [mass], broadcast over the inputs.

    Examples
    --------
    >>> from astropy import units as u
    >>> chirp_mass(2e10 * u.Msun, 1.0)  # M (1/4)^(3/5)
    <Quantity 8.70550563e+09 solMass>
    """
    return total_mass * symmetric_mass_ratio(mass_ratio) ** 0.6


def strain_prefactor(total_mass, distance, redshift=0.0):
    """Mass-ratio- and frequency-free factor S of the CW amplitude, h0 = eta S f^(2/3).

    Because Mc^(5/3) = M^(5/3) eta, the strain of :func:`strain_amplitude`
    factorises as h0 = eta(q) * S * f^(2/3) with
    S = 2 (G (1+z) M)^(5/3) pi^(2/3) / (c^4 D_L).
    Every sample-to-sample or galaxy-to-galaxy variation enters through S;
    the exclusion map, the probability maps and the catalogue ranking use
    this to avoid evaluating h0 cell by cell.

    Parameters
    ----------
    total_mass : Quantity [mass]
    distance : Quantity [length]
        Luminosity distance D_L.
    redshift : float or array

    Returns
    -------
    Quantity [Hz^(-2/3)].

    Examples
    --------
    >>> from astropy import units as u
    >>> s = strain_prefactor(2e10 * u.Msun, 100 * u.Mpc)
    >>> s.unit
    Unit("1 / Hz(2/3)")
    >>> h0 = 0.25 * s * (10 * u.nHz) ** (2 / 3)  # eta(q = 1) S f^(2/3)
    >>> print(f"{h0.to_value(''):.4g}")
    1.016e-13
    """
    mz = (1.0 + np.asarray(redshift)) * total_mass
    s = 2.0 * (_G * mz) ** (5.0 / 3.0) * np.pi ** (2.0 / 3.0) / (_C**4 * distance)
    return s.to(u.Hz ** (-2.0 / 3.0))


def strain_amplitude(total_mass, mass_ratio, frequency, distance, redshift=0.0):
    """Continuous-wave strain amplitude of a circular binary.

    Thorne (1987), eq. 46, with Mz = (1+z) Mc and the luminosity distance:
    h0 = 2 (G Mz)^(5/3) (pi f)^(2/3) / (c^4 D_L).
    This is the PTA convention for h0 (e.g. Sesana & Vecchio 2010, from memory):
    half of Maggiore's face-on amplitude, so the quadrupole polarisations are
    h+ = h0 (1 + cos^2 i) cos Phi and hx = 2 h0 cos i sin Phi (Maggiore 2008,
    eqs. 4.29-4.30).

    Parameters
    ----------
    total_mass : Quantity [mass]
    mass_ratio : float or array, 0 < q <= 1
    frequency : Quantity [frequency]
        GW frequency in the observer frame.
    distance : Quantity [length]
        Luminosity distance.
    redshift : float or array

    Returns
    -------
    Quantity [dimensionless], broadcast over the inputs.

    Examples
    --------
    >>> from astropy import units as u
    >>> h0 = strain_amplitude(2e10 * u.Msun, [1.0, 0.1], 10 * u.nHz, 100 * u.Mpc)
    >>> h0
    <Quantity [1.016e-13, 3.360e-14]>
    """
    eta = symmetric_mass_ratio(mass_ratio)
    f = frequency.to(u.Hz)
    return (eta * strain_prefactor(total_mass, distance, redshift) * f ** (2.0 / 3.0)).to(
        u.dimensionless_unscaled
    )


def gw_frequency(period):
    """GW frequency of the dominant quadrupole of a circular orbit, f = 2 / P.

    Parameters
    ----------
    period : Quantity [time]
        Orbital period (observer frame).

    Returns
    -------
    Quantity [Hz].

    Examples
    --------
    >>> from astropy import units as u
    >>> gw_frequency(1 * u.yr)
    <Quantity 6.33761756e-08 Hz>
    """
    return (2.0 / period).to(u.Hz)


def orbital_period(frequency):
    """Orbital period P = 2 / f, inverse of :func:`gw_frequency`.

    Parameters
    ----------
    frequency : Quantity [frequency]

    Returns
    -------
    Quantity [yr].

    Examples
    --------
    >>> from astropy import units as u
    >>> orbital_period(10 * u.nHz)
    <Quantity 6.33761756 yr>
    """
    return (2.0 / frequency).to(u.yr)


def separation(total_mass, period, redshift=0.0):
    """Orbital separation from Kepler's third law, a^3 = G M P_rest^2 / (4 pi^2).

    Parameters
    ----------
    total_mass : Quantity [mass]
    period : Quantity [time]
        Observer-frame orbital period; P_rest = P / (1 + z).
    redshift : float or array

    Returns
    -------
    Quantity [pc].

    Examples
    --------
    >>> from astropy import units as u
    >>> separation(1 * u.Msun, 1 * u.yr).to(u.au)  # the Earth's orbit
    <Quantity 1.0000 AU>
    """
    p_rest = period / (1.0 + np.asarray(redshift))
    return np.cbrt(_G * total_mass * p_rest**2 / (4.0 * np.pi**2)).to(u.pc)


def gravitational_radius(total_mass):
    """Gravitational radius r_g = G M / c^2 (half the Schwarzschild radius).

    Parameters
    ----------
    total_mass : Quantity [mass]

    Returns
    -------
    Quantity [pc].

    Examples
    --------
    >>> from astropy import units as u
    >>> round(float(gravitational_radius(1 * u.Msun).to_value(u.km)), 4)
    1.4766
    """
    return (_G * total_mass / _C**2).to(u.pc)


def period_at_separation(total_mass, sep, redshift=0.0):
    """Observer-frame orbital period at separation ``sep`` (Kepler's third law).

    Parameters
    ----------
    total_mass : Quantity [mass]
    sep : Quantity [length]
    redshift : float or array

    Returns
    -------
    Quantity [yr].

    Examples
    --------
    >>> from astropy import units as u
    >>> period_at_separation(1 * u.Msun, 1 * u.au)
    <Quantity 1.0000 yr>
    """
    p_rest = 2.0 * np.pi * np.sqrt(sep**3 / (_G * total_mass))
    return (p_rest * (1.0 + np.asarray(redshift))).to(u.yr)


def isco_frequency(total_mass, redshift=0.0):
    """GW frequency at the innermost stable circular orbit (test-mass Schwarzschild).

    f_ISCO = c^3 / (6^(3/2) pi G M (1 + z)), observer frame (Maggiore 2008,
    eq. 4.39: twice the orbital frequency at r = 6 G M / c^2).  No circular
    binary of total mass M exists above it.

    Parameters
    ----------
    total_mass : Quantity [mass]
    redshift : float or array

    Returns
    -------
    Quantity [Hz].

    Examples
    --------
    >>> from astropy import units as u
    >>> isco_frequency(1 * u.Msun)  # about 4.4 kHz / (M / solMass)
    <Quantity 4397.2 Hz>
    >>> isco_frequency(1e9 * u.Msun, redshift=0.1).to(u.uHz)
    <Quantity 3.997 uHz>
    """
    mz = (1.0 + np.asarray(redshift)) * total_mass
    return (_C**3 / (6.0**1.5 * np.pi * _G * mz)).to(u.Hz)


def frequency_derivative(total_mass, mass_ratio, frequency, redshift=0.0):
    """Rate of change of the observed GW frequency of a circular binary.

    Peters (1964), quadrupole order, observer frame:
    df/dt = (96/5) pi^(8/3) (G Mz / c^3)^(5/3) f^(11/3).

    Parameters
    ----------
    total_mass : Quantity [mass]
    mass_ratio : float or array, 0 < q <= 1
    frequency : Quantity [frequency]
    redshift : float or array

    Returns
    -------
    Quantity [Hz / s].

    Examples
    --------
    >>> from astropy import units as u
    >>> fdot = frequency_derivative(1e10 * u.Msun, 1.0, 10 * u.nHz)
    >>> fdot.to(u.nHz / u.yr)
    <Quantity 0.000985 nHz / yr>
    """
    mz = (1.0 + np.asarray(redshift)) * chirp_mass(total_mass, mass_ratio)
    tm = (_G * mz / _C**3).to(u.s)
    f = frequency.to(u.Hz)
    return (96.0 / 5.0 * np.pi ** (8.0 / 3.0) * tm ** (5.0 / 3.0) * f ** (11.0 / 3.0)).to(
        u.Hz / u.s
    )


def coalescence_time(total_mass, mass_ratio, frequency, redshift=0.0):
    """Observer-frame time left before a circular binary merges.

    Peters (1964), leading quadrupole order:
    tau = (5/256) (G Mz / c^3)^(-5/3) (pi f)^(-8/3)  (= (3/8) f / (df/dt)).

    Parameters
    ----------
    total_mass : Quantity [mass]
    mass_ratio : float or array, 0 < q <= 1
    frequency : Quantity [frequency]
        GW frequency, observer frame.
    redshift : float or array

    Returns
    -------
    Quantity [yr], broadcast over the inputs.

    Examples
    --------
    >>> from astropy import units as u
    >>> tau = coalescence_time(1e10 * u.Msun, 1.0, 10 * u.nHz)
    >>> tau.to(u.kyr)
    <Quantity 3.807 kyr>
    >>> fdot = frequency_derivative(1e10 * u.Msun, 1.0, 10 * u.nHz)
    >>> (3 / 8 * 10 * u.nHz / fdot).to(u.kyr)  # tau = (3/8) f / (df/dt)
    <Quantity 3.807 kyr>
    """
    mz = (1.0 + np.asarray(redshift)) * chirp_mass(total_mass, mass_ratio)
    tm = (_G * mz / _C**3).to(u.s)
    pf = np.pi * frequency.to(u.Hz)
    return (5.0 / 256.0 * tm ** (-5.0 / 3.0) * pf ** (-8.0 / 3.0)).to(u.yr)


def is_chirping(total_mass, mass_ratio, frequency, span, redshift=0.0):
    """Whether the frequency drifts by more than one bin 1/T over the span T.

    The monochromatic continuous-wave model holds while (df/dt) T < 1/T, i.e.
    (df/dt) T^2 < 1 (common practice: the drift stays within one Fourier bin).

    Parameters
    ----------
    total_mass : Quantity [mass]
    mass_ratio : float or array, 0 < q <= 1
    frequency : Quantity [frequency]
    span : Quantity [time]
        Observing span T.
    redshift : float or array

    Returns
    -------
    ndarray of bool, broadcast over the inputs.

    Examples
    --------
    >>> from astropy import units as u
    >>> is_chirping(1e10 * u.Msun, 1.0, [10, 100] * u.nHz, 15 * u.yr)
    array([False,  True])
    """
    fdot = frequency_derivative(total_mass, mass_ratio, frequency, redshift)
    return np.asarray((fdot * span**2).to_value(u.dimensionless_unscaled) > 1.0)


def hardening_radius(total_mass, mass_ratio, velocity_dispersion):
    """Separation below which a binary is hard, a_h = G mu / (4 sigma^2).

    Quinlan (1996); Merritt (2013), "Dynamics and Evolution of Galactic
    Nuclei", eq. 8.71, with mu = M q / (1+q)^2 the reduced mass.

    Parameters
    ----------
    total_mass : Quantity [mass]
    mass_ratio : float or array, 0 < q <= 1
    velocity_dispersion : Quantity [speed]

    Returns
    -------
    Quantity [pc].

    Examples
    --------
    >>> from astropy import units as u
    >>> hardening_radius(1e9 * u.Msun, 1.0, 200 * u.km / u.s)
    <Quantity 6.72 pc>
    """
    mu = total_mass * symmetric_mass_ratio(mass_ratio)
    return (_G * mu / (4.0 * velocity_dispersion**2)).to(u.pc)
