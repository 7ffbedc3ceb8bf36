"""Exclusion of companions over the mass-ratio x orbital-period plane.

A circular binary of total mass M (the host's measured black-hole mass),
mass ratio q and orbital period P has h0 = eta(q) S f^(2/3) with f = 2/P
(:func:`ptaconstrain.binary.waveform.strain_prefactor`).  Against a sensitivity
h_thr(f) a cell is excluded (or detectable) when eta(q) > eta_min(f) =
h_thr(f) / (S f^(2/3)), so the whole map follows from one comparison of a
q-vector against a P-vector, and the largest allowed mass ratio per period
is the closed-form inverse of eta at eta_min.
"""

import numpy as np
from astropy import units as u

from ..binary import waveform as wf
from ..sensitivity.curve import FromCurve

__all__ = [
    "ALLOWED",
    "EXCLUDED",
    "UNCONSTRAINED",
    "ABOVE_ISCO",
    "CHIRPING",
    "REGION_NAMES",
    "ExclusionMap",
    "exclusion_map",
    "default_periods",
    "default_mass_ratios",
    "band_periods",
    "exclusion_probability",
]

ALLOWED = 0
EXCLUDED = 1  # "detectable" for a noise budget
UNCONSTRAINED = 2  # outside the curve's frequency range
ABOVE_ISCO = 3  # no circular binary of this total mass
CHIRPING = 4  # f drifts by more than 1/T over the span T

REGION_NAMES = {
    ALLOWED: "allowed",
    EXCLUDED: "excluded",
    UNCONSTRAINED: "not constrained",
    ABOVE_ISCO: "above ISCO",
    CHIRPING: "chirping within the span",
}


def default_mass_ratios(n=300, q_min=1e-4):
    """Log-spaced mass ratios from ``q_min`` to 1."""
    return np.logspace(np.log10(q_min), 0.0, n)


def band_periods(curve):
    """Shortest and longest orbital period (P = 2/f) the curve's band covers.

    Returns
    -------
    Quantity (2,) [yr].
    """
    return wf.orbital_period(curve.frequency[[-1, 0]]).to(u.yr)


def default_periods(curve, n=300, pad=1.5):
    """Log-spaced observer-frame orbital periods covering the curve's band.

    The range is the curve's P = 2/f range widened by ``pad`` on each side,
    so that the unconstrained margins show on the map.

    Returns
    -------
    Quantity [yr].
    """
    p = band_periods(curve).value
    return np.logspace(np.log10(p[0] / pad), np.log10(p[1] * pad), n) * u.yr


class ExclusionMap(FromCurve):
    """Result of :func:`exclusion_map`; every array is indexed [q, P].

    Attributes
    ----------
    host : Host
    curve : StrainCurve
    mass_ratio : ndarray (nq,)
    period : Quantity (nP,) [yr], observer frame
    frequency : Quantity (nP,) [Hz], f = 2/P
    excluded : ndarray of bool (nq, nP)
        h0 above the threshold, inside the curve's band and below f_ISCO.
        (Cells that also chirp are flagged in ``region``.)
    region : ndarray of int8 (nq, nP)
        One of ALLOWED, EXCLUDED, UNCONSTRAINED, ABOVE_ISCO, CHIRPING;
        CHIRPING marks cells where the monochromatic model the curve assumes
        breaks down, whatever the strain comparison says.
    h0_threshold : ndarray (nP,)
        The curve's h0 at each period (NaN outside its band).
    max_mass_ratio : ndarray (nP,)
        Largest mass ratio not excluded; 1 where even q = 1 is allowed; NaN
        where the curve says nothing or no binary exists (above ISCO).
    chirp_mass_ratio : ndarray (nP,)
        Smallest mass ratio that chirps within the span; NaN if none does.
    companion_mass : Quantity (nP,) [solMass]
        m2 = M q / (1 + q) at ``max_mass_ratio``.
    separation : Quantity (nP,) [pc]
    separation_rg : ndarray (nP,)
        Separation in gravitational radii G M / c^2.
    hardening_period : Quantity (nq,) [yr] or None
        Period at the hardening radius for each q when the host has a
        velocity dispersion.
    span : Quantity [yr]
        Observing span used for the chirp test (and noise budgets).
    snr : float
        S/N threshold (noise budgets).
    """

    def __init__(self, **fields):
        self.__dict__.update(fields)

    @property
    def label(self):
        """e.g. '95% upper limit' or 'forecast, S/N >= 5'."""
        return self.curve.label(self.snr)

    @property
    def bound_is_monochromatic(self):
        """Per period: the bound lies below the chirping region (a valid CW statement)."""
        return ~(np.nan_to_num(self.chirp_mass_ratio, nan=np.inf) < self.max_mass_ratio)

    def tightest(self):
        """Period of the smallest ``max_mass_ratio`` and that ratio, or None.

        Periods where the bound falls inside the chirping region are skipped:
        there the monochromatic model behind the curve does not hold.

        Returns
        -------
        (Quantity [yr], float) or None when nothing is excluded.
        """
        ok = ~np.isnan(self.max_mass_ratio) & self.bound_is_monochromatic
        qmax = np.where(ok, self.max_mass_ratio, np.inf)
        i = int(np.argmin(qmax))
        if not np.isfinite(qmax[i]) or qmax[i] >= 1.0:
            return None
        return self.period[i], float(self.max_mass_ratio[i])

    @property
    def smallest_excluded_companion_mass(self):
        """Lightest companion excluded at any period (Quantity [solMass]) or None.

        Like :meth:`tightest`, skips periods whose bound lies in the chirping region.
        """
        m = self.companion_mass.to_value(u.Msun)
        ok = np.isfinite(m) & (self.max_mass_ratio < 1.0) & self.bound_is_monochromatic
        if not np.any(ok):
            return None
        return np.min(m[ok]) * u.Msun

    def fraction(self, code):
        """Fraction of the grid's cells in region ``code``."""
        return float(np.mean(self.region == code))


