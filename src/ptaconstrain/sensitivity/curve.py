"""Sensitivity curves: upper limits and noise budgets against GW frequency.

Two kinds of sensitivity are kept apart everywhere:

* ``h0_limit`` -- a strain upper limit from real data at a stated
  confidence.  A binary whose h0 exceeds it is *excluded*.
* ``strain_psd`` (one-sided, 1/Hz) and ``characteristic_strain`` -- a noise
  budget.  With an S/N threshold and an observing span it gives the h0 a
  binary needs to be *detectable*; it never excludes anything.

Interpolation is piecewise-linear in log f - log value, so narrow features
(the loss of sensitivity at 1/yr) survive; outside the tabulated range the
curve says nothing (NaN), it is never extrapolated.
"""

import warnings

import numpy as np
from astropy import units as u

from .._inputs import check_field, check_schema, quantity
from ..errors import InputError, PtaconstrainWarning

__all__ = [
    "KINDS",
    "LIMIT_KINDS",
    "NOISE_KINDS",
    "StrainCurve",
    "CurveError",
    "load_curve",
    "save_curve",
    "frequency_unit_hint",
    "detection_threshold_h0",
    "FromCurve",
    "noise_psd_for_threshold",
]

LIMIT_KINDS = ("h0_limit",)
NOISE_KINDS = ("strain_psd", "characteristic_strain")
KINDS = LIMIT_KINDS + NOISE_KINDS
_VALUE_UNITS = {
    "h0_limit": u.dimensionless_unscaled,
    "strain_psd": u.Hz**-1,
    "characteristic_strain": u.dimensionless_unscaled,
}

#: Mean over isotropic inclination of [(1 + cos^2 i)^2 + 4 cos^2 i] = 28/15 + 4/3 = 16/5:
#: the factor K in the orientation-averaged rho^2 = K h0^2 T / S_n.
ORIENTATION_MEAN = 3.2

#: schema of the meta keys a curve file may carry (others are kept, unchecked)
CURVE_META_SCHEMA = {
    "confidence": (float, str),
    "span": (float, str, u.Quantity),
    "sky": str,
    "*": object,
}


class CurveError(InputError):
    """A sensitivity curve that cannot be used; the message names the fix.

    Parameters
    ----------
    message : str
        One line naming the problem and the fix.

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain.sensitivity import CurveError, StrainCurve
    >>> try:
    ...     StrainCurve([2, 1] * u.nHz, [1e-14, 1e-14], "h0_limit")
    ... except CurveError as err:
    ...     print(err)
    curve frequency must be strictly increasing (row 2 is not): sort the file by
    frequency and drop duplicates
    """


def detection_threshold_h0(strain_psd, span, snr):
    """Strain amplitude at which a monochromatic binary reaches S/N ``snr``.

    For a strain-noise PSD S_n referred to one polarisation and averaged over
    the sky and polarisation angle (the convention of sky-averaged sensitivity
    curves, e.g. Robson, Cornish & Liu 2019, CQG 36, 105011), a wave h(t)
    observed for a span T has rho^2 = (2 / S_n) int (h+^2 + hx^2) dt.  With
    h0 = 2 (G Mz)^(5/3) (pi f)^(2/3) / (c^4 D_L) the quadrupole polarisations
    are h+ = h0 (1 + cos^2 i) cos Phi and hx = 2 h0 cos i sin Phi (Maggiore
    2008 eqs. 4.29-4.30, whose amplitude is 2 h0; e.g. Sesana & Vecchio 2010,
    PRD 81, 104008, from memory).  Their phase average is
    h0^2 [(1 + cos^2 i)^2 + 4 cos^2 i] / 2, whose mean over isotropic
    inclination is 8 h0^2 / 5, so the orientation-averaged (mean rho^2) S/N is
    rho^2 = (16/5) h0^2 T / S_n and

        h0 = rho sqrt(5 S_n / (16 T)).

    Parameters
    ----------
    strain_psd : Quantity [1/Hz]
        One-sided, sky-averaged strain-noise PSD S_n(f).
    span : Quantity [time]
        Observing span T.
    snr : float
        S/N threshold rho.

    Returns
    -------
    Quantity [dimensionless].

    Examples
    --------
    >>> from astropy import units as u
    >>> h0 = detection_threshold_h0(1e-18 / u.Hz, 10 * u.yr, snr=5.0)
    >>> print(f"{h0.to_value(''):.4g}")   # 5 sqrt(5 S_n / (16 T))
    1.574e-13
    """
    return (snr * np.sqrt(strain_psd / (ORIENTATION_MEAN * span))).to(u.dimensionless_unscaled)


