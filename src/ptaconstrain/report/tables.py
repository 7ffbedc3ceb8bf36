"""Tables and text summaries of exclusion maps."""

import numpy as np
from astropy import units as u

__all__ = ["exclusion_table", "summary_lines", "credible_summary_lines", "format_quantity"]


def format_quantity(q, digits=3):
    """'7.94 yr'-style text with ``digits`` significant figures.

    Parameters
    ----------
    q : Quantity
    digits : int
        Significant figures.

    Returns
    -------
    str

    Examples
    --------
    >>> from astropy import units as u
    >>> format_quantity(7.9372 * u.yr)
    '7.94 yr'
    """
    unit = q.unit.to_string()
    return f"{q.value:.{digits}g} {unit}".strip()


def exclusion_table(result, meta=None, prob_map=None):
    """One row per period: the bound on companions of the host.

    Columns: ``period`` [yr], ``f_gw`` [Hz], ``h0_threshold`` (the curve's
    h0 there), ``max_mass_ratio`` (largest q not excluded/detectable; NaN
    where the curve says nothing or above ISCO), ``companion_mass``
    [solMass] (m2 at that q), ``separation`` [pc], ``separation_rg``
    [G M / c^2], ``chirp_mass_ratio`` (smallest q that chirps within the
    span; NaN if none), ``constrained`` (inside the curve's band and below
    f_ISCO).

    Parameters
    ----------
    result : ExclusionMap
    meta : dict, optional
        Provenance to store in the table meta.
    prob_map : ProbabilityMap, optional
        Adds one ``max_mass_ratio_<credibility>`` column per credibility and
        the sampling set-up to the meta.

    Returns
    -------
    astropy.table.QTable

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain import Host, exclusion_map
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit",
    ...                     meta={"confidence": 0.95, "span": "15 yr"})     # invented
    >>> result = exclusion_map(Host("Invented galaxy", 2e10, 100), curve)
    >>> table = exclusion_table(result)
    >>> table["period"].unit, table["companion_mass"].unit
    (Unit("yr"), Unit("solMass"))
    >>> len(table) == result.period.size
    True
    """
    from astropy.table import QTable

    t = QTable()
    t["period"] = result.period.to(u.yr)
    t["f_gw"] = result.frequency.to(u.Hz)
    t["h0_threshold"] = result.h0_threshold
    t["max_mass_ratio"] = result.max_mass_ratio
    t["companion_mass"] = result.companion_mass.to(u.Msun)
    t["separation"] = result.separation.to(u.pc)
    t["separation_rg"] = result.separation_rg
    t["chirp_mass_ratio"] = result.chirp_mass_ratio
    from ..analysis.readouts import angular_separation, merger_time

    t["angular_separation"] = angular_separation(result).to(u.uas)
    t["merger_time"] = merger_time(result).to(u.yr)
    t["constrained"] = np.isfinite(result.max_mass_ratio)
    if hasattr(result.curve, "source_at"):  # several limits: which one bounds each period
        t["curve_source"] = result.curve.source_at(result.frequency)
    descriptions = {
        "period": "orbital period, observer frame",
        "f_gw": "GW frequency 2/P, observer frame",
        "h0_threshold": f"strain amplitude above which a binary is {result.verb}",
        "max_mass_ratio": f"largest mass ratio q = m2/m1 not {result.verb} "
        "(1: none; NaN: not constrained or above ISCO)",
        "companion_mass": "companion mass m2 = M q/(1+q) at max_mass_ratio",
        "separation": "binary separation (Kepler's third law)",
        "separation_rg": "separation in gravitational radii G M / c^2",
        "chirp_mass_ratio": "smallest q whose frequency drifts by > 1/T over the span "
        "(monochromatic model invalid above it; NaN: none)",
        "angular_separation": "binary separation / angular-diameter distance D_L/(1+z)^2",
        "merger_time": "rest-frame time to coalescence at max_mass_ratio (Peters 1964)",
        "constrained": "inside the curve's frequency range and below f_ISCO",
        "curve_source": "the limit that is tightest at f_gw (and so sets this bound)",
    }
    if prob_map is not None:
        from .probability_plot import probability_columns, probability_descriptions

        for name, col in probability_columns(prob_map).items():
            t[name] = col
        descriptions.update(probability_descriptions(prob_map))
    for name, text in descriptions.items():
        if name in t.colnames:
            t[name].info.description = text
    t.meta["statement"] = (
        "EXCLUSION from an upper limit"
        if result.is_limit
        else "FORECAST from a noise budget (detectable, not excluded)"
    )
    t.meta["sensitivity"] = result.label
    t.meta["sky"] = result.curve.sky
    t.meta["observing_span"] = format_quantity(result.span.to(u.yr))
    t.meta["total_mass"] = format_quantity(result.host.mass.to(u.Msun))
    t.meta["luminosity_distance"] = format_quantity(result.host.distance.to(u.Mpc))
    t.meta["f_isco"] = format_quantity(result.isco_frequency.to(u.Hz))
    from .statements import derived_meta

    t.meta.update(derived_meta(result.host))
    if "inclination" in result.curve.meta:
        t.meta["inclination"] = (
            f"{result.curve.meta['inclination']} (polarisation-averaged; "
            "S/N^2 factor "
            f"{float(result.curve.meta['inclination_factor']):.4g} of "
            "the orientation average)"
        )
    t.meta["eccentricity"] = f"{result.eccentricity:g}"
    if result.harmonics is not None:
        t.meta["harmonics"] = (
            f"n = 1-{int(result.harmonics.max())} of the orbital frequency "
            "(99.9% of the power; Peters & Mathews 1963)"
            if result.eccentricity > 0
            else "n = 2 (circular quadrupole)"
        )
    if prob_map is not None:
        t.meta.update(prob_map.describe())
    if meta:
        t.meta.update(meta)
    return t


