"""Several published upper limits at once: the tightest h0 at each frequency.

Arrays publish limits over overlapping bands; at each frequency the tightest
(lowest) h0 limit is the one that bounds a binary there.  The combined curve
keeps which limit that is, so tables can record the source of each period's
bound and figures can mark where it changes.
"""

import numpy as np
from astropy import units as u

from .._inputs import quantity
from .curve import CurveError, StrainCurve

__all__ = ["CombinedLimit", "tightest_limit"]


class CombinedLimit(StrainCurve):
    """The pointwise tightest of several h0 upper limits (a StrainCurve of kind h0_limit).

    Evaluating it evaluates every limit (each interpolated log-log on its own
    grid) and takes the smallest, so crossings between tabulated points are
    exact.  Its ``frequency`` and ``value`` arrays tabulate it on the union of
    the limits' grids (for its band and for writing it out).

    Attributes
    ----------
    limits : tuple of StrainCurve
    names : tuple of str
        One name per limit (e.g. its file name), as tables record it.

    Parameters
    ----------
    limits : sequence of StrainCurve
        Upper limits (use :func:`tightest_limit`, which checks them).
    names : sequence of str
    meta : dict, optional

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> f = np.geomspace(2e-9, 3e-7, 20) * u.Hz
    >>> a = StrainCurve(f, 1e-14 * (f / (1e-8 * u.Hz)).value, "h0_limit")  # invented
    >>> b = StrainCurve(f, 1e-14 * (1e-8 * u.Hz / f).value, "h0_limit")  # invented
    >>> CombinedLimit([a, b], ["A", "B"]).source_at([3e-9, 3e-8] * u.Hz).tolist()
    ['A', 'B']
    """

    def __init__(self, limits, names, meta=None):
        self.limits, self.names = tuple(limits), tuple(str(n) for n in names)
        f = np.unique(np.concatenate([c.frequency.to_value(u.Hz) for c in self.limits]))
        values = np.nanmin(np.vstack([c.interpolate(f * u.Hz) for c in self.limits]), axis=0)
        super().__init__(f * u.Hz, values, "h0_limit", meta=meta)

    def interpolate(self, frequency):
        """The smallest limit at ``frequency``; NaN where no limit covers it."""
        values = self._all(frequency)
        with np.errstate(invalid="ignore"):
            out = np.nanmin(np.where(np.isnan(values), np.inf, values), axis=0)
        return np.where(np.isinf(out), np.nan, out)

    def source_at(self, frequency):
        """Name of the limit that is tightest at each frequency ('' where none covers it).

        Parameters
        ----------
        frequency : Quantity [frequency]

        Returns
        -------
        ndarray of str
        """
        values = self._all(frequency)
        covered = ~np.all(np.isnan(values), axis=0)
        index = np.argmin(np.where(np.isnan(values), np.inf, values), axis=0)
        return np.where(covered, np.asarray(self.names, dtype=object)[index], "").astype(str)

    def _all(self, frequency):
        frequency = quantity(frequency, u.Hz, "frequency", allow_nonfinite=True)
        return np.vstack([np.atleast_1d(c.interpolate(frequency)) for c in self.limits])

    def __repr__(self):
        return (
            f"CombinedLimit({len(self.limits)} limits: {', '.join(self.names)}; "
            f"{self.frequency.size} points, {self.label()})"
        )


def tightest_limit(curves, names):
    """Combine upper limits into the tightest at each frequency.

    Parameters
    ----------
    curves : sequence of StrainCurve
        Upper limits (kind ``h0_limit``) of one confidence.
    names : sequence of str

    Returns
    -------
    CombinedLimit
        Meta: the common confidence, the longest span (the chirping test is then
        the strictest of the limits'), ``sources`` listing the names, and the sky
        ("averaged" unless every limit names the same sky).

    Raises
    ------
    CurveError
        For a noise budget among them, or limits of different confidence.

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> f = np.geomspace(2e-9, 3e-7, 20) * u.Hz
    >>> a = StrainCurve(f, 1e-14 * (f / (1e-8 * u.Hz)).value, "h0_limit")  # invented
    >>> b = StrainCurve(f, 2e-14 * np.ones(20), "h0_limit")  # invented
    >>> c = tightest_limit([a, b], ["A", "B"])
    >>> float(c.h0_threshold([1e-7] * u.Hz)[0])
    2e-14
    """
    curves, names = list(curves), [str(n) for n in names]
    if len(curves) != len(names) or not curves:
        raise CurveError("give one name per curve, and at least one curve")
    budgets = [n for c, n in zip(curves, names, strict=True) if not c.is_limit]
    if budgets:
        raise CurveError(
            f"{budgets[0]} is a noise budget: repeating --curve combines upper "
            "limits only; use one noise budget at a time"
        )
    levels = {round(c.confidence, 9) for c in curves}
    if len(levels) > 1:
        raise CurveError(
            f"the limits have different confidences "
            f"({', '.join(f'{c.confidence:g}' for c in curves)}): the tightest "
            "of them would mix statements; combine limits of one confidence"
        )
    spans = [c.span for c in curves if c.span is not None]
    skies = {c.sky for c in curves}
    meta = {
        "confidence": curves[0].confidence,
        "sources": ", ".join(names),
        "sky": skies.pop() if len(skies) == 1 else "averaged",
        "source": "tightest of " + ", ".join(names),
    }
    if spans:
        meta["span"] = f"{max(s.to_value(u.yr) for s in spans):.6g} yr"
    return CombinedLimit(curves, names, meta)