def noise_psd_for_threshold(h0, span, snr):
    """Inverse of :func:`detection_threshold_h0`: the S_n that makes ``h0`` reach ``snr``.

    Parameters
    ----------
    h0 : Quantity [dimensionless] or array
    span : Quantity [time]
    snr : float

    Returns
    -------
    Quantity [1/Hz].

    Examples
    --------
    >>> from astropy import units as u
    >>> noise_psd_for_threshold(1.574e-13, 10 * u.yr, snr=5.0)   # inverse of detection_threshold_h0
    <Quantity 1.0e-18 1 / Hz>
    """
    return (ORIENTATION_MEAN * span * (np.asarray(h0) / snr) ** 2).to(u.Hz**-1)


class FromCurve:
    """Mixin for results built on a curve (``self.curve``): what kind of statement they make."""

    @property
    def is_limit(self):
        """True for an exclusion (upper limit), False for a forecast (noise budget)."""
        return self.curve.is_limit

    @property
    def verb(self):
        """'excluded' or 'detectable'."""
        return self.curve.verb


class StrainCurve:
    """A tabulated sensitivity against GW frequency.

    Parameters
    ----------
    frequency : Quantity [frequency]
        Finite, positive, strictly increasing.
    value : array
        Finite and positive; h0 (dimensionless) for ``h0_limit``, 1/Hz for
        ``strain_psd``, dimensionless for ``characteristic_strain``.
    kind : {"h0_limit", "strain_psd", "characteristic_strain"}
    meta : dict, optional
        ``confidence`` (for limits, e.g. 0.95), ``span`` (observing span,
        e.g. "15 yr"), ``sky`` ("averaged" or a position), ``source``, ...

    Raises
    ------
    CurveError
        Naming the problem and the fix.

    Examples
    --------
    >>> from astropy import units as u
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit",
    ...                     meta={"confidence": 0.95, "span": "15 yr"})
    >>> curve.label()
    '95% upper limit'
    >>> curve.h0_threshold([10, 100] * u.nHz)   # outside the band: NaN, never extrapolated
    array([1.e-14,    nan])
    """

    def __init__(self, frequency, value, kind, meta=None):
        if kind not in KINDS:
            raise CurveError(f"curve kind {kind!r} is unknown: use one of {', '.join(KINDS)}")
        self.kind = kind
        self.meta = dict(meta or {})
        try:
            check_schema(self.meta, CURVE_META_SCHEMA, "curve meta")
        except InputError as err:
            raise CurveError(str(err)) from err
        try:
            f = quantity(frequency, u.Hz, "curve frequency", allow_nonfinite=True)
        except InputError as err:
            unit = getattr(frequency, "unit", "none")
            raise CurveError(f"curve frequency has unit {unit}: give it in Hz") from err
        unit = _VALUE_UNITS[kind]
        v = u.Quantity(value)
        if v.unit == u.dimensionless_unscaled:
            v = v.value * unit  # bare numbers are read in the kind's unit
        try:
            v = v.to(unit)
        except u.UnitsError as err:
            raise CurveError(f"curve {kind} has unit {v.unit}: give it in {unit}") from err
        f, v = np.atleast_1d(f), np.atleast_1d(np.asarray(v.value, dtype=float))
        _validate(f.value, v, kind)
        self.frequency = f
        self.value = v
        self.span = _span_from_meta(self.meta)
        if self.is_limit:
            _confidence_from_meta(self.meta)  # refused now, not when first printed

    # ----------------------------------------------------------------- labels
    @property
    def is_limit(self):
        """True for an upper limit (exclusion), False for a noise budget (forecast)."""
        return self.kind in LIMIT_KINDS

    @property
    def confidence(self):
        """Confidence of an upper limit as a fraction (default 0.95), else None."""
        if not self.is_limit:
            return None
        return _confidence_from_meta(self.meta)

    @property
    def verb(self):
        """'excluded' for upper limits, 'detectable' for noise budgets."""
        return "excluded" if self.is_limit else "detectable"

    def label(self, snr=None):
        """Short description, e.g. '95% upper limit' or 'forecast, S/N >= 5'."""
        if self.is_limit:
            return f"{100 * self.confidence:.3g}% upper limit"
        return f"forecast, S/N >= {snr:g}" if snr is not None else "forecast (noise budget)"

    @property
    def sky(self):
        """What sky the curve refers to: 'averaged' unless the meta says otherwise."""
        return str(self.meta.get("sky", "averaged"))

    # ---------------------------------------------------------- evaluation
    def interpolate(self, frequency):
        """Tabulated value at ``frequency``, log-log linear; NaN outside the range.

        Parameters
        ----------
        frequency : Quantity [frequency]; bare numbers are Hz

        Returns
        -------
        ndarray in the curve's value unit.
        """
        frequency = quantity(frequency, u.Hz, "frequency", allow_nonfinite=True)
        x = np.log(np.asarray(frequency.value, dtype=float))
        lf = np.log(self.frequency.value)
        y = np.interp(x, lf, np.log(self.value), left=np.nan, right=np.nan)
        return np.exp(y)

    def strain_psd(self, frequency):
        """Strain-noise PSD S_n at ``frequency`` (noise budgets only).

        ``characteristic_strain`` is converted with h_n^2 = f S_n (Moore, Cole &
        Berry 2015, CQG 32, 015014, eq. 3).

        Parameters
        ----------
        frequency : Quantity [frequency]; bare numbers are Hz

        Returns
        -------
        Quantity [1/Hz]; NaN outside the tabulated range.
        """
        if self.is_limit:
            raise CurveError("an h0 upper limit has no noise PSD; use a noise-budget curve")
        frequency = quantity(frequency, u.Hz, "frequency", allow_nonfinite=True)
        v = self.interpolate(frequency)
        if self.kind == "strain_psd":
            return v * u.Hz**-1
        return (v**2 / frequency).to(u.Hz**-1)

    def h0_threshold(self, frequency, snr=5.0, span=None):
        """Strain amplitude above which a binary is excluded (or detectable).

        For ``h0_limit`` this is the interpolated limit.  For a noise budget it
        is the orientation-averaged h0 reaching S/N ``snr`` over ``span``
        (:func:`detection_threshold_h0`).

        Parameters
        ----------
        frequency : Quantity [frequency]; bare numbers are Hz
        snr : float
            S/N threshold (noise budgets only).
        span : Quantity [time], optional
            Observing span (bare numbers are yr); defaults to the curve's
            ``span`` meta (see :meth:`observing_span`).

        Returns
        -------
        ndarray (dimensionless), NaN outside the tabulated range.

        Examples
        --------
        >>> from astropy import units as u
        >>> c = StrainCurve([1e-9, 1e-7] * u.Hz, [1e-14, 1e-12], "h0_limit")
        >>> print(f"{float(c.h0_threshold(1e-8)):.3g}")  # a bare number is Hz
        1e-13
        """
        if self.is_limit:
            return self.interpolate(frequency)
        span = self.observing_span(span)
        if not np.isfinite(snr) or snr <= 0:
            raise InputError(f"snr: must be positive, got {snr!r}")
        return detection_threshold_h0(self.strain_psd(frequency), span, snr).value

    def observing_span(self, span=None):
        """The observing span: ``span`` if given, else the meta's, else 1 / f_min.

        The fallback 1/f_min is the usual lowest frequency of a PTA curve
        (common practice); results record which was used.  For a noise budget
        the span sets the detection threshold, so the fallback is announced
        with a :class:`~ptaconstrain.errors.PtaconstrainWarning`.

        Parameters
        ----------
        span : Quantity [time], optional
            Bare numbers are yr.

        Returns
        -------
        Quantity [yr].
        """
        if span is not None:
            return check_field(span, "span")
        if self.span is not None:
            return self.span
        guess = (1.0 / self.frequency[0]).to(u.yr)
        if not self.is_limit:
            warnings.warn(
                f"span: the curve gives no observing span, so {guess:.3g} "
                "(1 / lowest frequency) is assumed; give span or set the "
                "curve's 'span' meta",
                PtaconstrainWarning,
                stacklevel=3,
            )
        return guess

    def __repr__(self):
        return (
            f"StrainCurve(kind={self.kind!r}, {self.frequency.size} points, "
            f"{self.frequency[0]:.3g} - {self.frequency[-1]:.3g})"
        )


