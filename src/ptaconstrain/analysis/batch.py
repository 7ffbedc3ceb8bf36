"""Bounds on the companions of many hosts against one sensitivity.

Each host is bounded exactly as one host is
(:func:`~ptaconstrain.analysis.exclusion.exclusion_map`, or
:func:`~ptaconstrain.analysis.probability.exclusion_probability` when the host
carries a mass, distance or velocity error), in one process, so the start-up
and the loading of the sensitivity are paid once for the whole table.
"""

from dataclasses import dataclass, replace

import numpy as np
from astropy import units as u

from ..errors import InputError, PtaconstrainError
from .exclusion import exclusion_map
from .probability import DEFAULT_CREDIBILITY, ProbabilityMap, exclusion_probability

__all__ = ["HostBounds", "bound_hosts", "has_errors"]


def has_errors(host):
    """True when ``host`` carries a mass, distance or velocity error (it is sampled).

    Parameters
    ----------
    host : Host

    Returns
    -------
    bool

    Examples
    --------
    >>> from ptaconstrain.binary import Host
    >>> has_errors(Host("A", 2e10, 50)), has_errors(Host("B", 2e10, 50, mass_err_dex=0.2))
    (False, True)
    """
    return (
        host.mass_err_dex is not None
        or host.distance_err is not None
        or host.velocity_err is not None
    )


@dataclass(frozen=True, eq=False)
class HostBounds:
    """Result of :func:`bound_hosts`: one map per host, in the order given.

    Attributes
    ----------
    results : tuple of ExclusionMap or ProbabilityMap
        A ProbabilityMap for each host with errors, else an ExclusionMap.
    credibility : tuple of float
        Levels of the credible bounds of the probability maps.
    seed : int or None
        The seed from which each sampled host's own seed was derived.
    failed : tuple of (Host, str)
        Hosts skipped with ``on_bad="skip"`` and why.

    Examples
    --------
    Made by :func:`bound_hosts` (see its example); ``len(bounds)`` is the number of
    hosts bounded, ``bounds.to_table()`` the summary, ``bounds.plot()`` the overview.

    >>> HostBounds((), (0.95,), 1)
    HostBounds(0 hosts, 0 with a bound; no bound)
    """

    results: tuple
    credibility: tuple
    seed: object
    failed: tuple = ()

    def __len__(self):
        return len(self.results)

    @property
    def maps(self):
        """The best-fit ExclusionMap of every host."""
        return [r.deterministic if isinstance(r, ProbabilityMap) else r for r in self.results]

    @property
    def is_limit(self):
        """True when the bounds are exclusions (an upper limit), False for forecasts."""
        return self.maps[0].is_limit

    def tightest(self):
        """Per host: (period [yr], q) of the tightest best-fit bound; NaN where none.

        Returns
        -------
        (Quantity (n,) [yr], ndarray (n,))
        """
        best = [m.tightest() for m in self.maps]
        period = u.Quantity([np.nan * u.yr if b is None else b[0] for b in best]).to(u.yr)
        return period, np.array([np.nan if b is None else b[1] for b in best])

    def credible(self, level):
        """Per host: (period [yr], q) of the tightest bound at probability >= ``level``.

        NaN for hosts without errors (no probability map) and where nothing is
        excluded at that level.
        """
        out = [r.tightest(level) if isinstance(r, ProbabilityMap) else None for r in self.results]
        period = u.Quantity([np.nan * u.yr if b is None else b[0] for b in out]).to(u.yr)
        return period, np.array([np.nan if b is None else b[1] for b in out])

    def to_table(self, meta=None):
        """One row per host (:func:`ptaconstrain.report.batch_tables.summary_table`)."""
        from ..report.batch_tables import summary_table

        return summary_table(self, meta=meta)

    def plot(self):
        """The overview figure (:func:`ptaconstrain.report.batch_plot.batch_overview_figure`)."""
        from ..report.batch_plot import batch_overview_figure

        return batch_overview_figure(self)

    def __repr__(self):
        if not self.results:
            return "HostBounds(0 hosts, 0 with a bound; no bound)"
        _, q = self.tightest()
        bound = np.isfinite(q)
        text = f"median tightest q {np.median(q[bound]):.3g}" if bound.any() else "no bound"
        return f"HostBounds({len(self)} hosts, {int(bound.sum())} with a bound; {text})"


