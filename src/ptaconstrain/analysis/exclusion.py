"""Exclusion of companions over the mass-ratio x orbital-period plane.

A circular binary of total mass M (the host's measured black-hole mass),
mass ratio q and orbital period P has h0 = eta(q) S f^(2/3) with f = 2/P
(:func:`ptaconstrain.binary.waveform.strain_prefactor`).  Against a sensitivity
h_thr(f) a cell is excluded (or detectable) when eta(q) > eta_min(f) =
h_thr(f) / (S f^(2/3)), so the whole map follows from one comparison of a
q-vector against a P-vector, and the largest allowed mass ratio per period
is the closed-form inverse of eta at eta_min.

Eccentric orbits (``eccentricity`` > 0) keep this shape.  The harmonic n of
the orbital frequency, at GW frequency (n/2) f, has amplitude
h_n = (2/n) sqrt(g(n, e)) h0 (:mod:`ptaconstrain.binary.eccentric`), still
linear in eta, so each harmonic gives its own eta_n(P) = h_thr((n/2) f) /
((2/n) sqrt(g) S f^(2/3)) and the map needs only eta_min(P) per period:

* upper limit: excluded when *any* harmonic exceeds the limit at its own
  frequency, eta_min = min_n eta_n.  A CW limit is derived for a circular
  (monochromatic, quadrupole) signal; applying it harmonic by harmonic treats
  each as an independent monochromatic signal with the orientation-averaged
  amplitude h_n.  It ignores the power of the other harmonics (conservative)
  and the different angular pattern of each harmonic (exact only on average
  over orientations).
* noise budget: S/N^2 summed over the harmonics, rho^2 / rho_thr^2 =
  sum_n (eta / eta_n)^2, so eta_min = (sum_n eta_n^-2)^(-1/2).

The chirp test uses the fastest-drifting harmonic kept (the highest n holding
99.9 % of the power), which drifts by (n/2) F(e) times the circular df/dt;
no binary exists where the pericentre lies inside the ISCO
(:func:`~ptaconstrain.binary.eccentric.pericentre_isco_frequency`).  At e = 0
only n = 2 is kept and every number equals the circular one bit for bit.
"""

import warnings
from dataclasses import dataclass

import numpy as np
from astropy import units as u

from .._inputs import check_eccentricity, positive, quantity
from ..binary import eccentric as ecc
from ..binary import waveform as wf
from ..binary.host import Host
from ..errors import PtaconstrainWarning
from ..sensitivity.curve import FromCurve
from ..sensitivity.positional import PositionalSensitivity
from .regions import ABOVE_ISCO, ALLOWED, CHIRPING, EXCLUDED, UNCONSTRAINED

__all__ = [
    "ExclusionMap",
    "exclusion_map",
    "default_periods",
    "default_mass_ratios",
    "band_periods",
    "sensitivity_for",
    "warn_sky_averaged",
]


def default_mass_ratios(n=300, q_min=1e-4):
    """Log-spaced mass ratios from ``q_min`` to 1.

    Parameters
    ----------
    n : int
        Number of mass ratios.
    q_min : float
        Smallest mass ratio, in (0, 1).

    Returns
    -------
    ndarray (n,)
        Dimensionless, increasing.

    Examples
    --------
    >>> default_mass_ratios(5)
    array([1.e-04, 1.e-03, 1.e-02, 1.e-01, 1.e+00])
    """
    return np.logspace(np.log10(q_min), 0.0, n)


def band_periods(curve):
    """Shortest and longest orbital period (P = 2/f) the curve's band covers.

    Returns
    -------
    Quantity (2,) [yr].

    Parameters
    ----------
    curve : StrainCurve

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit")  # invented
    >>> band_periods(curve)   # 2 / (50 nHz) and 2 / (2 nHz)
    <Quantity [ 1.26752351, 31.68808781] yr>
    """
    return wf.orbital_period(curve.frequency[[-1, 0]]).to(u.yr)


def default_periods(curve, n=300, pad=1.5):
    """Log-spaced observer-frame orbital periods covering the curve's band.

    The range is the curve's P = 2/f range widened by ``pad`` on each side,
    so that the unconstrained margins show on the map.

    Returns
    -------
    Quantity [yr].

    Parameters
    ----------
    curve : StrainCurve
    n : int
        Number of periods.
    pad : float
        Factor by which the band's period range is widened on each side.

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit")  # invented
    >>> default_periods(curve, n=3)
    <Quantity [ 0.845,  6.338, 47.532] yr>
    """
    p = band_periods(curve).value
    return np.logspace(np.log10(p[0] / pad), np.log10(p[1] * pad), n) * u.yr