def exclusion_map(host, curve, mass_ratio=None, period=None, snr=5.0, span=None):
    """Which circular companions of ``host`` the sensitivity ``curve`` rules out.

    Parameters
    ----------
    host : Host
    curve : StrainCurve, or an object with ``curve_at(coord)``
        An object with a ``curve_at(coord)`` method (a pulsar array or a sky
        map of limits) is asked for the curve at the host's position (None
        when the host has none, meaning sky-averaged).
    mass_ratio : array, optional
        Mass ratios in (0, 1]; default 300 log-spaced from 1e-4 to 1.
    period : Quantity [time], optional
        Observer-frame orbital periods; default 300 log-spaced over the
        curve's band, widened by 1.5 on each side.
    snr : float
        S/N threshold, used only for noise budgets.
    span : Quantity [time], optional
        Observing span; default the curve's ``span`` meta (else 1/f_min).

    Returns
    -------
    ExclusionMap
    """
    if hasattr(curve, "curve_at"):
        curve = curve.curve_at(host.coord)
    q = default_mass_ratios() if mass_ratio is None else np.asarray(mass_ratio, dtype=float)
    q = np.atleast_1d(q)
    eta = wf.symmetric_mass_ratio(q)  # validates q
    period = default_periods(curve) if period is None else u.Quantity(period, u.yr)
    period = np.atleast_1d(period).to(u.yr)
    if not np.all(np.isfinite(period.value)) or np.any(period.value <= 0):
        raise ValueError("period: must be finite and positive")
    span = curve.observing_span(span)
    f = wf.gw_frequency(period)
    m, d, z = host.mass, host.distance, host.redshift

    h_thr = curve.h0_threshold(f, snr=snr, span=span)
    # h0 = eta * (strain of an eta = 1 binary): the q = 1 strain divided by 1/4.
    h_unit = wf.strain_amplitude(m, 1.0, f, d, z).value / 0.25
    eta_min = h_thr / h_unit
    # f-dot is also linear in eta: chirping above eta_chirp = 1 / (fdot_unit T^2).
    fdot_unit = wf.frequency_derivative(m, 1.0, f, z) / 0.25
    eta_chirp = 1.0 / (fdot_unit * span**2).to_value(u.dimensionless_unscaled)
    f_isco = wf.isco_frequency(m, z)
    above_isco = f > f_isco
    unconstrained = np.isnan(h_thr)

    with np.errstate(invalid="ignore"):
        strain_cut = eta[:, None] > eta_min[None, :]
    excluded = strain_cut & ~above_isco[None, :]
    chirp = eta[:, None] > eta_chirp[None, :]

    region = np.where(excluded, EXCLUDED, ALLOWED).astype(np.int8)
    region[chirp] = CHIRPING
    region[:, unconstrained] = UNCONSTRAINED
    region[:, above_isco] = ABOVE_ISCO

    qmax = np.where(eta_min >= 0.25, 1.0, wf.mass_ratio_from_eta(eta_min))
    qmax = np.where(unconstrained | above_isco, np.nan, qmax)
    qchirp = np.where(eta_chirp >= 0.25, np.nan, wf.mass_ratio_from_eta(eta_chirp))
    sep = wf.separation(m, period, z)
    r_g = (wf._G * m / wf._C**2).to(u.pc)

    hard = None
    if host.velocity_dispersion is not None:
        a_h = wf.hardening_radius(m, q, host.velocity_dispersion)
        hard = wf.period_at_separation(m, a_h, z)

    return ExclusionMap(
        host=host,
        curve=curve,
        mass_ratio=q,
        period=period,
        frequency=f,
        excluded=excluded,
        region=region,
        h0_threshold=h_thr,
        eta_min=eta_min,
        max_mass_ratio=qmax,
        chirp_mass_ratio=qchirp,
        companion_mass=(m * qmax / (1.0 + qmax)).to(u.Msun),
        separation=sep,
        separation_rg=(sep / r_g).to_value(u.dimensionless_unscaled),
        isco_frequency=f_isco,
        hardening_period=hard,
        span=span,
        snr=float(snr),
    )


# Uncertainty-aware maps live in their own module; re-exported here for users.
from .probability import exclusion_probability  # noqa: E402  (defined after ExclusionMap)
