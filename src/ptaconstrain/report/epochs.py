"""Table and figure of a forecast over time."""

import numpy as np
from astropy import units as u

__all__ = ["epoch_table", "epoch_figure"]


def epoch_table(result, meta=None, target_q=None):
    """One row per epoch: added years, span, tightest detectable q and its period.

    Columns: ``added_years`` [yr], ``span`` [yr], ``tightest_mass_ratio``,
    ``tightest_period`` [yr], ``companion_mass`` [solMass] (m2 at that q), and
    ``reaches_target`` when ``target_q`` is given.  Meta: the statement
    (FORECAST), the host, the TOA-rms factor and the first epoch reaching
    ``target_q``.

    Parameters
    ----------
    result : EpochForecast
    meta : dict, optional
        More provenance for the table meta.
    target_q : float, optional

    Returns
    -------
    astropy.table.QTable

    Examples
    --------
    >>> from astropy import units as u
    >>> from astropy.coordinates import SkyCoord
    >>> from ptaconstrain import Host, PulsarArray, forecast_over_time
    >>> arr = PulsarArray(["A", "B"], SkyCoord([10, 100], [-20, 30], unit="deg"),
    ...                   [0.2] * 2 * u.us, [14] * 2 * u.d, [55000] * 2, [57200] * 2)
    >>> r = forecast_over_time(Host("Invented", 1e10, 30, ra=150, dec=10), arr, [0, 10])
    >>> epoch_table(r, target_q=1.0).colnames[:3]
    ['added_years', 'span', 'tightest_mass_ratio']
    """
    from astropy.table import QTable

    t = QTable()
    t["added_years"] = result.years.to(u.yr)
    t["span"] = result.span.to(u.yr)
    q = result.tightest_mass_ratio
    t["tightest_mass_ratio"] = q
    t["tightest_period"] = result.tightest_period.to(u.yr)
    t["companion_mass"] = (result.host.mass * q / (1 + q)).to(u.Msun)
    t["added_years"].info.description = "years added to every pulsar's schedule"
    t["span"].info.description = "total observing span of the array"
    t["tightest_mass_ratio"].info.description = "smallest q detectable at some period (NaN: none)"
    t["tightest_period"].info.description = "orbital period of that bound"
    t["companion_mass"].info.description = "companion mass m2 = M q / (1 + q) at that q"
    t.meta["statement"] = "FORECAST from a noise budget (detectable, not excluded)"
    t.meta["host"] = result.host.name
    t.meta["sensitivity"] = result.maps[0].label
    t.meta["rms_factor"] = f"{result.rms_factor:g}"
    t.meta["eccentricity"] = f"{result.maps[0].eccentricity:g}"
    if target_q is not None:
        t["reaches_target"] = np.nan_to_num(q, nan=np.inf) <= target_q
        first = result.first_epoch(target_q)
        t.meta["target_mass_ratio"] = f"{target_q:g}"
        t.meta["first_epoch_reaching_target"] = (
            "not within these epochs" if first is None else f"+{first.to_value(u.yr):g} yr"
        )
    if meta:
        t.meta.update(meta)
    return t


def epoch_figure(result, ax=None, target_q=None):
    """Tightest detectable q against the array's observing span.

    Parameters
    ----------
    result : EpochForecast
    ax : matplotlib Axes, optional
    target_q : float, optional
        Drawn as a dotted line, with the first epoch reaching it marked.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> from astropy import units as u
    >>> from astropy.coordinates import SkyCoord
    >>> from ptaconstrain import Host, PulsarArray, forecast_over_time
    >>> arr = PulsarArray(["A", "B"], SkyCoord([10, 100], [-20, 30], unit="deg"),
    ...                   [0.2] * 2 * u.us, [14] * 2 * u.d, [55000] * 2, [57200] * 2)
    >>> r = forecast_over_time(Host("Invented", 1e10, 30, ra=150, dec=10), arr, [0, 10])
    >>> epoch_figure(r).axes[0].get_xlabel()
    'observing span of the array [yr]'
    """
    from matplotlib.figure import Figure

    from .style import unicode_log_ticks

    if ax is None:
        fig = Figure(figsize=(6.0, 4.2), layout="constrained")
        ax = fig.add_subplot()
    else:
        fig = ax.figure
    span = result.span.to_value(u.yr)
    q = result.tightest_mass_ratio
    ax.plot(span, q, "o-", color="#0072B2", lw=1.8, label="smallest detectable q (best period)")
    for s, qq, y in zip(span, q, result.years.to_value(u.yr), strict=True):
        if np.isfinite(qq):
            ax.annotate(
                f"+{y:g} yr", (s, qq), textcoords="offset points", xytext=(4, 4), fontsize=8
            )
    if target_q is not None:
        ax.axhline(target_q, color="#D55E00", ls=":", lw=1.5, label=f"target q = {target_q:g}")
        first = result.first_epoch(target_q)
        if first is not None:
            i = int(np.flatnonzero(result.years == first)[0])
            ax.plot(
                span[i],
                q[i],
                "s",
                ms=10,
                mfc="none",
                mec="#D55E00",
                label=f"reached after +{first.to_value(u.yr):g} yr",
            )
    ax.set_yscale("log")
    unicode_log_ticks(ax.yaxis)
    ax.set_xlabel("observing span of the array [yr]")
    ax.set_ylabel("smallest detectable mass ratio q")
    host = result.host
    extra = "" if result.rms_factor == 1 else f", TOA rms / {result.rms_factor:g} after today"
    ax.set_title(
        f"{host.name}: forecast over time (detectable, not an exclusion),\n"
        f"S/N ≥ {result.maps[0].snr:g}, {result.maps[0].orbit}{extra}",
        fontsize=10,
    )
    ax.legend(fontsize=8, frameon=False)
    return fig