def summary_lines(result):
    """Two lines: the tightest bound and the lightest companion excluded.

    When nothing is excluded (detectable) the second line says why, from the
    strain comparison itself: the h0 of an equal-mass binary stays below the
    curve; or it exceeds the curve but only where the binary chirps within
    the span (so no CW bound is quoted); or every period of the grid in the
    curve's band lies above ISCO (no circular binary of this mass has them).

    Returns
    -------
    list of str, e.g.
    ``["Host A: q > 0.021 ruled out at P = 7.9 yr (95% upper limit)", ...]``

    Parameters
    ----------
    result : ExclusionMap

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain import Host, exclusion_map
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit",
    ...                     meta={"confidence": 0.95, "span": "15 yr"})     # invented
    >>> result = exclusion_map(Host("Invented galaxy", 2e10, 100), curve)
    >>> for line in summary_lines(result):
    ...     print(line)
    Invented galaxy: q > ... ruled out at P = ... yr (95% upper limit)
    Invented galaxy: companions above ... solMass ruled out for some period; ...
    """
    host = result.host.name
    best = result.tightest()
    if result.is_limit:
        phrase, tag = "ruled out", result.label
    else:
        phrase, tag = "would be detectable", f"{result.label}, not an exclusion"
    if result.eccentricity > 0:
        tag += f"; {result.orbit}"
    if best is None:
        return [
            f"{host}: no companion {phrase} at any period on the grid ({tag})",
            _why_no_bound(result),
        ]
    period, qmax = best
    m2 = result.smallest_excluded_companion_mass
    cut = (result.max_mass_ratio < 1.0) & result.bound_is_monochromatic
    p = result.period.to_value(u.yr)[cut]
    lines = [
        f"{host}: q > {qmax:.3g} {phrase} at P = {period.to_value(u.yr):.3g} yr ({tag})",
        f"{host}: companions above {m2.to_value(u.Msun):.3g} solMass {phrase} for some "
        f"period; some q {phrase} for P = {p.min():.3g}-{p.max():.3g} yr",
    ]
    return lines


def _why_no_bound(result):
    """The strain comparison behind an empty bound, as one line."""
    from ..binary.waveform import orbital_period, strain_amplitude

    host = result.host
    f = result.frequency
    threshold = np.asarray(getattr(result.h0_threshold, "value", result.h0_threshold), dtype=float)
    in_band = np.isfinite(threshold)
    below_isco = f <= result.isco_frequency
    constrained = in_band & below_isco
    what = "the limit" if result.is_limit else "the detection threshold"
    mass = f"M = {format_quantity(host.mass.to(u.Msun))}"
    if not constrained.any():
        if in_band.any():
            p_isco = orbital_period(result.isco_frequency).to(u.yr)
            return (
                f"{host.name}: no circular binary of this mass has these periods: every "
                f"period of the grid in the curve's band lies above ISCO (P < "
                f"{format_quantity(p_isco)} for {mass}), so no bound is quoted"
            )
        band = orbital_period(result.curve.frequency[[-1, 0]]).to_value(u.yr)
        return (
            f"{host.name}: no period of the grid lies in the curve's band (P = "
            f"{band[0]:.3g}-{band[1]:.3g} yr), so no bound is quoted"
        )
    h0_equal = strain_amplitude(host.mass, 1.0, f[constrained], host.distance, host.redshift)
    ratio = h0_equal.to_value(u.dimensionless_unscaled) / threshold[constrained]
    top = float(ratio.max())
    if top > 1.0:
        # tightest() is None although q = 1 exceeds the curve: every such period chirps
        return (
            f"{host.name}: h0 of an equal-mass binary exceeds {what} by up to a factor "
            f"{top:.3g}, but every such period chirps within the "
            f"{format_quantity(result.span.to(u.yr))} span (the monochromatic CW model "
            "does not hold), so no CW bound is quoted"
        )
    f_nhz = f[constrained].to_value(u.nHz)
    return (
        f"{host.name}: h0 of an equal-mass binary stays below {what} (at most "
        f"{top:.3g} of it) over {f_nhz.min():.3g}-{f_nhz.max():.3g} nHz ({mass}, D_L = "
        f"{format_quantity(host.distance.to(u.Mpc))})"
    )


def credible_summary_lines(prob_map):
    """One line per credibility: the tightest credible bound with the host's errors.

    Parameters
    ----------
    prob_map : ProbabilityMap

    Returns
    -------
    list of str
        e.g. "Host A: q > 0.046 ruled out at P = 4.8 yr with probability >= 0.95
        (mass, distance errors; 100000 samples, seed 1)".

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain import Host, exclusion_probability
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit",
    ...                     meta={"confidence": 0.95, "span": "15 yr"})     # invented
    >>> host = Host("Invented galaxy", 2e10, 100, mass_err_dex=0.2, distance_err=10)
    >>> prob = exclusion_probability(host, curve, samples=2000, seed=1)
    >>> print(credible_summary_lines(prob)[-1])
    Invented galaxy: q > ... ruled out at P = ... yr with probability >= 0.95 (...)
    """
    phrase = "ruled out" if prob_map.is_limit else "detectable"
    name = prob_map.host.name
    lines = []
    for c in prob_map.credibility:
        best = prob_map.tightest(c)
        tail = f"with probability >= {c:g} ({prob_map.n_samples} samples, seed {prob_map.seed})"
        if best is None:
            lines.append(f"{name}: no companion {phrase} {tail}")
        else:
            lines.append(
                f"{name}: q > {best[1]:.3g} {phrase} at P = {best[0].to_value(u.yr):.3g} yr {tail}"
            )
    return lines
