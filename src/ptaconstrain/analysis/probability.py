"""Exclusion probability over the mass-ratio x period plane from host uncertainties.

A black-hole mass is known to 0.1-0.3 dex and a distance to 5-20 %, and the
two are correlated when the mass is dynamical (it scales linearly with the
distance adopted for it).  This module turns Monte-Carlo samples of the host
(:func:`ptaconstrain.analysis.sampling.sample_host`) into the probability that each (q, P)
cell is excluded -- or, for a noise budget, detectable -- and into credible
bounds on the mass ratio (:func:`exclusion_probability`).

Algorithm.  The strain factorises as h0 = eta(q) S f^(2/3)
(:func:`ptaconstrain.binary.waveform.strain_prefactor`); every sample-to-sample
variation (mass, distance and, for a noise budget, the orientation factor
sqrt(g)) is in the scalar S.  Relative to the best-fit host, sample s has
u_s = S_s sqrt(g_s) / S_0, and cell (q, P) is excluded in sample s iff
ln u_s > ln eta_min(P) - ln eta(q), with eta_min of the deterministic
:class:`~ptaconstrain.analysis.exclusion.ExclusionMap`.  Sorting ln u once and answering
every cell with a binary search (the exact equivalent of ``np.searchsorted``,
:meth:`~ptaconstrain.analysis.isco_counts.RankedValues.count_at_most`) costs
O(N log N + cells log N) instead of the O(N x cells) of a direct comparison.  The credible bound at
credibility c follows in closed form: with u_c the value that a fraction c
of the samples exceed, eta_c = eta_min / u_c and q_c = eta^-1(eta_c)
(:func:`ptaconstrain.binary.waveform.mass_ratio_from_eta`).

Above the ISCO.  f_ISCO depends on the sampled mass only, so whether a cell
is above the ISCO in a sample depends on its period, not on q.  A cell above
the ISCO in a sample counts as *not excluded* in that sample (no such binary
exists, so the PTA rules nothing out there).  This is handled exactly: for
each period the samples above the ISCO are a known subset, and the number of
them above each cell's threshold is removed from the count, by the offline
dominance count of :class:`~ptaconstrain.analysis.isco_counts.IscoCounts`
(each sample's ISCO grid count laid out in ln u order through the one integer
sort of :class:`~ptaconstrain.analysis.isco_counts.RankedValues`, a table per
block of ranks; most cells are decided by a column's range of mixed ranks
alone).  A column whose every
sample is above the ISCO, or that lies outside the curve's band, has
probability NaN, as in the deterministic map.  The chirping flag does not
change ``excluded`` in the deterministic map and does not enter here either.
"""

import warnings
from dataclasses import dataclass, replace
from functools import cached_property

import numpy as np
from astropy import units as u

from .._inputs import check_memory
from ..binary import eccentric as ecc
from ..binary import waveform as wf
from ..errors import InputError, PtaconstrainWarning
from ..sensitivity.curve import FromCurve
from .exclusion import ExclusionMap, exclusion_map, sensitivity_for
from .isco_counts import IscoCounts, RankedValues
from .sampling import HostSamples, resample_host, sample_host

__all__ = [
    "ProbabilityMap",
    "exclusion_probability",
    "DEFAULT_CREDIBILITY",
]

DEFAULT_CREDIBILITY = (0.5, 0.9, 0.95)