@dataclass(frozen=True, eq=False)
class ExclusionMap(FromCurve):
    """Result of :func:`exclusion_map`; every array is indexed [q, P].

    Attributes
    ----------
    host : Host
        The galaxy whose companions are bounded.
    curve : StrainCurve
        The sensitivity used (at the host's position for a positional one).
    mass_ratio : ndarray (nq,)
        Mass ratios q = m2/m1 of the grid, in (0, 1].
    period : Quantity (nP,) [yr]
        Orbital periods, observer frame.
    frequency : Quantity (nP,) [Hz]
        GW frequency f = 2/P, observer frame.
    excluded : ndarray of bool (nq, nP)
        h0 above the threshold, inside the curve's band and below f_ISCO.
        (Cells that also chirp are flagged in ``region``.)
    region : ndarray of int8 (nq, nP)
        One of ALLOWED, EXCLUDED, UNCONSTRAINED, ABOVE_ISCO, CHIRPING;
        CHIRPING marks cells where the monochromatic model the curve assumes
        breaks down, whatever the strain comparison says.
    h0_threshold : ndarray (nP,)
        The curve's h0 at each period (dimensionless; NaN outside its band).
        For an eccentric orbit: the h0 of the circular binary of the same
        period (:func:`~ptaconstrain.binary.waveform.strain_amplitude`) at
        which the eccentric binary becomes excluded (detectable).
    eta_min : ndarray (nP,)
        Smallest symmetric mass ratio eta = q/(1+q)^2 excluded at each period
        (h0 = eta x the strain of an eta = 1 binary); NaN outside the band.
    max_mass_ratio : ndarray (nP,)
        Largest mass ratio not excluded; 1 where even q = 1 is allowed; NaN
        where the curve says nothing or no binary exists (above ISCO).
    chirp_mass_ratio : ndarray (nP,)
        Smallest mass ratio that chirps within the span; NaN if none does.
    companion_mass : Quantity (nP,) [solMass]
        m2 = M q / (1 + q) at ``max_mass_ratio``.
    separation : Quantity (nP,) [pc]
        Binary separation at each period (Kepler's third law).
    separation_rg : ndarray (nP,)
        Separation in gravitational radii G M / c^2.
    isco_frequency : Quantity [Hz]
        GW frequency 2/P at the innermost stable circular orbit of mass M;
        for an eccentric orbit, where the pericentre reaches it.
    hardening_period : Quantity (nq,) [yr] or None
        Period at the hardening radius for each q when the host has a
        velocity dispersion.
    span : Quantity [yr]
        Observing span used for the chirp test (and noise budgets).
    snr : float
        S/N threshold (noise budgets).
    eccentricity : float
        Orbital eccentricity e of every binary of the map (0: circular).
    harmonics : ndarray of int
        Harmonics n of the orbital frequency used (those holding 99.9 % of
        the power; [2] for a circular orbit).

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit")  # invented
    >>> from ptaconstrain import Host, exclusion_map
    >>> result = exclusion_map(Host("Invented galaxy", 2e10, 100), curve)
    >>> result.region.shape, result.max_mass_ratio.shape      # [q, P] and [P]
    ((300, 300), (300,))
    >>> result.to_table().colnames[:4]
    ['period', 'f_gw', 'h0_threshold', 'max_mass_ratio']
    """

    host: Host
    curve: object
    mass_ratio: np.ndarray
    period: u.Quantity
    frequency: u.Quantity
    excluded: np.ndarray
    region: np.ndarray
    h0_threshold: np.ndarray
    eta_min: np.ndarray
    max_mass_ratio: np.ndarray
    chirp_mass_ratio: np.ndarray
    companion_mass: u.Quantity
    separation: u.Quantity
    separation_rg: np.ndarray
    isco_frequency: u.Quantity
    hardening_period: u.Quantity | None
    span: u.Quantity
    snr: float
    eccentricity: float = 0.0
    harmonics: np.ndarray = None

    def __repr__(self):
        best = self.tightest()
        bound = (
            "nothing " + self.verb
            if best is None
            else f"q > {best[1]:.3g} {self.verb} at P = {best[0].to_value(u.yr):.3g} yr"
        )
        return (
            f"ExclusionMap({self.host.name!r}, {self.label}, grid {self.mass_ratio.size} q "
            f"x {self.period.size} P;\n  tightest: {bound})"
        )

    def to_table(self, meta=None):
        """One row per period: the bound on companions of the host.

        Calls :func:`ptaconstrain.report.tables.exclusion_table`.  Columns:
        ``period`` [yr], ``f_gw`` [Hz], ``h0_threshold``, ``max_mass_ratio``,
        ``companion_mass`` [solMass], ``separation`` [pc], ``separation_rg``
        [G M / c^2], ``chirp_mass_ratio``, ``constrained``.

        Parameters
        ----------
        meta : dict, optional
            Provenance to store in the table meta.

        Returns
        -------
        astropy.table.QTable
        """
        from ..report.tables import exclusion_table

        return exclusion_table(self, meta=meta)

    def plot(self, ax=None):
        """The map: regions shaded, the bound drawn, q against P on log axes.

        Parameters
        ----------
        ax : matplotlib Axes, optional
            Draw into this Axes; default a new Figure.

        Returns
        -------
        matplotlib.figure.Figure
        """
        from ..report.figures import exclusion_figure

        return exclusion_figure(self, ax=ax)

    @property
    def label(self):
        """e.g. '95% upper limit' or 'forecast, S/N >= 5'."""
        return self.curve.label(self.snr)

    @property
    def orbit(self):
        """'circular orbit' or e.g. 'eccentricity e = 0.5 (15 harmonics)'."""
        if self.eccentricity == 0.0:
            return "circular orbit"
        n = 0 if self.harmonics is None else len(self.harmonics)
        return f"eccentricity e = {self.eccentricity:g} ({n} harmonics)"

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