def _validate(f, v, kind):
    if f.ndim != 1 or v.shape != f.shape:
        raise CurveError("curve: frequency and value columns must be 1-D and of equal length")
    if f.size < 2:
        raise CurveError("curve: needs at least two rows to interpolate")
    if not np.all(np.isfinite(f)):
        raise CurveError("curve frequency has NaN or infinite entries: remove those rows")
    if np.any(f <= 0):
        raise CurveError("curve frequency must be positive: remove rows with f <= 0")
    bad = np.flatnonzero(np.diff(f) <= 0)
    if bad.size:
        raise CurveError(
            f"curve frequency must be strictly increasing (row {bad[0] + 2} is not): "
            "sort the file by frequency and drop duplicates"
        )
    if not np.all(np.isfinite(v)):
        raise CurveError(f"curve {kind} has NaN or infinite entries: remove those rows")
    if np.any(v <= 0):
        raise CurveError(f"curve {kind} must be positive: remove rows with values <= 0")


def _span_from_meta(meta):
    span = meta.get("span")
    if span is None:
        return None
    if not isinstance(span, (str, int, float, u.Quantity)) or isinstance(span, bool):
        raise CurveError(
            f"curve meta 'span' is a {type(span).__name__}: write one time, e.g. '15 yr'"
        )
    try:
        q = quantity(span, u.yr, "span")
    except InputError as err:
        raise CurveError(f"curve meta 'span' = {span!r} is not a time: write e.g. '15 yr'") from err
    if q.value <= 0 or q.ndim:
        raise CurveError(f"curve meta 'span' = {span!r} must be one positive time")
    try:
        return check_field(q, "span", "curve meta 'span'")
    except InputError as err:
        raise CurveError(str(err)) from err