@dataclass(frozen=True, eq=False)
class ProbabilityMap(FromCurve):
    """Result of :func:`exclusion_probability`; 2-D arrays are indexed [q, P].

    Attributes
    ----------
    mass_ratio : ndarray (nq,)
        Mass ratios q = m2/m1 of the grid.
    period : Quantity (nP,) [yr]
        Orbital periods, observer frame.
    frequency : Quantity (nP,) [Hz]
        GW frequency f = 2/P.
    probability : ndarray (nq, nP)
        Fraction of samples in which the cell is excluded (upper limit) or
        detectable (noise budget); NaN outside the curve's band and where
        every sample is above the ISCO.
    credibility : tuple of float
        Levels of the credible bounds.
    max_mass_ratio : dict {credibility: ndarray (nP,)}
        q_c(P): mass ratios above q_c are excluded with probability >= c,
        those below are not.  1 where even q = 1 is not excluded with
        that probability; NaN where the probability is NaN.
    above_isco_fraction : ndarray (nP,)
        Fraction of samples for which the period is above the ISCO.
    deterministic : ExclusionMap
        The best-fit map, for comparison.
    samples : HostSamples
        The draws used (:func:`ptaconstrain.analysis.sampling.sample_host`).
    seed : int
        Seed of the draws.
    n_samples : int
        Number of samples.
    orientation : bool
        Whether inclination was sampled (noise budgets).

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit")  # invented
    >>> from ptaconstrain import Host, exclusion_probability
    >>> host = Host("Invented galaxy", 2e10, 100, mass_err_dex=0.2, distance_err=10)
    >>> prob = exclusion_probability(host, curve, samples=2000, seed=1)
    >>> prob.probability.shape, prob.credibility
    ((300, 300), (0.5, 0.9, 0.95))
    """

    mass_ratio: np.ndarray
    period: u.Quantity
    frequency: u.Quantity
    probability: np.ndarray
    credibility: tuple
    max_mass_ratio: dict
    above_isco_fraction: np.ndarray
    deterministic: ExclusionMap
    samples: HostSamples
    seed: int
    n_samples: int
    orientation: bool

    @property
    def host(self):
        """The host (of the best-fit map)."""
        return self.deterministic.host

    @property
    def curve(self):
        """The sensitivity curve (of the best-fit map)."""
        return self.deterministic.curve

    @property
    def label(self):
        """e.g. '95% upper limit' or 'forecast, S/N >= 5'."""
        return self.deterministic.label

    @cached_property
    def summary(self):
        """:meth:`HostSamples.summary`: 16/50/84 % of mass [solMass], distance [Mpc], ...

        Computed when first asked for (percentiles of every sample cost more than the
        map), then kept.
        """
        return self.samples.summary()

    def __repr__(self):
        top = max(self.credibility)
        best = self.tightest(top)
        bound = (
            "nothing " + self.verb
            if best is None
            else f"q > {best[1]:.3g} {self.verb} at P = {best[0].to_value(u.yr):.3g} yr"
        )
        return (
            f"ProbabilityMap({self.host.name!r}, {self.label}, grid {self.mass_ratio.size} q "
            f"x {self.period.size} P, {self.n_samples} samples, seed {self.seed};\n"
            f"  tightest at probability >= {top:g}: {bound})"
        )

    def to_table(self, meta=None):
        """One row per period: best-fit bound plus one credible bound per credibility.

        Calls :func:`ptaconstrain.report.tables.exclusion_table` on the best-fit
        map with this map; the columns are those of :meth:`ExclusionMap.to_table`
        plus ``max_mass_ratio_<credibility>`` per credibility level.

        Parameters
        ----------
        meta : dict, optional
            Provenance to store in the table meta.

        Returns
        -------
        astropy.table.QTable
        """
        from ..report.tables import exclusion_table

        return exclusion_table(self.deterministic, meta=meta, prob_map=self)

    def plot(self, ax=None):
        """The best-fit map with the credible-bound contours drawn over it.

        Parameters
        ----------
        ax : matplotlib Axes, optional
            Draw into this Axes; default a new Figure.

        Returns
        -------
        matplotlib.figure.Figure
        """
        from ..report.figures import exclusion_figure

        return exclusion_figure(self.deterministic, ax=ax, prob_map=self)

    def tightest(self, credibility):
        """Period of the smallest credible ``max_mass_ratio`` and that ratio, or None.

        Periods whose credible bound lies in the chirping region are skipped,
        as in :meth:`ptaconstrain.analysis.exclusion.ExclusionMap.tightest`.

        Parameters
        ----------
        credibility : float, one of ``self.credibility``

        Returns
        -------
        (Quantity [yr], float) or None when nothing is excluded at that credibility.
        """
        qmax = self.max_mass_ratio[_credibility_key(self.max_mass_ratio, credibility)]
        # as ExclusionMap.tightest: skip periods whose bound lies in the chirping region
        chirp = np.nan_to_num(self.deterministic.chirp_mass_ratio, nan=np.inf) < qmax
        qmax = np.where(np.isnan(qmax) | chirp, np.inf, qmax)
        i = int(np.argmin(qmax))
        if not np.isfinite(qmax[i]) or qmax[i] >= 1.0:
            return None
        return self.period[i], float(qmax[i])

    def describe(self):
        """Provenance as a flat dict of strings (for table/figure meta)."""
        out = {
            "probability_samples": str(self.n_samples),
            "probability_seed": str(self.seed),
            "probability_credibility": ", ".join(f"{c:g}" for c in self.credibility),
            "probability_orientation": (
                "cos i uniform in [-1, 1], psi uniform in [0, pi)"
                if self.orientation
                else "not sampled"
            ),
        }
        for name, unit in (("mass", u.Msun), ("distance", u.Mpc)):
            lo, med, hi = self.summary[name].to_value(unit)
            out[f"sampled_{name}"] = f"{med:.4g} (-{med - lo:.3g}/+{hi - med:.3g}) {unit}"
        return out


