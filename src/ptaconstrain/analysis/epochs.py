"""Forecasts over time: how the bound on one host's companions improves as an array observes.

Each epoch extends every pulsar's schedule by some years at its own cadence
(:meth:`ptaconstrain.sensitivity.PulsarArray.extended`, optionally with better
TOAs), asks the extended array for its curve at the host's position and builds
the exclusion (forecast) map on one common (q, P) grid.  The summary per epoch
is the tightest bound and, for a chosen mass ratio, the first epoch at which it
becomes detectable.
"""

from dataclasses import dataclass

import numpy as np
from astropy import units as u

from .._inputs import quantity
from ..errors import InputError
from ..sensitivity.curve import FromCurve
from .exclusion import default_periods, exclusion_map

__all__ = ["EpochForecast", "forecast_over_time"]


@dataclass(frozen=True, eq=False)
class EpochForecast(FromCurve):
    """Result of :func:`forecast_over_time`: one forecast map per observing epoch.

    Attributes
    ----------
    host : Host
    years : Quantity (n_e,) [yr]
        Years added to every pulsar's schedule.
    span : Quantity (n_e,) [yr]
        The array's total observing span at each epoch.
    maps : tuple of ExclusionMap
        The forecast at each epoch (one common q and P grid).
    tightest_mass_ratio : ndarray (n_e,)
        Smallest ``max_mass_ratio`` over the periods (monochromatic bounds
        only); NaN when nothing is detectable.
    tightest_period : Quantity (n_e,) [yr]
        The period of that bound (NaN when none).
    rms_factor : float
        TOA-rms improvement factor of the extended data (1: unchanged).

    Examples
    --------
    >>> from astropy import units as u
    >>> from astropy.coordinates import SkyCoord
    >>> from ptaconstrain import PulsarArray
    >>> array = PulsarArray(["Invented A", "Invented B"],
    ...                     SkyCoord([10, 200], [20, -40], unit="deg"), [1, 1] * u.us,
    ...                     [30, 30] * u.d, [55000, 55000], [56826, 56826])
    >>> from ptaconstrain import Host
    >>> host = Host("Invented galaxy", 2e10, 20, coord=SkyCoord(100, 0, unit="deg"))
    >>> result = forecast_over_time(host, array, [0, 5])
    >>> result.span.round(1)
    <Quantity [ 5., 10.] yr>
    """

    host: object
    years: u.Quantity
    span: u.Quantity
    maps: tuple
    tightest_mass_ratio: np.ndarray
    tightest_period: u.Quantity
    rms_factor: float

    @property
    def curve(self):
        """The curve of the first epoch (the kind of statement: a forecast)."""
        return self.maps[0].curve

    def __repr__(self):
        pairs = ", ".join(
            f"+{y:g} yr: q > {q:.3g}"
            for y, q in zip(self.years.to_value(u.yr), self.tightest_mass_ratio, strict=True)
        )
        return f"EpochForecast({self.host.name!r}; {pairs})"

    def first_epoch(self, mass_ratio):
        """First added time at which companions of ``mass_ratio`` become detectable.

        Detectable at some period means tightest bound <= ``mass_ratio``.

        Parameters
        ----------
        mass_ratio : float in (0, 1]

        Returns
        -------
        Quantity [yr] or None (not within the epochs computed).
        """
        q = float(mass_ratio)
        if not 0 < q <= 1:
            raise InputError(f"mass_ratio: {q:g} is not in (0, 1]")
        hit = np.flatnonzero(np.nan_to_num(self.tightest_mass_ratio, nan=np.inf) <= q)
        return None if hit.size == 0 else self.years[hit[0]]

    def to_table(self, meta=None, target_q=None):
        """One row per epoch; :func:`ptaconstrain.report.epochs.epoch_table`."""
        from ..report.epochs import epoch_table

        return epoch_table(self, meta=meta, target_q=target_q)

    def plot(self, ax=None, target_q=None):
        """Bound against observing span; :func:`ptaconstrain.report.epochs.epoch_figure`."""
        from ..report.epochs import epoch_figure

        return epoch_figure(self, ax=ax, target_q=target_q)


def forecast_over_time(
    host,
    array,
    years,
    rms_factor=1.0,
    mass_ratio=None,
    period=None,
    snr=5.0,
    eccentricity=0.0,
    callback=None,
):
    """The forecast for ``host`` with the array observed longer, epoch by epoch.

    Parameters
    ----------
    host : Host
    array : PulsarArray
    years : Quantity (n_e,) [time] or numbers (yr), each >= 0
        Years added to every pulsar's schedule (0 is today's array).
    rms_factor : float >= 1
        TOA rms divided by this for the extended data sets
        (:meth:`~ptaconstrain.sensitivity.PulsarArray.extended` states how).
    mass_ratio, period : optional
        The grid, as :func:`~ptaconstrain.analysis.exclusion.exclusion_map`; the
        default periods cover the band of the longest epoch.
    snr : float
    eccentricity : float
    callback : callable, optional
        Called with 1 after each pulsar's timing fit of each epoch.

    Returns
    -------
    EpochForecast

    Examples
    --------
    >>> from astropy import units as u
    >>> from astropy.coordinates import SkyCoord
    >>> from ptaconstrain import PulsarArray
    >>> array = PulsarArray(["Invented A", "Invented B"],
    ...                     SkyCoord([10, 200], [20, -40], unit="deg"), [1, 1] * u.us,
    ...                     [30, 30] * u.d, [55000, 55000], [56826, 56826])
    >>> from ptaconstrain import Host
    >>> host = Host("Invented galaxy", 2e10, 20, coord=SkyCoord(100, 0, unit="deg"))
    >>> result = forecast_over_time(host, array, [0, 5])   # today, and 5 more years
    >>> result.tightest_mass_ratio.round(3)                 # longer data, smaller companions
    array([0.04 , 0.021])
    """
    years = np.atleast_1d(quantity(years, u.yr, "years"))
    if years.size == 0 or np.any(years.value < 0):
        raise InputError("years: give one or more times >= 0, e.g. 5,10,20")
    years = np.sort(years)
    arrays = [array.extended(y, rms_factor) for y in years]
    curves = []
    for arr in arrays:
        freq = arr.default_frequencies()
        arr.weights(freq, callback=callback)
        curves.append(arr.curve_at(host.coord, snr=snr, frequency=freq))
    if period is None:
        period = default_periods(curves[-1])
    maps = tuple(
        exclusion_map(host, c, mass_ratio, period, snr=snr, eccentricity=eccentricity, warn=False)
        for c in curves
    )
    best = [m.tightest() for m in maps]
    q = np.array([np.nan if b is None else b[1] for b in best])
    p = np.array([np.nan if b is None else b[0].to_value(u.yr) for b in best]) * u.yr
    return EpochForecast(
        host=host,
        years=years.to(u.yr),
        span=u.Quantity([a.span for a in arrays]).to(u.yr),
        maps=maps,
        tightest_mass_ratio=q,
        tightest_period=p,
        rms_factor=float(rms_factor),
    )