def _confidence_from_meta(meta):
    """The meta 'confidence' of a limit (default 0.95), refused outside (0, 1)."""
    conf = meta.get("confidence", 0.95)
    if isinstance(conf, bool) or not isinstance(conf, (int, float, str, np.floating)):
        raise CurveError(
            f"curve meta 'confidence' is a {type(conf).__name__}: write one "
            "number in (0, 1), e.g. 0.95"
        )
    try:
        return check_field(conf, "confidence", "curve meta 'confidence'")
    except InputError as err:
        raise CurveError(str(err)) from err


# --------------------------------------------------------------------- I/O
def load_curve(path, kind=None, confidence=None):
    """Read a sensitivity curve.

    ECSV files (first line ``# %ECSV``) carry a ``frequency`` column (Hz) and
    exactly one of ``h0_limit``, ``strain_psd`` (1/Hz) or
    ``characteristic_strain``, with ``confidence``, ``span`` and ``sky`` in
    the meta.  Plain text is two whitespace- or comma-separated columns,
    frequency in Hz then the value, ``#`` comments allowed, and needs an
    explicit ``kind``.

    Parameters
    ----------
    path : str or path-like
    kind : str, optional
        Required for plain text; for ECSV it must match the file if given.
    confidence : float, optional
        Confidence of an upper limit, in (0, 1), for a file that states none
        (plain text always).  A file's own ``confidence`` meta wins; giving a
        different one, or one for a noise budget, warns that it is ignored.

    Returns
    -------
    StrainCurve

    Warns
    -----
    PtaconstrainWarning
        For each assumption: a limit's confidence (95% when none is stated),
        the sky of a plain-text curve (sky-averaged), and frequencies that look
        like nHz or mHz rather than Hz.

    Raises
    ------
    CurveError
        One line naming the problem and the fix.

    Examples
    --------
    >>> from ptaconstrain.data import path
    >>> curve = load_curve(path("synthetic_h0_limit.ecsv"))
    >>> curve.kind, curve.label()
    ('h0_limit', '95% upper limit')
    """
    from pathlib import Path

    path = Path(path)
    if not path.is_file():
        raise CurveError(f"curve file {path} not found: check the path")
    with open(path, encoding="utf-8", errors="replace") as fh:
        first = fh.readline()
    if confidence is not None and not 0 < float(confidence) < 1:
        raise CurveError(f"confidence: {confidence!r} must lie in (0, 1), e.g. 0.95")
    if first.startswith("# %ECSV"):
        curve = _load_ecsv(path, kind)
    elif kind is None:
        raise CurveError(
            f"{path.name} is plain text: say what its second column holds "
            f"(--kind {'/'.join(KINDS)}), or use an ECSV file"
        )
    else:
        curve = _load_text(path, kind)
        warnings.warn(
            f"sky: {path.name} is plain text and states no sky, so it is taken "
            "as sky-averaged; write it as ECSV with meta 'sky' to say otherwise",
            PtaconstrainWarning,
            stacklevel=2,
        )
        hint = frequency_unit_hint(curve.frequency)
        if hint:
            warnings.warn(f"{path.name}: {hint}", PtaconstrainWarning, stacklevel=2)
    _settle_confidence(curve, path.name, confidence)
    return curve