def _credibility_key(mapping, credibility):
    for key in mapping:
        if np.isclose(key, credibility, rtol=0, atol=1e-12):
            return key
    raise InputError(
        f"credibility: {credibility!r} was not computed; use one of "
        f"{', '.join(f'{c:g}' for c in mapping)}"
    )


def _check_size(samples, det):
    """Refuse a map whose samples and grid would exceed the memory limit.

    The samples hold about 24 float64 values each (mass, distance, scales, sort
    order, ISCO tables); the (q, P) grid about 8 arrays of float64.
    """
    try:
        n = int(samples)
    except (TypeError, ValueError):
        return  # sample_host names the problem
    cells = det.mass_ratio.size * det.frequency.size
    check_memory(
        24 * 8.0 * n + 8 * 8.0 * cells,
        f"the probability map ({n:,} samples, {det.mass_ratio.size} x {det.frequency.size} grid)",
        "lower --samples (or --grid)",
    )


def _check_credibility(credibility):
    levels = tuple(float(c) for c in np.atleast_1d(credibility))
    if not levels or not all(np.isfinite(c) and 0.0 < c <= 1.0 for c in levels):
        raise InputError(
            f"credibility: each level must be in (0, 1], e.g. 0.95, got {credibility!r}"
        )
    return levels


def _min_count(c, n):
    """Smallest k with k / n >= c in floating point (so k/n >= c <=> count >= k)."""
    k = int(np.ceil(c * n))
    while k > 1 and (k - 1) / n >= c:
        k -= 1
    while k / n < c:
        k += 1
    return k