def sensitivity_for(host, curve, warn=True):
    """The curve to compare with ``host``.

    A plain curve is returned as it is; a positional sensitivity (an object
    with ``curve_at(coord)``: a pulsar array or a sky map of limits) is asked
    for its curve at the host's position, or for the sky average, with a
    :class:`~ptaconstrain.errors.PtaconstrainWarning`, when the host has none.

    Parameters
    ----------
    host : Host
    curve : StrainCurve or PositionalSensitivity
    warn : bool
        Warn when the sky average stands in for a missing position.

    Returns
    -------
    StrainCurve

    Examples
    --------
    >>> from astropy.coordinates import SkyCoord
    >>> from ptaconstrain import Host, load_array
    >>> from ptaconstrain.data import path
    >>> array = load_array(path("demo_array.ecsv"))          # invented pulsar array
    >>> host = Host("Invented galaxy", 2e10, 100, coord=SkyCoord(280, -35, unit="deg"))
    >>> sensitivity_for(host, array).kind                    # the array's curve at the host
    'strain_psd'
    """
    if not isinstance(curve, PositionalSensitivity):
        return curve
    if host.coord is None and warn:
        warn_sky_averaged(host, stacklevel=4)
    return curve.curve_at(host.coord)


def warn_sky_averaged(host, stacklevel=2):
    """Warn that ``host`` has no sky position, so a sky average stands in.

    The one wording of this soft assumption, for the library and the commands.

    Parameters
    ----------
    host : Host
    stacklevel : int
        As :func:`warnings.warn`.

    Returns
    -------
    None

    Examples
    --------
    >>> import warnings
    >>> from ptaconstrain import Host
    >>> with warnings.catch_warnings(record=True) as caught:
    ...     warnings.simplefilter("always")
    ...     warn_sky_averaged(Host("Invented galaxy", 2e10, 100))
    >>> str(caught[0].message)
    "no sky position for 'Invented galaxy' (give its RA/Dec): the sky-averaged sensitivity is used"
    """
    warnings.warn(
        f"no sky position for {host.name!r} (give its RA/Dec): "
        "the sky-averaged sensitivity is used",
        PtaconstrainWarning,
        stacklevel=stacklevel,
    )