def frequency_unit_hint(frequency):
    """A hint when frequencies given as Hz look like nHz or mHz; '' when they look right.

    A PTA is sensitive between about 1 nHz and 1 uHz (1/span to the Nyquist
    frequency of a few-week cadence; common practice).  Numbers of order 1-1000
    read as Hz are far above that and are most likely nHz; numbers of 1e-6 to
    1e-2 "Hz" are most likely mHz.

    Parameters
    ----------
    frequency : Quantity [frequency]

    Returns
    -------
    str

    Examples
    --------
    >>> from astropy import units as u
    >>> frequency_unit_hint([2.0, 30.0] * u.Hz)[:38]
    'frequencies 2-30 Hz look like nHz: the'
    >>> frequency_unit_hint([2e-9, 3e-8] * u.Hz)
    ''
    """
    f = frequency.to_value(u.Hz)
    lo, hi = float(np.min(f)), float(np.max(f))
    if lo >= 0.05 and hi <= 1e5:
        unit, factor = "nHz", "1e-9"
    elif lo >= 1e-7 and 1e-5 < hi <= 1e-1:
        unit, factor = "mHz", "1e-3"
    else:
        return ""
    return (
        f"frequencies {lo:.3g}-{hi:.3g} Hz look like {unit}: the first column must be "
        f"in Hz; multiply it by {factor} (or write the curve as ECSV with unit {unit})"
    )


def _settle_confidence(curve, name, confidence, note=True):
    """Set or check a limit's confidence; warn whenever one is assumed or ignored.

    A limit that states no confidence (plain text, or an ECSV file without the
    ``confidence`` meta) takes the documented default 0.95 with a note.
    """
    if not curve.is_limit:
        if confidence is not None:
            warnings.warn(
                f"confidence: {name} is a noise budget (a forecast), so the "
                f"confidence {confidence:g} is ignored",
                PtaconstrainWarning,
                stacklevel=3,
            )
        return
    stated = curve.meta.get("confidence")
    if stated is None and confidence is None:
        if not note:
            return
        warnings.warn(
            f"confidence: {name} states no confidence, so a 95% upper limit is "
            "assumed; give --confidence (or the curve's 'confidence' meta)",
            PtaconstrainWarning,
            stacklevel=3,
        )
        curve.meta["confidence"] = 0.95
        curve.meta["confidence_assumed"] = True
    elif stated is None:
        curve.meta["confidence"] = float(confidence)
    elif confidence is not None and abs(float(stated) - float(confidence)) > 1e-12:
        warnings.warn(
            f"confidence: {name} states {float(stated):g}, which is used; the "
            f"confidence {confidence:g} given is ignored",
            PtaconstrainWarning,
            stacklevel=3,
        )