def exclusion_probability(
    host,
    curve,
    mass_ratio=None,
    period=None,
    samples=100_000,
    seed=None,
    credibility=DEFAULT_CREDIBILITY,
    snr=5.0,
    span=None,
    *,
    orientation=None,
    eccentricity=0.0,
    mass_samples=None,
):
    """Probability that each companion (q, P) of ``host`` is excluded (or detectable).

    Parameters
    ----------
    host : Host
        Its mass error (dex), distance error, peculiar-velocity error and
        reference distance of the mass are propagated
        (:func:`ptaconstrain.analysis.sampling.sample_host`, which warns when
        the host has no mass or distance error).
    curve : StrainCurve, or an object with ``curve_at(coord)``
        As in :func:`ptaconstrain.analysis.exclusion.exclusion_map`.
    mass_ratio : array, optional
        Default as :func:`ptaconstrain.analysis.exclusion.exclusion_map`.
    period : Quantity [time], optional
        Default as :func:`ptaconstrain.analysis.exclusion.exclusion_map`.
    samples : int or HostSamples
        Number of Monte-Carlo samples, or samples already drawn.
    seed : int, optional
        Seed of ``numpy.random.default_rng``; recorded in the result.  A fresh
        one is drawn (and recorded) when omitted.  Ignored when ``samples``
        is a HostSamples.
    credibility : float or sequence of float in (0, 1]
        Levels of the credible mass-ratio bounds.
    snr : float
        S/N threshold (noise budgets).
    span : Quantity [time], optional
        Observing span; default the curve's.
    orientation : bool, optional
        Sample the inclination; default True for noise budgets and False for
        upper limits (an h0 limit already bounds h0 itself).
    mass_samples : MassSamples, optional
        Posterior samples of the mass (and distance)
        (:class:`ptaconstrain.binary.mass_samples.MassSamples`): the host samples are
        drawn from them (:func:`ptaconstrain.analysis.sampling.resample_host`)
        instead of the host's parametric errors.
    eccentricity : float in [0, 0.95]
        Orbital eccentricity, as in :func:`~ptaconstrain.analysis.exclusion.exclusion_map`;
        each sample's ISCO test uses its pericentre (f_ISCO (1 - e)^(3/2)), and the
        orientation factor of the circular quadrupole stands in for every harmonic.

    Returns
    -------
    ProbabilityMap

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit")  # invented
    >>> from ptaconstrain import Host
    >>> host = Host("Invented galaxy", 2e10, 100, mass_err_dex=0.2, distance_err=10)
    >>> prob = exclusion_probability(host, curve, samples=2000, seed=1)
    >>> period, q95 = prob.tightest(0.95)     # q above q95 excluded with probability >= 0.95
    >>> period_best, q_best = prob.deterministic.tightest()
    >>> bool(q95 > q_best)                     # the errors loosen the bound
    True
    """
    levels = _check_credibility(credibility)
    curve = sensitivity_for(host, curve)
    det = exclusion_map(
        host, curve, mass_ratio, period, snr=snr, span=span, eccentricity=eccentricity, warn=False
    )
    if orientation is None:
        orientation = not det.is_limit
    elif not orientation and not det.is_limit:
        warnings.warn(
            "forecasts use the orientation-averaged S/N, as orientation sampling was turned off",
            PtaconstrainWarning,
            stacklevel=2,
        )
    if not isinstance(samples, HostSamples):
        _check_size(samples, det)
    if isinstance(samples, HostSamples):
        draws = samples
        if orientation and draws.orientation_factor is None:
            raise InputError("samples: these were drawn without orientation; redraw with it")
    elif mass_samples is not None:
        draws = resample_host(host, mass_samples, samples, seed=seed, orientation=bool(orientation))
    else:
        draws = sample_host(host, samples, seed=seed, orientation=bool(orientation))
    if not orientation:
        draws = replace(draws, orientation_factor=None)

    s0 = wf.strain_prefactor(host.mass, host.distance, host.redshift)
    log_u = draws.log_scale(s0)
    ranked = RankedValues(log_u)
    n = draws.n

    f = det.frequency.to_value(u.Hz)
    # no binary whose pericentre lies inside the ISCO; a factor 1 at e = 0
    f_isco = draws.isco_frequency.to_value(u.Hz)
    if det.eccentricity:
        f_isco = f_isco * ecc.pericentre_isco_factor(det.eccentricity)
    log_eta = np.log(wf.symmetric_mass_ratio(det.mass_ratio))
    with np.errstate(invalid="ignore"):
        log_eta_min = np.log(det.eta_min)
        thr = log_eta_min[None, :] - log_eta[:, None]
    x = ranked.count_at_most(thr)  # first rank with ln u > threshold
    isco = IscoCounts(f, f_isco, ranked.order, scratch=ranked.release_keys())
    count = n - x
    ks = {c: _min_count(c, n) for c in levels}
    # rank of the k-th largest ln u among the samples below the ISCO, per column; only
    # the columns where some but not all samples are above the ISCO need the counts
    partial = np.flatnonzero((isco.n_above > 0) & (isco.n_above < n))
    xk = {c: np.full(f.size, n - k) for c, k in ks.items()}
    if partial.size:
        if partial.size == f.size:  # every column: no copies
            count -= isco.above(np.arange(f.size)[None, :], x)
        else:
            count[:, partial] -= isco.above(partial[None, :], x[:, partial])
        # every credibility level in one call
        kth = isco.kth_largest_rank(
            np.tile(partial, len(ks)), np.repeat(list(ks.values()), partial.size)
        )
        for c, rank in zip(ks, kth.reshape(len(ks), partial.size), strict=True):
            xk[c][partial] = rank
    nothing = np.isnan(det.eta_min) | (isco.n_above == n)
    prob = count / n
    prob[:, nothing] = np.nan

    n_exist = n - isco.n_above
    qmax = {}
    for c, k in ks.items():
        lk = ranked.at_rank(np.clip(xk[c], 0, n - 1))
        with np.errstate(invalid="ignore", over="ignore"):
            eta_c = det.eta_min * np.exp(-lk)
            q_c = np.where(eta_c >= 0.25, 1.0, wf.mass_ratio_from_eta(eta_c))
        q_c = np.where(n_exist < k, 1.0, q_c)
        qmax[c] = np.where(nothing, np.nan, q_c)

    return ProbabilityMap(
        mass_ratio=det.mass_ratio,
        period=det.period,
        frequency=det.frequency,
        probability=prob,
        credibility=levels,
        max_mass_ratio=qmax,
        above_isco_fraction=isco.n_above / n,
        deterministic=det,
        samples=draws,
        seed=draws.seed,
        n_samples=n,
        orientation=bool(orientation),
    )
