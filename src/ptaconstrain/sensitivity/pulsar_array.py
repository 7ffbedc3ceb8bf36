"""A pulsar timing array as a noise budget: S/N, sensitivity curves and sky maps.

The noise model and the timing-model fit of each pulsar live in
:mod:`ptaconstrain.sensitivity.timing`; the pulsar-list file format and its
reader in :mod:`ptaconstrain.sensitivity.pulsar_list`.

Sky map as a matrix product
---------------------------
The orientation-averaged rho^2 of a binary of amplitude h0 at frequency f from
direction n is (h0 / 2 pi f)^2 (8/5) sum_p (F+^2 + Fx^2)(n, p) w_p(f).  The
costly, direction-independent part w[p, f] (the post-fit weights of
:func:`~ptaconstrain.sensitivity.timing.post_fit_weights`) is computed once per
pulsar and frequency; the sky enters only through F+^2 + Fx^2 =
(1 + n.p)^2 / 4.  The map over all pixels is therefore one product
(pattern[pix, p]) @ (w[p, f]).  This is exact, not an approximation: averaging
over the source phase removes the cross terms between the sine and cosine
quadratures (c^T G s) and the difference c^T G c - s^T G s, whatever the fit
does to them; only an S/N at a fixed, known phase would need them.  As
(1 + n.p)^2 / 4 is a quadratic form in n, pattern = phi(n) . phi(p) with ten
features (:func:`~ptaconstrain.sensitivity.antenna.pattern_power_features`),
and the product is computed as phi[pix, 10] @ (phi[p, 10].T @ w[p, f]): ten
terms per pixel and frequency whatever the number of pulsars.

:class:`PulsarArray` implements
:class:`~ptaconstrain.sensitivity.positional.PositionalSensitivity`.
"""

import numpy as np
from astropy import units as u

from .._inputs import check_field, check_memory, quantity
from ..errors import InputError
from . import antenna
from .curve import StrainCurve, noise_psd_for_threshold
from .positional import HealpixThresholds, check_nside
from .timing import (
    N_TIMING_PARAMETERS,
    approximate_weights,
    post_fit_weights,
    red_noise_psd,
    single_blas_thread,
    white_noise_psd,
)

__all__ = ["ArrayError", "PulsarArray", "DEFAULT_NSIDE", "PARALLEL_MIN_PULSARS", "MAP_BLOCK_BYTES"]

#: HEALPix resolution of :meth:`PulsarArray.threshold_table` when none is asked for.
DEFAULT_NSIDE = 64
#: From this many pulsars on, :meth:`PulsarArray.weights` uses two processes by default.
#: A pulsar's weights take about 0.6 ms, so starting and feeding a process pool pays
#: only for very large arrays: with 400-2000 pulsars two processes were slower than one
#: on the shared 2-core machine (benchmarks/bench_array.py; larger arrays not measured).
PARALLEL_MIN_PULSARS = 5000
#: Default size of one block of :meth:`PulsarArray.threshold_map_blocks` (bytes of output).
MAP_BLOCK_BYTES = 2**28
#: Pixels per block of a whole map (:meth:`PulsarArray.h0_threshold_map`, ``threshold_table``).
MAP_CHUNK = 65536
_ROW_TILE = 32  # frequencies per matrix product (see _h0_block)
_N_FEATURES = 10  # columns of antenna.pattern_power_features
_PIXEL_TILE = 1024  # pixels per product in _h0_block (default blocks hold whole tiles)
_MIN_TOAS = 3 * N_TIMING_PARAMETERS
_METHODS = ("exact", "analytic")


class ArrayError(InputError):
    """A pulsar list or array that cannot be used; the message names the fix.

    Parameters
    ----------
    message : str
        One line naming the problem and the fix.

    Examples
    --------
    >>> from astropy import units as u
    >>> from astropy.coordinates import SkyCoord
    >>> from ptaconstrain.sensitivity import ArrayError, PulsarArray
    >>> try:
    ...     PulsarArray(["P1"], SkyCoord([10], [20], unit="deg"), [-1] * u.us, [14] * u.d,
    ...                 [55000], [58000])
    ... except ArrayError as err:
    ...     print(err)
    row 1 (P1): toa_rms = -1 is not positive and finite: give a positive TOA rms in us
    """


