"""Readouts of an exclusion map that practitioners compare with other data.

- the binary's angular separation at the host's angular-diameter distance (to set
  against a VLBI beam);
- the time to coalescence of the bounding binary, and lines of equal merger time on
  the q-P plane (Peters 1964);
- a noise budget at a known inclination (e.g. from a jet), averaged over the
  polarisation angle only.
"""

import numpy as np
from astropy import units as u

from ..binary import waveform as wf
from ..sensitivity.curve import StrainCurve
from .sampling import orientation_factor

__all__ = [
    "angular_diameter_distance",
    "angular_separation",
    "merger_time",
    "merger_time_lines",
    "default_merger_times",
    "curve_at_inclination",
]


def angular_diameter_distance(luminosity_distance, redshift):
    """D_A = D_L / (1 + z)^2 (Etherington's reciprocity, valid in any metric theory).

    Parameters
    ----------
    luminosity_distance : Quantity [length]
    redshift : float or array

    Returns
    -------
    Quantity [Mpc]

    Examples
    --------
    >>> from astropy import units as u
    >>> angular_diameter_distance(121 * u.Mpc, 0.1)
    <Quantity 100. Mpc>
    """
    return (luminosity_distance / (1.0 + np.asarray(redshift)) ** 2).to(u.Mpc)


def angular_separation(result):
    """Angular separation of the binary at each period of ``result``, in micro-arcseconds.

    theta = a / D_A, with a from Kepler's third law (rest-frame period) and D_A
    the host's angular-diameter distance.  It depends on the total mass and the
    period only, not on q.

    Parameters
    ----------
    result : ExclusionMap

    Returns
    -------
    Quantity (nP,) [uas]

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> from ptaconstrain.binary import Host
    >>> from ptaconstrain.sensitivity.curve import StrainCurve
    >>> f = np.geomspace(2e-9, 3e-7, 60) * u.Hz
    >>> limit = StrainCurve(f, 1e-14 * (f / (1e-8 * u.Hz)).value, "h0_limit",
    ...                     {"confidence": 0.95, "span": "15 yr"})  # an invented limit
    >>> from ptaconstrain.analysis import exclusion_map
    >>> r = exclusion_map(Host("Example", 2e10, 50), limit, period=[1.0, 10.0] * u.yr)
    >>> np.round(angular_separation(r).to_value(u.uas), 1)
    array([ 55.1, 255.7])
    """
    host = result.host
    d_a = angular_diameter_distance(host.distance, host.redshift)
    return (result.separation / d_a).to(u.uas, equivalencies=u.dimensionless_angles())


def merger_time(result):
    """Rest-frame time to coalescence of the bounding binary (q = max_mass_ratio) per period.

    tau = (5/256) (G Mc / c^3)^(-5/3) (pi f_rest)^(-8/3) (Peters 1964, eq. 5.14 for
    a circular orbit), i.e. the observer-frame time divided by 1 + z.  NaN where the
    period is not constrained.

    Parameters
    ----------
    result : ExclusionMap

    Returns
    -------
    Quantity (nP,) [yr]

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> from ptaconstrain.binary import Host
    >>> from ptaconstrain.sensitivity.curve import StrainCurve
    >>> f = np.geomspace(2e-9, 3e-7, 60) * u.Hz
    >>> limit = StrainCurve(f, 1e-14 * (f / (1e-8 * u.Hz)).value, "h0_limit",
    ...                     {"confidence": 0.95, "span": "15 yr"})  # an invented limit
    >>> from ptaconstrain.analysis import exclusion_map
    >>> r = exclusion_map(Host("Example", 2e10, 50), limit, period=[1.0, 10.0] * u.yr)
    >>> merger_time(r).unit
    Unit("yr")
    """
    host = result.host
    q = result.max_mass_ratio
    ok = np.isfinite(q)
    tau = wf.coalescence_time(host.mass, np.where(ok, q, 1.0), result.frequency, host.redshift) / (
        1.0 + host.redshift
    )
    return np.where(ok, tau.to_value(u.yr), np.nan) * u.yr