def bound_hosts(
    hosts,
    sensitivity,
    mass_ratio=None,
    period=None,
    snr=5.0,
    span=None,
    *,
    samples=100_000,
    seed=None,
    credibility=DEFAULT_CREDIBILITY,
    curve_for=None,
    on_bad="error",
    on_result=None,
    keep_samples=True,
    orientation=None,
    eccentricity=0.0,
    progress=None,
):
    """Bound the companions of every host in ``hosts`` against one sensitivity.

    Parameters
    ----------
    hosts : sequence of Host
    sensitivity : StrainCurve or PositionalSensitivity
        A positional sensitivity is asked for its curve at each host's position.
    mass_ratio : array, optional
        As :func:`~ptaconstrain.analysis.exclusion.exclusion_map`.
    period : Quantity [time], optional
        Common period grid; default each host's curve band (the same for a
        plain curve).
    snr : float
        S/N threshold (noise budgets).
    span : Quantity [time], optional
        Observing span; default the curve's.
    samples : int
        Monte-Carlo samples per host with errors.
    seed : int, optional
        Base seed; host i gets the i-th seed spawned from it
        (:class:`numpy.random.SeedSequence`), so each host is repeatable on
        its own.  Drawn afresh (and recorded) when omitted.
    credibility : sequence of float
        Levels of the credible bounds.
    curve_for : callable, optional
        ``curve_for(host) -> StrainCurve``, overriding how the sensitivity is
        asked for a host's curve (e.g. to pass an S/N to a pulsar array).
    orientation : bool, optional
        Passed to :func:`~ptaconstrain.analysis.probability.exclusion_probability`
        (False when the curve is already at a known inclination).
    eccentricity : float
        Orbital eccentricity of every companion orbit (as for one host).
    on_bad : {"error", "skip"}
        A host that cannot be bounded (an input error, e.g. no sky-map value
        at its position) stops the run, or is skipped and recorded.
    on_result : callable, optional
        Called as ``on_result(i, result)`` as soon as host i is bounded (e.g. to
        write its table and figure while the next one is computed).
    keep_samples : bool
        Keep each probability map's host samples; with False they are dropped
        after ``on_result`` (a table of many hosts then needs the memory of one).
    progress : callable, optional
        Called with 1 after each host.

    Returns
    -------
    HostBounds

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> from ptaconstrain.binary import Host
    >>> from ptaconstrain.sensitivity.curve import StrainCurve
    >>> f = np.geomspace(2e-9, 3e-7, 60) * u.Hz
    >>> limit = StrainCurve(f, 1e-14 * (f / (1e-8 * u.Hz)).value, "h0_limit",
    ...                     {"confidence": 0.95, "span": "15 yr"})  # an invented limit
    >>> b = bound_hosts([Host("A", 2e10, 50), Host("B", 5e9, 30)], limit)
    >>> np.round(b.tightest()[1], 4)
    array([0.0072, 0.0472])
    """
    if seed is None:
        seed = int(np.random.SeedSequence().entropy % (2**63))
    seeds = [int(s.generate_state(1)[0]) for s in np.random.SeedSequence(seed).spawn(len(hosts))]
    levels = tuple(sorted(credibility))
    if on_bad not in ("error", "skip"):
        raise InputError(f"on_bad: must be 'error' or 'skip', got {on_bad!r}")
    results, failed = [], []
    for i, (host, host_seed) in enumerate(zip(hosts, seeds, strict=True)):  # a map per host
        try:
            curve = sensitivity if curve_for is None else curve_for(host)
            if has_errors(host):
                result = exclusion_probability(
                    host,
                    curve,
                    mass_ratio,
                    period,
                    samples=samples,
                    seed=host_seed,
                    credibility=levels,
                    snr=snr,
                    span=span,
                    orientation=orientation,
                    eccentricity=eccentricity,
                )
            else:
                result = exclusion_map(
                    host, curve, mass_ratio, period, snr=snr, span=span, eccentricity=eccentricity
                )
        except PtaconstrainError as err:
            if on_bad == "error":
                raise InputError(
                    f"host {host.name!r}: {err}; fix it, or skip such hosts with --on-bad skip"
                ) from err
            failed.append((host, str(err)))
            if progress is not None:
                progress(1)
            continue
        if on_result is not None:
            on_result(i, result)
        if not keep_samples and isinstance(result, ProbabilityMap):
            result = replace(result, samples=None)
        results.append(result)
        if progress is not None:
            progress(1)
    if not results:
        first = f"; first: {failed[0][0].name!r}: {failed[0][1]}" if failed else ""
        raise InputError(f"no host could be bounded ({len(failed)} skipped{first})")
    return HostBounds(tuple(results), levels, seed, tuple(failed))