class PulsarArray:
    """A list of pulsars with their noise and observing schedule.

    Parameters
    ----------
    names : sequence of str
    coord : astropy.coordinates.SkyCoord (n,)
    toa_rms : Quantity (n,) [time]
    cadence : Quantity (n,) [time]
    start_mjd, end_mjd : array (n,)
        First and last TOA epochs (MJD).
    red_amp, red_gamma : array (n,), optional
        Power-law red noise; amplitude 0 (or NaN) for none.
    distance : Quantity (n,) [length], optional
    name : str
        Name of the array (used in curve metadata).
    pulsar_term : bool
        Add the pulsar term incoherently (x 2 on rho^2, see :mod:`.antenna`).
    background : Background, optional
        The nanohertz background as a common red noise, added to every
        pulsar's noise (per pulsar, without cross-correlations; see
        :mod:`.background`).

    Raises
    ------
    ArrayError
        Naming the row, the column and the fix.

    Examples
    --------
    >>> from astropy import units as u
    >>> from astropy.coordinates import SkyCoord
    >>> array = PulsarArray(["Invented A", "Invented B"],
    ...                     SkyCoord([10, 200], [20, -40], unit="deg"),
    ...                     [0.5, 1.0] * u.us, [14, 14] * u.d, [53000, 53000], [58479, 58479])
    >>> array.span.round(1)
    <Quantity 15. yr>
    >>> curve = array.curve_at(SkyCoord(100, 0, unit="deg"), snr=5.0)   # a forecast
    >>> curve.kind
    'strain_psd'
    """

    def __init__(
        self,
        names,
        coord,
        toa_rms,
        cadence,
        start_mjd,
        end_mjd,
        red_amp=None,
        red_gamma=None,
        distance=None,
        name="pulsar array",
        pulsar_term=False,
        background=None,
    ):
        self.names = [str(n) for n in names]
        n = len(self.names)
        self.name = str(name)
        self.coord = coord.icrs.reshape(-1)
        if len(self.coord) != n:
            raise ArrayError(f"coord: needs one position per pulsar ({n})")
        self.toa_rms = u.Quantity(toa_rms, u.us).reshape(-1)
        self.cadence = u.Quantity(cadence, u.d).reshape(-1)
        self.start_mjd = np.asarray(start_mjd, float).reshape(-1)
        self.end_mjd = np.asarray(end_mjd, float).reshape(-1)
        amp = np.zeros(n) if red_amp is None else np.asarray(red_amp, float).reshape(-1)
        self.red_amp = np.where(np.isnan(amp), 0.0, amp)
        gam = np.full(n, np.nan) if red_gamma is None else np.asarray(red_gamma, float)
        self.red_gamma = gam.reshape(-1)
        self.distance = None if distance is None else u.Quantity(distance, u.kpc)
        self.pulsar_term = bool(pulsar_term)
        self.background = background
        _validate_array(self)
        self.vectors = antenna.coord_to_vectors(self.coord)
        self._cache = {}

    def with_background(self, background):
        """The same array with ``background`` (a :class:`~.background.Background` or None).

        Returns
        -------
        PulsarArray
            A new array (its own weight cache); this one is unchanged.
        """
        import copy

        new = copy.copy(self)
        new.background = background
        new._cache = {}
        return new

    def extended(self, years, rms_factor=1.0):
        """The array observed ``years`` longer, each pulsar at its own cadence.

        Every pulsar's last epoch moves ``years`` later (its TOAs continue at its
        cadence); with ``rms_factor`` f > 1 every TOA rms becomes toa_rms / f.
        The model has one white-noise rms per pulsar, so the improvement is
        applied to the whole data set, old TOAs included: an optimistic reading
        of a better future backend (exact when the new data dominate).

        Parameters
        ----------
        years : Quantity [time] or number (yr), >= 0
        rms_factor : float >= 1

        Returns
        -------
        PulsarArray
            A new array (with this one's background and pulsar-term setting).
        """
        extra = quantity(years, u.yr, "years")
        if extra.size != 1 or extra.value < 0:
            raise InputError(f"years: give one non-negative time, got {years!r}")
        rms_factor = float(rms_factor)
        if not (np.isfinite(rms_factor) and rms_factor >= 1.0):
            raise InputError(f"rms_factor: {rms_factor:g} must be >= 1 (toa_rms is divided by it)")
        label = f"{self.name} +{extra.to_value(u.yr):g} yr"
        if rms_factor != 1.0:
            label += f", rms / {rms_factor:g}"
        return PulsarArray(
            self.names,
            self.coord,
            self.toa_rms / rms_factor,
            self.cadence,
            self.start_mjd,
            self.end_mjd + extra.to_value(u.d),
            self.red_amp,
            self.red_gamma,
            self.distance,
            name=label,
            pulsar_term=self.pulsar_term,
            background=self.background,
        )

    # ------------------------------------------------------------ schedule
    def __len__(self):
        return len(self.names)

    def __repr__(self):
        return f"PulsarArray({self.name!r}, {len(self)} pulsars, span {self.span:.3g})"

    @property
    def span(self):
        """Overall observing span, last TOA of any pulsar minus the first (Quantity [yr])."""
        return ((self.end_mjd.max() - self.start_mjd.min()) * u.d).to(u.yr)

    @property
    def pulsar_spans(self):
        """Each pulsar's span, last minus first TOA (Quantity (n,) [yr])."""
        return ((self.end_mjd - self.start_mjd) * u.d).to(u.yr)

    @property
    def n_toas(self):
        """Number of TOAs of each pulsar (ndarray of int)."""
        return (
            np.floor((self.end_mjd - self.start_mjd) / self.cadence.to_value(u.d) + 1e-9).astype(
                int
            )
            + 1
        )

    def epochs(self, index):
        """TOA epochs (MJD) of pulsar ``index``: start, start + dt, ..."""
        dt = self.cadence[index].to_value(u.d)
        return self.start_mjd[index] + dt * np.arange(self.n_toas[index])

    # --------------------------------------------------------------- noise
    def noise_psd(self, frequency):
        """Residual-noise PSD of every pulsar, P_w + P_r (+ P_b, the background; one-sided).

        Parameters
        ----------
        frequency : Quantity (n_f,) [frequency]; bare numbers are Hz

        Returns
        -------
        Quantity (n_pulsars, n_f) [s^2 / Hz]
        """
        f = _check_frequency(frequency)
        pw = white_noise_psd(self.toa_rms, self.cadence)[:, None]
        pr = red_noise_psd(f[None, :], self.red_amp[:, None], self.red_gamma[:, None])
        if self.background is not None:
            pr = pr + self.background.psd(f)[None, :]
        return pw + pr

    def weights(self, frequency, method="exact", callback=None, *, workers=None, blas_threads=1):
        """Post-fit sensitivity weights w[p, f] (phase-averaged rho^2 per unit residual^2).

        Each pulsar has its own epochs and noise, so the exact weights are one
        :func:`~.timing.post_fit_weights` call per pulsar (vectorised over
        frequency; a few matrix products of N x (9 + 2K) by N x n_f), with one
        BLAS thread; many pulsars may be spread over processes.  The result
        does not depend on ``workers``.  Results are cached per frequency grid.

        Parameters
        ----------
        frequency : Quantity (n_f,) [frequency]; bare numbers are Hz
        method : {"exact", "analytic"}
            :func:`~.timing.post_fit_weights` or :func:`~.timing.approximate_weights`.
        callback : callable, optional
            Called with 1 after each pulsar (e.g. a click progress bar's update).
        workers : int, optional
            Processes for the exact weights; default 1 below
            :data:`PARALLEL_MIN_PULSARS` pulsars, else min(2, CPU count).
        blas_threads : int or None
            BLAS threads per pulsar; None leaves the library's own setting
            (kept for comparison: much slower on these small matrices).

        Returns
        -------
        Quantity (n_pulsars, n_f) [1 / s^2]
        """
        f = _check_frequency(frequency)
        if method not in _METHODS:
            raise InputError(f"method: {method!r} is unknown; use 'exact' or 'analytic'")
        key = (method, f.value.tobytes())
        if key in self._cache:
            return self._cache[key]
        if method == "analytic":
            w = approximate_weights(self.n_toas[:, None], self.cadence[:, None], self.noise_psd(f))
        else:
            self.check_memory(f.size, workers)
            jobs = [
                (
                    self.epochs(i),
                    self.toa_rms[i],
                    f,
                    self.red_amp[i],
                    self.red_gamma[i],
                    blas_threads,
                    self.background,
                )
                for i in range(len(self))
            ]
            rows = []
            for row in _map_jobs(jobs, self._workers(workers)):
                rows.append(row)
                if callback is not None:
                    callback(1)
            w = np.array(rows) * u.s**-2
        self._cache[key] = w
        return w

    def check_memory(self, n_frequencies, workers=None):
        """Refuse exact weights whose matrices would exceed the memory limit.

        Each pulsar's fit holds its TOAs x (timing model + 2 x frequencies)
        matrix, its phase arguments and the red-noise product (about four such
        matrices of float64), in up to ``workers`` processes at once.

        Raises
        ------
        ptaconstrain._inputs.ResourceError
        """
        n = int(self.n_toas.max())
        per_pulsar = 4 * 8.0 * n * (12 + 2 * int(n_frequencies))
        check_memory(
            per_pulsar * self._workers(workers) + 8.0 * self.n_toas.sum(),
            f"the timing fits ({n:,} TOAs x {int(n_frequencies)} frequencies in the "
            "largest pulsar)",
            "lengthen the pulsars' cadence or shorten their span",
        )

    def _workers(self, workers):
        if workers is None:
            import os

            return 1 if len(self) < PARALLEL_MIN_PULSARS else min(2, os.cpu_count() or 1)
        workers = int(workers)
        if workers < 1:
            raise InputError(f"workers: {workers} is not a positive number of processes")
        return workers

    def check_band(self, frequency):
        """Refuse frequencies outside 1/T .. 1/(2 dt), where the array says nothing.

        Parameters
        ----------
        frequency : Quantity [frequency]; bare numbers are Hz

        Raises
        ------
        ArrayError
            Naming the first frequency outside and the band.
        """
        f = _check_frequency(frequency)
        band = self.default_frequencies(2)
        lo, hi = band[0], band[-1]
        bad = (f < lo * (1 - 1e-9)) | (f > hi * (1 + 1e-9))
        if np.any(bad):
            raise ArrayError(
                f"frequency: {f[bad][0].to_value(u.Hz):.4g} Hz is outside the array's band "
                f"{lo.to_value(u.nHz):.4g}-{hi.to_value(u.nHz):.4g} nHz (1/T to the "
                "Nyquist frequency of the median cadence); bare numbers are Hz, e.g. '8 nHz'"
            )

    def default_frequencies(self, n=300):
        """Log-spaced GW frequencies from 1 / T to 1 / (2 dt), dt the median cadence.

        Returns
        -------
        Quantity (n,) [Hz]
        """
        lo = (1.0 / self.span).to_value(u.Hz)
        hi = (0.5 / np.median(self.cadence)).to_value(u.Hz)
        return np.logspace(np.log10(lo), np.log10(hi), n) * u.Hz

    # ---------------------------------------------------------- sensitivity
    def _power(self, coord):
        if coord is None:
            return np.full(len(self), antenna.SKY_MEAN_PATTERN)
        return antenna.pattern_power(self.vectors, _coord_vector(coord))

    def _term(self, pulsar_term):
        return self.pulsar_term if pulsar_term is None else bool(pulsar_term)

    def snr_squared(
        self,
        h0,
        frequency,
        coord=None,
        inclination=None,
        psi=None,
        pulsar_term=None,
        method="exact",
    ):
        """S/N^2 of a circular binary summed over the pulsars (phase-averaged).

        Parameters
        ----------
        h0 : float or array (n_f,)
            Strain amplitude.
        frequency : Quantity (n_f,) [frequency]; bare numbers are Hz
        coord : SkyCoord, optional
            Source position; None averages over the sky too.
        inclination, psi : float [rad], optional
            Give both (with ``coord``) for a fixed orientation; omit both for
            the mean over polarisation and isotropic inclination.
        pulsar_term : bool, optional
            Default: the array's ``pulsar_term``.
        method : {"exact", "analytic"}

        Returns
        -------
        ndarray (n_f,)
        """
        f = _check_frequency(frequency)
        w = self.weights(f, method)
        term = self._term(pulsar_term)
        if inclination is None and psi is None:
            return antenna.orientation_averaged_snr_squared(h0, f, w, self._power(coord), term)
        if coord is None or inclination is None or psi is None:
            raise InputError(
                "orientation: give coord, inclination and psi together, "
                "or omit inclination and psi for the orientation average"
            )
        fp, fx = antenna.antenna_pattern(self.vectors, _coord_vector(coord))
        return antenna.snr_squared(h0, f, w, fp, fx, inclination, psi, term)

    def snr(self, h0, frequency, **kwargs):
        """sqrt of :meth:`snr_squared` (same arguments)."""
        return np.sqrt(self.snr_squared(h0, frequency, **kwargs))

    def strain_psd(self, frequency, coord=None, pulsar_term=None, method="exact"):
        """Equivalent strain-noise PSD in the convention of :mod:`ptaconstrain.sensitivity.curve`.

        S_n = (16/5) T / (rho^2 per unit h0^2), T = :attr:`span`, so that
        ``detection_threshold_h0(S_n, T, snr)`` is the h0 whose mean rho^2
        (over inclination and polarisation; and sky if ``coord`` is None)
        equals snr^2.

        Returns
        -------
        Quantity (n_f,) [1 / Hz]
        """
        rho2 = self.snr_squared(1.0, frequency, coord=coord, pulsar_term=pulsar_term, method=method)
        return noise_psd_for_threshold(1.0, self.span, np.sqrt(rho2))

    def curve_at(self, coord, snr=5.0, frequency=None, pulsar_term=None, method="exact"):
        """Noise-budget curve (kind ``strain_psd``) at ``coord``, or sky-averaged for None.

        Parameters
        ----------
        coord : SkyCoord or None
        snr : float
            S/N threshold, recorded in the meta.
        frequency : Quantity [frequency], optional
            Default :meth:`default_frequencies`.
        pulsar_term : bool, optional
        method : {"exact", "analytic"}

        Returns
        -------
        StrainCurve
        """
        f = self.default_frequencies() if frequency is None else _check_frequency(frequency)
        psd = self.strain_psd(f, coord, pulsar_term, method)
        if coord is None:
            where = "averaged"
        else:
            c = _single_coord(coord).icrs
            where = f"ra={c.ra.deg:.4f}deg dec={c.dec.deg:.4f}deg"
        meta = {
            "sky": where,
            "span": f"{self.span.to_value(u.yr):.6g} yr",
            "source": f"computed from pulsar list {self.name}",
            "snr": float(snr),
            "n_pulsars": len(self),
            "pulsar_term": "incoherent" if self._term(pulsar_term) else "no (earth term only)",
            "orientation": "mean rho^2 over inclination and polarisation"
            + (" and sky" if coord is None else ""),
            "method": method,
            "background": ("none" if self.background is None else self.background.describe()),
        }
        return StrainCurve(f, psd, "strain_psd", meta=meta)

    def sky_averaged_curve(self, snr=5.0, frequency=None, pulsar_term=None, method="exact"):
        """:meth:`curve_at` with ``coord=None``."""
        return self.curve_at(None, snr, frequency, pulsar_term, method)

    def h0_threshold_map(
        self, frequencies, nside=32, snr=5.0, pulsar_term=None, callback=None, chunk=MAP_CHUNK
    ):
        """HEALPix maps (RING, ICRS) of the h0 reaching S/N ``snr`` (orientation-averaged).

        One matrix product per pixel chunk: pattern[pix, p] @ w[p, f] (see
        the module docstring).  The whole result is held (n_f x 12 nside^2
        doubles); for large maps use :meth:`threshold_map_blocks`, whose
        blocks are bit for bit the same numbers.

        Parameters
        ----------
        frequencies : Quantity (n_f,) [frequency]; bare numbers are Hz
        nside : int, power of 2
        snr : float
        pulsar_term : bool, optional
        callback : callable, optional
            Called with 1 after each pulsar's weights and each pixel chunk.
        chunk : int
            Pixels per matrix product (bounds the temporary memory).

        Returns
        -------
        ndarray (n_f, 12 nside^2), dimensionless h0.
        """
        return self._whole_map(frequencies, nside, snr, pulsar_term, callback, chunk)

    def _whole_map(self, frequencies, nside, snr, pulsar_term, callback, chunk, pixel_major=False):
        """The whole map, (n_f, n_pix) or, ``pixel_major``, (n_pix, n_f) C-ordered.

        Pixel-major tiles are transposed while in the cache: a transposed copy of
        the whole (n_f, n_pix) map took 20 ms of a 49 ms nside-64 x 100-frequency
        map (benchmarks/bench_array.py).  The values are the same bits either way.
        """
        nside = check_nside(nside)
        snr = _check_snr(snr)
        f = _check_frequency(frequencies)
        self.check_band(f)
        coef_t = self._feature_coefficients(f, pulsar_term, callback)
        parts = []
        for _, block in _pixel_blocks(coef_t, nside, snr, _chunk_pixels(chunk), pixel_major):
            parts.append(block)
            if callback is not None:
                callback(1)
        if len(parts) == 1:
            return parts[0]
        return np.concatenate(parts, axis=0 if pixel_major else 1)

    def threshold_map_blocks(
        self,
        frequencies,
        nside=32,
        snr=5.0,
        pulsar_term=None,
        *,
        by="pixel",
        pixels=None,
        block_bytes=MAP_BLOCK_BYTES,
        callback=None,
    ):
        """:meth:`h0_threshold_map` in blocks, so that no more than a block is held.

        ``by="pixel"``: every frequency for a run of pixels (the rows of a HEALPix
        FITS table, see :func:`~.limit_map.write_threshold_maps`).
        ``by="frequency"``: whole-sky maps for a run of frequencies (one map per
        figure).  Each block holds about ``block_bytes`` (at least one pixel
        run or one map); the values are bit for bit those of the whole map.
        nside 512 with 1000 frequencies, whole, would need 25 GB; in blocks of
        the default size, well under 1 GB (measured in benchmarks/bench_array.py).

        Parameters
        ----------
        frequencies : Quantity (n_f,) [frequency]; bare numbers are Hz
        nside : int, power of 2
        snr : float
        pulsar_term : bool, optional
        by : {"pixel", "frequency"}
        pixels : int, optional
            Pixels per matrix product; default from ``block_bytes``, a multiple
            of 1024.
        block_bytes : int
            Target size of one yielded block (with its temporaries: about
            twice this is held at most).
        callback : callable, optional
            Passed to :meth:`weights` (called once per pulsar).

        Returns
        -------
        iterator of (slice, ndarray)
            By pixel: the pixel range and h0 (n_f, n_pixels); by frequency: the
            frequency range and h0 (n_block, 12 nside^2).
        """
        import healpy as hp

        nside = check_nside(nside)
        snr = _check_snr(snr)
        f = _check_frequency(frequencies)
        if by not in ("pixel", "frequency"):
            raise InputError(f"by: {by!r} is unknown; use 'pixel' or 'frequency'")
        self.check_band(f)
        coef_t = self._feature_coefficients(f, pulsar_term, callback)
        npix = hp.nside2npix(nside)
        if by == "pixel":
            if pixels is None:  # block and feature chunk together within block_bytes
                pixels = max(1, block_bytes // (8 * (f.size + _N_FEATURES) * 1024)) * 1024
            return _pixel_blocks(coef_t, nside, snr, _chunk_pixels(pixels))
        per = max(1, int(block_bytes // (8 * npix * _ROW_TILE))) * _ROW_TILE
        if pixels is None:  # the feature chunk and its product within a quarter block
            pixels = max(1, block_bytes // (32 * (per + _N_FEATURES) * 1024)) * 1024
        return _frequency_blocks(coef_t, nside, snr, per, _chunk_pixels(pixels))

    def _feature_coefficients(self, f, pulsar_term, callback):
        """coef_t (n_f, 10): rho^2 per unit h0^2 on the sky is coef_t @ phi(pixel) (features)."""
        w = self.weights(f, callback=callback)
        term = self._term(pulsar_term)
        # rho^2 per unit h0^2 = pattern @ (0.4 w / (2 pi f)^2 [x 2 with pulsar term]): the
        # factor of one pulsar of unit weight and pattern, times every pulsar's weight
        one = np.ones((1, f.size)) * u.s**-2
        unit = antenna.orientation_averaged_snr_squared(1.0, f, one, np.ones(1), term)
        scale_t = unit[:, None] * w.to_value(u.s**-2).T  # (n_f, n_p)
        # sum_p pattern[pix, p] scale[p, f] = phi[pix, :] @ coef[:, f] (antenna features)
        return scale_t @ antenna.pattern_power_features(self.vectors)  # (n_f, 10)

    def threshold_table(self, frequency, snr=5.0, nside=None, *, pulsar_term=None, callback=None):
        """h0 reaching S/N ``snr`` on every HEALPix pixel (ICRS, RING), per frequency.

        :meth:`h0_threshold_map` in the layout of the
        :class:`~ptaconstrain.sensitivity.positional.PositionalSensitivity` protocol.

        Parameters
        ----------
        frequency : Quantity (n_f,) [frequency]; bare numbers are Hz
            Within the array's band (:meth:`check_band`).
        snr : float
        nside : int, optional
            Power of 2; default :data:`DEFAULT_NSIDE`.
        pulsar_term : bool, optional
        callback : callable, optional
            As in :meth:`h0_threshold_map`.

        Returns
        -------
        HealpixThresholds
            ``values`` of shape (12 nside^2, n_f), dimensionless h0.
        """
        nside = DEFAULT_NSIDE if nside is None else check_nside(nside)
        m = self._whole_map(
            frequency, nside, snr, pulsar_term, callback, MAP_CHUNK, pixel_major=True
        )
        return HealpixThresholds(nside, "icrs", m)

    def sky_markers(self):
        """The pulsars' positions (ICRS SkyCoord (n,)), to mark on sky figures."""
        return self.coord

    def describe(self):
        """Summary as a flat dict of strings (for provenance)."""
        return {
            "array": self.name,
            "n_pulsars": str(len(self)),
            "span": f"{self.span.to_value(u.yr):.4g} yr",
            "toa_rms": f"{self.toa_rms.min().value:.3g}-{self.toa_rms.max().value:.3g} us",
            "red_noise": f"{int(np.sum(self.red_amp > 0))} pulsars",
            "background": "none" if self.background is None else self.background.describe(),
        }


# ------------------------------------------------------------------ helpers
def _h0_block(coef_t, nside, pix, snr, pixel_major=False):
    """h0 for S/N ``snr`` on the pixels ``pix`` (a slice) for the rows of ``coef_t``.

    rho^2 per unit h0^2 = coef_t @ phi(pixels).T, phi the ten pattern features
    (:func:`~.antenna.pattern_power_features`), then h0 = snr / sqrt(rho^2),
    a cache-sized piece at a time.  A BLAS product's rounding can depend on
    the matrix shape and on a column's place in it (its edge kernels: a block
    of 333 pixels changed the last bits of two columns on an AVX-512 machine),
    so every product has one shape: ``_ROW_TILE`` rows by ``_PIXEL_TILE``
    pixels, tiles aligned on the whole sky's pixel numbers, zero-padded past
    the last pixel and the last row.  Blocks of frequencies start on a row
    tile, hence every value is bit for bit that of the whole map whatever the
    blocks (unaligned pixel blocks pay for the whole tiles they touch).
    Returns (n_rows, n_pixels), or (n_pixels, n_rows) if ``pixel_major`` (each
    tile transposed as it is stored).
    """
    import healpy as hp

    first = pix.start // _PIXEL_TILE * _PIXEL_TILE
    stop = min(-(-pix.stop // _PIXEL_TILE) * _PIXEL_TILE, hp.nside2npix(nside))
    vec = np.stack(hp.pix2vec(nside, np.arange(first, stop)), axis=-1)
    feat_t = antenna.pattern_power_features(vec).T  # (10, stop - first)
    n = coef_t.shape[0]
    out = np.empty((pix.stop - pix.start, n) if pixel_major else (n, pix.stop - pix.start))
    tiles = []
    for lo in range(0, n, _ROW_TILE):
        tile = np.zeros((_ROW_TILE, coef_t.shape[1]))
        tile[: min(n - lo, _ROW_TILE)] = coef_t[lo : lo + _ROW_TILE]
        tiles.append(tile)
    phi = np.zeros((_N_FEATURES, _PIXEL_TILE))
    part = np.empty((_ROW_TILE, _PIXEL_TILE))
    with single_blas_thread():  # threads only wait on memory here (benchmarks/bench_array.py)
        for tlo in range(first, stop, _PIXEL_TILE):
            width = min(_PIXEL_TILE, stop - tlo)
            phi[:, :width] = feat_t[:, tlo - first : tlo - first + width]
            phi[:, width:] = 0.0
            a, b = max(tlo, pix.start), min(tlo + _PIXEL_TILE, pix.stop)  # wanted pixels
            for lo, tile in zip(range(0, n, _ROW_TILE), tiles, strict=True):
                np.matmul(tile, phi, out=part)
                rho2 = part[: min(n - lo, _ROW_TILE), a - tlo : b - tlo]  # no padding
                if rho2.min() < 0.0:  # a rounding below zero where the array is blind
                    np.maximum(rho2, 0.0, out=rho2)
                np.sqrt(rho2, out=rho2)
                if pixel_major:  # the division stores the tile transposed
                    np.divide(
                        snr, rho2.T, out=out[a - pix.start : b - pix.start, lo : lo + _ROW_TILE]
                    )
                else:
                    np.divide(
                        snr, rho2, out=out[lo : lo + _ROW_TILE, a - pix.start : b - pix.start]
                    )
    return out


def _chunk_pixels(pixels):
    """Pixels per block: a positive int (validated once for every map path)."""
    pixels = int(pixels)
    if pixels < 1:
        raise InputError(f"pixels: must be a positive number of pixels per block, got {pixels}")
    return pixels


def _pixel_blocks(coef_t, nside, snr, pixels, pixel_major=False):
    import healpy as hp

    npix = hp.nside2npix(nside)
    for lo in range(0, npix, pixels):
        pix = slice(lo, min(lo + pixels, npix))
        yield pix, _h0_block(coef_t, nside, pix, snr, pixel_major)


def _frequency_blocks(coef_t, nside, snr, per, pixels):
    import healpy as hp

    npix = hp.nside2npix(nside)
    n_f = coef_t.shape[0]
    for flo in range(0, n_f, per):
        fs = slice(flo, min(flo + per, n_f))
        out = np.empty((fs.stop - fs.start, npix))
        for lo in range(0, npix, pixels):
            pix = slice(lo, min(lo + pixels, npix))
            out[:, pix] = _h0_block(coef_t[fs], nside, pix, snr)
        yield fs, out


def _post_fit_rows(jobs):
    """post_fit_weights of every job in order, under one BLAS thread setting (the first's)."""
    with single_blas_thread(jobs[0][5]):
        return [
            post_fit_weights(*job[:5], blas_threads=None, background=job[6]).value for job in jobs
        ]


def _map_jobs(jobs, workers):
    """post_fit_weights over ``jobs`` in order, in this process or in ``workers`` processes."""
    if workers <= 1 or len(jobs) < 2:
        with single_blas_thread(jobs[0][5]):
            for job in jobs:
                yield post_fit_weights(*job[:5], blas_threads=None, background=job[6]).value
        return
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    # fork shares the loaded modules (no re-import); elsewhere the platform default
    methods = multiprocessing.get_all_start_methods()
    ctx = multiprocessing.get_context("fork" if "fork" in methods else None)
    size = max(1, len(jobs) // (8 * workers))
    chunks = [jobs[i : i + size] for i in range(0, len(jobs), size)]
    with ProcessPoolExecutor(max_workers=workers, mp_context=ctx) as pool:
        for rows in pool.map(_post_fit_rows, chunks):
            yield from rows


# -------------------------------------------------------------- validation
def _check_snr(snr):
    snr = float(snr)
    if not np.isfinite(snr) or snr <= 0:
        raise InputError(f"snr: must be positive, got {snr!r}")
    return snr


def _check_frequency(frequency):
    f = np.atleast_1d(quantity(frequency, u.Hz, "frequency"))
    if np.any(f.value <= 0):
        raise InputError(f"frequency: must be positive, got {f[f.value <= 0][0]}")
    return f


def _single_coord(coord):
    from astropy.coordinates import SkyCoord

    if not isinstance(coord, SkyCoord) or not coord.isscalar:
        raise InputError("coord: give one astropy SkyCoord position (or None for sky-averaged)")
    return coord


def _coord_vector(coord):
    return antenna.coord_to_vectors(_single_coord(coord))


def _validate_array(arr):
    n = len(arr.names)
    if n == 0:
        raise ArrayError("pulsar list is empty: add at least one pulsar")
    for attr in ("toa_rms", "cadence", "start_mjd", "end_mjd", "red_amp", "red_gamma"):
        if np.size(getattr(arr, attr)) != n:
            raise ArrayError(f"{attr}: needs one value per pulsar ({n})")
    if len(set(arr.names)) != n:
        dup = next(x for x in arr.names if arr.names.count(x) > 1)
        raise ArrayError(f"name: {dup!r} appears twice: pulsar names must be unique")

    def fail(i, msg):
        raise ArrayError(f"row {i + 1} ({arr.names[i]}): {msg}")

    checks = [
        (arr.toa_rms.value, "toa_rms", "give a positive TOA rms in us"),
        (arr.cadence.value, "cadence", "give a positive interval between TOAs in days"),
    ]
    for values, col, fix in checks:
        bad = np.flatnonzero(~(np.isfinite(values) & (values > 0)))
        if bad.size:
            fail(bad[0], f"{col} = {values[bad[0]]:g} is not positive and finite: {fix}")
    for col in ("start_mjd", "end_mjd"):
        bad = np.flatnonzero(~np.isfinite(getattr(arr, col)))
        if bad.size:
            fail(bad[0], f"{col} is not finite: give the epoch as an MJD")
    span = arr.end_mjd - arr.start_mjd
    bad = np.flatnonzero(span < 365.25)
    if bad.size:
        fail(
            bad[0],
            f"span is {span[bad[0]] / 365.25:.3g} yr: the astrometric fit needs at "
            "least 1 yr of timing (end_mjd > start_mjd + 365.25)",
        )
    ntoa = np.floor(span / arr.cadence.value + 1e-9) + 1
    bad = np.flatnonzero(ntoa < _MIN_TOAS)
    if bad.size:
        fail(
            bad[0],
            f"cadence gives only {int(ntoa[bad[0]])} TOAs over the span; the fit "
            f"needs at least {_MIN_TOAS}: shorten the cadence",
        )
    bad = np.flatnonzero(arr.red_amp < 0)
    if bad.size:
        fail(
            bad[0],
            f"red_amp = {arr.red_amp[bad[0]]:g} is negative: give the amplitude A "
            "(not log10 A; use 10**value), or 0 for no red noise",
        )
    bad = np.flatnonzero((arr.red_amp > 0) & ~np.isfinite(arr.red_gamma))
    if bad.size:
        fail(bad[0], "red_amp is set but red_gamma is missing: give the spectral index gamma")
    # the documented ranges of the input policy, for every row (the same as anywhere else)
    rows = [f"{i + 1}, {x}" for i, x in enumerate(arr.names)]
    red = arr.red_amp > 0
    try:
        check_field(arr.cadence, "cadence", rows=rows)
        check_field(span * u.d, "span", "span (end_mjd - start_mjd)", rows=rows)
        check_field(arr.red_amp, "red_amp", rows=rows)
        check_field(
            arr.red_gamma[red],
            "red_gamma",
            rows=[r for r, keep in zip(rows, red, strict=True) if keep],
        )
    except InputError as err:
        raise ArrayError(str(err)) from err
    if arr.distance is not None:
        d = arr.distance.value
        bad = np.flatnonzero(~np.isnan(d) & ~(d > 0))
        if bad.size:
            fail(bad[0], "distance must be positive (kpc) or blank")