def default_merger_times(cosmology=None):
    """1 Myr, 100 Myr and the Hubble time 1/H0 of ``cosmology`` (Quantity [yr]).

    Parameters
    ----------
    cosmology : astropy.cosmology.Cosmology, optional
        Default: astropy's current default (Planck18).

    Returns
    -------
    Quantity (3,) [yr]

    Examples
    --------
    >>> [f"{t:.3g}" for t in default_merger_times().value]
    ['1e+06', '1e+08', '1.45e+10']
    """
    from ..cosmo import hubble_time

    return u.Quantity([1e6 * u.yr, 1e8 * u.yr, hubble_time(cosmology)]).to(u.yr)


def merger_time_lines(result, times=None):
    """For each merger time, the mass ratio at which a binary merges in that time, per period.

    tau is proportional to 1/eta at fixed M and P (Mc^(-5/3) = M^(-5/3) / eta), so
    the line tau = T is eta(P) = 0.25 tau(q=1, P) / T, inverted in closed form; NaN
    where even q = 1 takes longer than T.  Binaries above a line merge sooner.

    Parameters
    ----------
    result : ExclusionMap
    times : Quantity [time], optional
        Rest-frame merger times; default :func:`default_merger_times`.

    Returns
    -------
    (Quantity (n,) [yr], ndarray (n, nP))
        The times and the mass ratio of each line per period.

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> from ptaconstrain.binary import Host
    >>> from ptaconstrain.sensitivity.curve import StrainCurve
    >>> f = np.geomspace(2e-9, 3e-7, 60) * u.Hz
    >>> limit = StrainCurve(f, 1e-14 * (f / (1e-8 * u.Hz)).value, "h0_limit",
    ...                     {"confidence": 0.95, "span": "15 yr"})  # an invented limit
    >>> from ptaconstrain.analysis import exclusion_map
    >>> r = exclusion_map(Host("Example", 2e10, 50), limit, period=[1.0, 10.0] * u.yr)
    >>> times, q = merger_time_lines(r)
    >>> q.shape
    (3, 2)
    """
    host = result.host
    times = (
        default_merger_times(host.cosmology)
        if times is None
        else np.atleast_1d(u.Quantity(times, u.yr))
    )
    tau_equal = wf.coalescence_time(host.mass, 1.0, result.frequency, host.redshift) / (
        1.0 + host.redshift
    )
    eta = 0.25 * (tau_equal[None, :] / times[:, None]).to_value(u.dimensionless_unscaled)
    q = np.full(eta.shape, np.nan)
    ok = eta <= 0.25
    q[ok] = wf.mass_ratio_from_eta(eta[ok])
    return times.to(u.yr), q


def curve_at_inclination(curve, inclination):
    """A noise budget for a binary of known inclination, averaged over polarisation only.

    The polarisation-averaged S/N^2 of a binary at inclination i is g(i) times the
    orientation average, g(i) = [(1 + cos^2 i)^2 + 4 cos^2 i] / (16/5)
    (:func:`ptaconstrain.analysis.sampling.orientation_factor`), so the h0 reaching
    a given S/N is 1/sqrt(g) of the averaged one: the PSD is divided by g (the
    characteristic strain by sqrt(g)).  Upper limits are returned unchanged (an h0
    limit bounds h0 itself).

    Parameters
    ----------
    curve : StrainCurve
    inclination : Quantity [angle] or float (deg)

    Returns
    -------
    StrainCurve
        With meta ``inclination`` (deg) recorded.

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> f = np.geomspace(2e-9, 3e-7, 10) * u.Hz
    >>> psd = StrainCurve(f, np.full(10, 1e-10), "strain_psd", {"span": "10 yr"})
    >>> face_on = curve_at_inclination(psd, 0)
    >>> round(float(face_on.h0_threshold(f[:1])[0] / psd.h0_threshold(f[:1])[0]), 4)
    0.6325
    """
    from .._inputs import quantity

    inc = quantity(inclination, u.deg, "inclination")
    if not 0 <= inc.to_value(u.deg) <= 180:
        from ..errors import InputError

        raise InputError(f"inclination: {inc:.4g} must lie in 0-180 deg (0: face-on)")
    if curve.is_limit:
        return curve
    g = float(orientation_factor(np.cos(inc.to_value(u.rad))))
    scale = 1.0 / g if curve.kind == "strain_psd" else 1.0 / np.sqrt(g)
    meta = dict(curve.meta)
    meta["inclination"] = f"{inc.to_value(u.deg):g} deg"
    meta["inclination_factor"] = g
    return StrainCurve(curve.frequency, curve.value * scale, curve.kind, meta=meta)