def exclusion_map(
    host, curve, mass_ratio=None, period=None, snr=5.0, span=None, *, eccentricity=0.0, warn=True
):
    """Which companions of ``host`` the sensitivity ``curve`` rules out.

    Circular orbits by default; with ``eccentricity`` every binary of the map
    has that eccentricity and radiates at the harmonics of its orbital
    frequency (see the module notes for the rule used with limits and with
    noise budgets).

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
    eccentricity : float in [0, 0.95]
        Orbital eccentricity (Peters & Mathews 1963 harmonics); 0 is circular.
    warn : bool
        Emit a :class:`~ptaconstrain.errors.PtaconstrainWarning` for each soft
        assumption: the sky average used for a host without a position, the
        orientation-averaged S/N of a noise budget (the inclination is unknown).
        :func:`ptaconstrain.analysis.probability.exclusion_probability` turns
        this off for the best-fit map it builds and reports its own.

    Returns
    -------
    ExclusionMap

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> from ptaconstrain.binary import Host
    >>> from ptaconstrain.sensitivity.curve import StrainCurve
    >>> f = np.geomspace(2e-9, 3e-7, 60) * u.Hz
    >>> limit = StrainCurve(f, 1e-14 * (f / (1e-8 * u.Hz)).value, "h0_limit",
    ...                     {"confidence": 0.95, "span": "15 yr"})  # an invented limit
    >>> exclusion_map(Host("Example", 2e10, 50), limit)
    ExclusionMap('Example', 95% upper limit, grid 300 q x 300 P;
      tightest: q > 0.00717 excluded at P = 31.6 yr)
    """
    e = check_eccentricity(eccentricity)
    curve = sensitivity_for(host, curve, warn=warn)
    if warn and not curve.is_limit and "inclination" not in curve.meta:
        warnings.warn(
            "forecasts use the orientation-averaged S/N, as the binary's inclination is unknown",
            PtaconstrainWarning,
            stacklevel=2,
        )
    q = default_mass_ratios() if mass_ratio is None else np.asarray(mass_ratio, dtype=float)
    q = np.atleast_1d(q)
    eta = wf.symmetric_mass_ratio(q)  # validates q
    if period is None:
        period = default_periods(curve)
    period = np.atleast_1d(positive(quantity(period, u.yr, "period"), "period"))
    span = curve.observing_span(span)
    f = wf.gw_frequency(period)
    m, d, z = host.mass, host.distance, host.redshift

    # h0 = eta * (strain of an eta = 1 binary): the q = 1 strain divided by 1/4.
    h_unit = wf.strain_amplitude(m, 1.0, f, d, z).value / 0.25
    harmonics = ecc.harmonic_numbers(e)
    h_thr, eta_min = _harmonic_eta_min(curve, f, h_unit, harmonics, e, snr, span)
    # f-dot is also linear in eta: chirping above eta_chirp = 1 / (fdot_unit T^2); the
    # highest harmonic kept drifts (n/2) F(e) times as fast as the circular f = 2/P
    fdot_unit = wf.frequency_derivative(m, 1.0, f, z) / 0.25
    fdot_unit = fdot_unit * (harmonics.max() / 2.0 * float(ecc.enhancement_factor(e)))
    eta_chirp = 1.0 / (fdot_unit * span**2).to_value(u.dimensionless_unscaled)
    f_isco = ecc.pericentre_isco_frequency(m, e, z)
    above_isco = f > f_isco
    unconstrained = np.isnan(eta_min)

    # every per-cell array is 1 byte (bool or int8) and built in place: an 8-byte
    # temporary per cell left the cache on large grids (time grew as size^1.5)
    with np.errstate(invalid="ignore"):
        excluded = eta[:, None] > eta_min[None, :]
    excluded &= ~above_isco[None, :]
    chirp = eta[:, None] > eta_chirp[None, :]

    region = np.where(excluded, np.int8(EXCLUDED), np.int8(ALLOWED))
    np.copyto(region, np.int8(CHIRPING), where=chirp)
    region[:, unconstrained] = UNCONSTRAINED
    region[:, above_isco] = ABOVE_ISCO

    qmax = np.where(eta_min >= 0.25, 1.0, wf.mass_ratio_from_eta(eta_min))
    qmax = np.where(unconstrained | above_isco, np.nan, qmax)
    qchirp = np.where(eta_chirp >= 0.25, np.nan, wf.mass_ratio_from_eta(eta_chirp))
    sep = wf.separation(m, period, z)
    r_g = wf.gravitational_radius(m)

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
        eccentricity=e,
        harmonics=harmonics,
    )


def _harmonic_eta_min(curve, f, h_unit, harmonics, e, snr, span):
    """The h0 threshold and eta_min per period, from every harmonic kept.

    Returns the curve's h0 at f (circular) or the circular-equivalent threshold
    eta_min x h_unit (eccentric), and eta_min (NaN where no harmonic is in band).
    """
    if e == 0.0:  # harmonics == [2]: the circular comparison, kept bit for bit
        h_thr = curve.h0_threshold(f, snr=snr, span=span)
        return h_thr, h_thr / h_unit
    ratio = ecc.harmonic_amplitude_ratio(harmonics, e)
    f_n = (harmonics[:, None] / 2.0) * f[None, :]
    h_n = curve.h0_threshold(f_n, snr=snr, span=span)
    eta_n = h_n / (ratio[:, None] * h_unit[None, :])  # (n_harmonics, nP); NaN off band
    in_band = ~np.isnan(eta_n)
    any_band = in_band.any(axis=0)
    eta_best = np.min(np.where(in_band, eta_n, np.inf), axis=0)
    if curve.is_limit:
        eta_min = eta_best
    else:  # S/N^2 adds over harmonics; scaled by the best one to keep the sum in range
        rel = np.where(in_band, eta_best[None, :] / np.where(in_band, eta_n, 1.0), 0.0)
        eta_min = eta_best / np.sqrt(np.sum(rel**2, axis=0))
    eta_min = np.where(any_band, eta_min, np.nan)
    return eta_min * h_unit, eta_min