def _load_ecsv(path, kind):
    from .._files import read_table

    t = read_table(path, "ECSV table", CurveError, format="ascii.ecsv")
    if "frequency" not in t.colnames:
        raise CurveError(f"{path.name} has no 'frequency' column (Hz): add one")
    present = [k for k in KINDS if k in t.colnames]
    if len(present) != 1:
        raise CurveError(
            f"{path.name} must have exactly one of the columns {', '.join(KINDS)} "
            f"(found {', '.join(present) or 'none'})"
        )
    found = present[0]
    if kind is not None and kind != found:
        raise CurveError(f"{path.name} holds {found}, not {kind}: drop --kind or fix it")
    fcol = t["frequency"]
    if fcol.unit is None:
        raise CurveError(f"{path.name}: the 'frequency' column has no unit: set unit: Hz")
    vcol = t[found]
    value = u.Quantity(vcol) if vcol.unit is not None else np.asarray(vcol, dtype=float)
    if found == "strain_psd" and vcol.unit is None:
        raise CurveError(f"{path.name}: the 'strain_psd' column has no unit: set unit: 1 / Hz")
    try:
        freq = u.Quantity(fcol)
        return StrainCurve(freq, value, found, meta=dict(t.meta))
    except (TypeError, ValueError) as err:
        if isinstance(err, CurveError):
            raise CurveError(f"{path.name}: {err}") from err
        raise CurveError(f"{path.name}: columns are not numeric ({err})") from err


def _load_text(path, kind):
    try:
        with warnings.catch_warnings():
            # numpy's "input contained no data"; an empty file is reported below
            warnings.filterwarnings("ignore", message="loadtxt", category=UserWarning)
            data = np.loadtxt(path, comments="#", ndmin=2, encoding="utf-8")
    except ValueError:
        try:
            data = np.loadtxt(path, delimiter=",", comments="#", ndmin=2, encoding="utf-8")
        except ValueError as err:
            raise CurveError(
                f"{path.name}: not two numeric columns (frequency in Hz, {kind}); "
                "check for text or missing values"
            ) from err
    if data.shape[1] != 2 or data.shape[0] == 0:
        raise CurveError(
            f"{path.name}: expected two columns (frequency in Hz, {kind}), found {data.shape[1]}"
        )
    unit = _VALUE_UNITS[kind]
    try:
        return StrainCurve(data[:, 0] * u.Hz, data[:, 1] * unit, kind, meta={"source": path.name})
    except CurveError as err:
        raise CurveError(f"{path.name}: {err}") from err


def save_curve(curve, path, overwrite=False):
    """Write ``curve`` as ECSV (atomically; never replaces a file unless asked).

    Parameters
    ----------
    curve : StrainCurve
    path : str or path-like
    overwrite : bool

    Returns
    -------
    None
        The file is written atomically; an existing file is refused unless ``overwrite``.

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> from astropy import units as u
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit",
    ...                     meta={"confidence": 0.95})  # invented
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     save_curve(curve, Path(tmp) / "limit.ecsv")
    ...     print(load_curve(Path(tmp) / "limit.ecsv").kind)
    h0_limit
    """
    from astropy.table import QTable

    from .._files import write_table

    t = QTable()
    t["frequency"] = curve.frequency
    unit = _VALUE_UNITS[curve.kind]
    t[curve.kind] = curve.value * unit
    t.meta.update(curve.meta)
    if curve.span is not None:
        t.meta["span"] = f"{curve.span.to_value(u.yr):.6g} yr"
    write_table(t, path, overwrite=overwrite)
