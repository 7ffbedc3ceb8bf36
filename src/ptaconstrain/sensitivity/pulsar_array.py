"""A pulsar timing array as a noise budget: per-pulsar noise, fit losses, sky-dependent S/N.

The pulsar-list file format and its reader live in :mod:`ptaconstrain.sensitivity.pulsar_list`.

Noise model
-----------
White noise of rms sigma at cadence dt has the one-sided PSD P_w = 2 sigma^2 dt.
Red noise follows the usual PTA power law (e.g. Arzoumanian et al. 2016,
ApJ 821, 13, from memory; one-sided)

    P_r(f) = A^2 / (12 pi^2) f_yr^-3 (f / f_yr)^-gamma,   f_yr = 1 / (365.25 d).

In the time domain the red process is represented on the pulsar's own
Fourier basis, f_k = k / T_p, k = 1..K, with independent sine and cosine
amplitudes of variance P_r(f_k) / T_p (Lentati et al. 2013, PRD 87, 104021;
van Haasteren & Vallisneri 2014, PRD 90, 104012), so that the full covariance
is C = sigma^2 I + F Phi F^T.  K is the last mode with P_r >= 1e-4 P_w (at
most min(100, N/4)); above it red noise is negligible.

Timing-model loss (exact)
-------------------------
Each pulsar's fit is linear in the design matrix M of
:func:`timing_design_matrix`: offset, spin frequency and spin-down (1, t, t^2),
position (cos and sin of the annual phase), proper motion (t times those) and
parallax (cos and sin of twice the annual phase).  A signal s leaves, after a
generalised least-squares fit, rho^2 = s^T G s with
G = C^-1 - C^-1 M (M^T C^-1 M)^-1 M^T C^-1 (e.g. van Haasteren & Levin 2013,
MNRAS 428, 1147, from memory).  The weight of :func:`post_fit_weights`,
w(f) = (c^T G c + s^T G s) / 2 for c, s the cosine and sine at f on the
pulsar's epochs, is exactly the phase-averaged rho^2 of a sinusoid of unit
amplitude (see :mod:`ptaconstrain.sensitivity.antenna`).  C^-1 is applied through the
Woodbury identity, so the cost is O(N (9 + 2K) n_f) per pulsar with no
N x N matrix.

Analytic approximation
----------------------
``method="analytic"`` uses w(f) ~ N dt / P(f), P = P_w + P_r, the continuum
limit without fit losses.  Its domain: f >= 4 / T_p, more than 2 / T_p away
from 1/yr and 2/yr, and below the Nyquist frequency 1 / (2 dt).  There it
agrees with the exact weight to within 8% for white-noise pulsars and within
15% where red noise dominates (measured in tests/test_array.py; the
remaining difference is the fit and the discrete Fourier basis).  Outside
that domain (the 1/T roll-off, the notches at 1/yr and 2/yr) use the exact
method, the default.

Sky map as a matrix product
---------------------------
The orientation-averaged rho^2 of a binary of amplitude h0 at frequency f from
direction n is (h0 / 2 pi f)^2 (8/5) sum_p (F+^2 + Fx^2)(n, p) w_p(f).  The
costly, direction-independent part w[p, f] is computed once per pulsar and
frequency; the sky enters only through F+^2 + Fx^2 = (1 + n.p)^2 / 4.  The map
over all pixels is therefore one product (pattern[pix, p]) @ (w[p, f]).  This
is exact, not an approximation: averaging over the source phase removes the
cross terms between the sine and cosine quadratures (c^T G s) and the
difference c^T G c - s^T G s, whatever the fit does to them; only an S/N at a
fixed, known phase would need them.
"""

import numpy as np
from astropy import units as u

from ..errors import InputError
from . import antenna
from .curve import StrainCurve, noise_psd_for_threshold

__all__ = [
    "ArrayError",
    "PulsarArray",
    "load_array",
    "array_from_table",
    "F_YR",
    "SIDEREAL_YEAR",
    "N_TIMING_PARAMETERS",
    "white_noise_psd",
    "red_noise_psd",
    "timing_design_matrix",
    "post_fit_weights",
    "approximate_weights",
    "check_nside",
]

#: Reference frequency of the red-noise power law, 1 / (365.25 d).
F_YR = (1.0 / u.yr).to(u.Hz)
#: Orbital period of the Earth relative to the stars (Astronomical Almanac, from memory).
SIDEREAL_YEAR = 365.256363004 * u.d
_MJD_J2000 = 51544.5
#: Columns of :func:`timing_design_matrix`.
N_TIMING_PARAMETERS = 9
_MIN_TOAS = 3 * N_TIMING_PARAMETERS
_DAY = 86400.0


class ArrayError(InputError):
    """A pulsar list or array that cannot be used; the message names the fix."""


# --------------------------------------------------------------------- noise
def white_noise_psd(toa_rms, cadence):
    """One-sided PSD of white timing noise, P_w = 2 sigma^2 dt.

    Parameters
    ----------
    toa_rms : Quantity [time]
    cadence : Quantity [time]

    Returns
    -------
    Quantity [s^2 / Hz]
    """
    return (2.0 * toa_rms**2 * cadence).to(u.s**2 / u.Hz)


def red_noise_psd(frequency, amplitude, gamma):
    """One-sided power-law red-noise PSD, P = A^2 / (12 pi^2) f_yr^-3 (f / f_yr)^-gamma.

    Arzoumanian et al. (2016), ApJ 821, 13 (from memory).

    Parameters
    ----------
    frequency : Quantity [frequency]
    amplitude : float or array
        Dimensionless amplitude A (0 for none).
    gamma : float or array
        Spectral index.

    Returns
    -------
    Quantity [s^2 / Hz], broadcast over the inputs.
    """
    x = (frequency / F_YR).to_value(u.dimensionless_unscaled)
    amp = np.asarray(amplitude, float)
    gamma = np.where(amp > 0, np.asarray(gamma, float), 0.0)
    p = amp**2 / (12.0 * np.pi**2) * F_YR.value**-3 * x ** (-gamma)
    return p * u.s**2 / u.Hz


# --------------------------------------------------------------- timing fit
def timing_design_matrix(mjd):
    """Design matrix of the linearised timing model on the epochs ``mjd``.

    Columns: 1, x, x^2 (offset, spin, spin-down; x = (t - t_mid) / T_p),
    cos a, sin a (position), x cos a, x sin a (proper motion), cos 2a, sin 2a
    (parallax), with a = 2 pi (t - J2000) / sidereal year the Earth's orbital
    phase.  Columns are scaled to unit rms.

    Parameters
    ----------
    mjd : array (N,)

    Returns
    -------
    ndarray (N, 9)
    """
    mjd = np.asarray(mjd, float)
    span = max(mjd[-1] - mjd[0], 1.0)
    x = (mjd - 0.5 * (mjd[0] + mjd[-1])) / span
    a = 2.0 * np.pi * (mjd - _MJD_J2000) / SIDEREAL_YEAR.to_value(u.d)
    ca, sa = np.cos(a), np.sin(a)
    m = np.stack([np.ones_like(x), x, x**2, ca, sa, x * ca, x * sa, np.cos(2 * a),
                  np.sin(2 * a)], axis=1)
    return m / np.sqrt(np.mean(m**2, axis=0))


def _red_basis(t, span, toa_rms, cadence, amp, gamma):
    """Fourier basis F (N, 2K) and prior variances Phi (2K,) in s^2, or None."""
    if not amp > 0:
        return None
    pw = white_noise_psd(toa_rms * u.s, cadence * u.s).value
    kmax = int(min(100, t.size // 4))
    k = np.arange(1, kmax + 1)
    fk = k / span
    pr = red_noise_psd(fk * u.Hz, amp, gamma).value
    keep = np.flatnonzero(pr >= 1e-4 * pw)
    if keep.size == 0:
        return None
    fk, pr = fk[: keep[-1] + 1], pr[: keep[-1] + 1]
    arg = 2.0 * np.pi * t[:, None] * fk[None, :]
    basis = np.concatenate([np.cos(arg), np.sin(arg)], axis=1)
    phi = np.tile(pr / span, 2)
    return basis, phi


def post_fit_weights(mjd, toa_rms, frequency, red_amp=0.0, red_gamma=0.0):
    """Exact phase-averaged post-fit S/N^2 of a unit-amplitude sinusoid, per frequency.

    w(f) = (c^T G c + s^T G s) / 2 with G the inverse noise covariance
    projected orthogonally to the timing model (see the module docstring).

    Parameters
    ----------
    mjd : array (N,)
        TOA epochs.
    toa_rms : Quantity [time]
    frequency : Quantity (n_f,) [frequency]
    red_amp, red_gamma : float
        Power-law red noise (A, gamma); A = 0 for none.

    Returns
    -------
    Quantity (n_f,) [1 / s^2]
    """
    from scipy import linalg

    mjd = np.asarray(mjd, float)
    t = (mjd - 0.5 * (mjd[0] + mjd[-1])) * _DAY
    sig = toa_rms.to_value(u.s)
    cadence = (mjd[-1] - mjd[0]) * _DAY / max(mjd.size - 1, 1)
    span = (mjd[-1] - mjd[0]) * _DAY
    f = np.atleast_1d(frequency.to_value(u.Hz))
    m = timing_design_matrix(mjd)
    nm = m.shape[1]
    # b = [M | cos | sin]: every product below is one matrix product over all columns.
    b = np.empty((t.size, nm + 2 * f.size))
    b[:, :nm] = m
    arg = np.multiply.outer(t, 2.0 * np.pi * f)
    np.cos(arg, out=b[:, nm:nm + f.size])
    np.sin(arg, out=b[:, nm + f.size:])
    del arg

    a_mb = m.T @ b  # sig^2 M^T C^-1 B, white part
    d_bb = np.einsum("ij,ij->j", b[:, nm:], b[:, nm:])  # diagonal of sig^2 Q^T C^-1 Q
    red = _red_basis(t, span, sig, cadence, red_amp, red_gamma)
    if red is not None:
        basis, phi = red
        # Woodbury: C = sig^2 (I + F D F^T), C^-1 = sig^-2 (I - F K^-1 F^T), K = D^-1 + F^T F
        kmat = np.diag(sig**2 / phi) + basis.T @ basis
        chol = linalg.cholesky(kmat, lower=True)
        z = linalg.solve_triangular(chol, basis.T @ b, lower=True)
        a_mb -= z[:, :nm].T @ z
        d_bb -= np.einsum("ij,ij->j", z[:, nm:], z[:, nm:])

    lam, vec = np.linalg.eigh(a_mb[:, :nm])
    ok = lam > lam[-1] * 1e-12  # drop degenerate fit directions (pseudo-inverse)
    proj = vec[:, ok] / np.sqrt(lam[ok])
    fit = np.sum((proj.T @ a_mb[:, nm:]) ** 2, axis=0)
    post = d_bb - fit
    w = (post[: f.size] + post[f.size:]) / (2.0 * sig**2)
    return np.clip(w, 0.0, None) * u.s**-2


def approximate_weights(n_toas, cadence, noise_psd):
    """Analytic (continuum, no-fit-loss) weight w(f) ~ N dt / P(f).

    Valid in the domain stated in the module docstring.

    Parameters
    ----------
    n_toas : int or array
    cadence : Quantity [time]
    noise_psd : Quantity [s^2 / Hz]

    Returns
    -------
    Quantity [1 / s^2]
    """
    return (np.asarray(n_toas) * cadence / noise_psd).to(u.s**-2)


# ------------------------------------------------------------------- array
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

    Raises
    ------
    ArrayError
        Naming the row, the column and the fix.
    """

    def __init__(self, names, coord, toa_rms, cadence, start_mjd, end_mjd, red_amp=None,
                 red_gamma=None, distance=None, name="pulsar array", pulsar_term=False):
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
        _validate_array(self)
        self.vectors = antenna.coord_to_vectors(self.coord)
        self._cache = {}

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
        return np.floor((self.end_mjd - self.start_mjd) / self.cadence.to_value(u.d)
                        + 1e-9).astype(int) + 1

    def epochs(self, index):
        """TOA epochs (MJD) of pulsar ``index``: start, start + dt, ..."""
        dt = self.cadence[index].to_value(u.d)
        return self.start_mjd[index] + dt * np.arange(self.n_toas[index])

    # --------------------------------------------------------------- noise
    def noise_psd(self, frequency):
        """Residual-noise PSD of every pulsar, P_w + P_r (one-sided).

        Parameters
        ----------
        frequency : Quantity (n_f,)

        Returns
        -------
        Quantity (n_pulsars, n_f) [s^2 / Hz]
        """
        f = np.atleast_1d(u.Quantity(frequency, u.Hz))
        pw = white_noise_psd(self.toa_rms, self.cadence)[:, None]
        pr = red_noise_psd(f[None, :], self.red_amp[:, None], self.red_gamma[:, None])
        return pw + pr

    def weights(self, frequency, method="exact", callback=None):
        """Post-fit sensitivity weights w[p, f] (phase-averaged rho^2 per unit residual^2).

        The loop over pulsars is kept: each has its own epochs and noise, and
        the work inside is vectorised over frequency (the cost per pulsar is a
        few matrix products of N x (9 + 2K) by N x n_f).  Results are cached
        per frequency grid.

        Parameters
        ----------
        frequency : Quantity (n_f,)
        method : {"exact", "analytic"}
        callback : callable, optional
            Called with 1 after each pulsar (e.g. a click progress bar's update).

        Returns
        -------
        Quantity (n_pulsars, n_f) [1 / s^2]
        """
        f = _check_frequency(frequency)
        key = (method, f.value.tobytes())
        if key in self._cache:
            return self._cache[key]
        if method == "analytic":
            w = approximate_weights(self.n_toas[:, None], self.cadence[:, None],
                                    self.noise_psd(f))
        elif method == "exact":
            rows = []
            for i in range(len(self)):
                rows.append(post_fit_weights(self.epochs(i), self.toa_rms[i], f,
                                             self.red_amp[i], self.red_gamma[i]).value)
                if callback is not None:
                    callback(1)
            w = np.array(rows) * u.s**-2
        else:
            raise ValueError(f"method: {method!r} is unknown; use 'exact' or 'analytic'")
        self._cache[key] = w
        return w

    def check_band(self, f):
        """Raise ValueError for frequencies outside 1/T .. 1/(2 dt), where the array says nothing.

        Parameters
        ----------
        f : Quantity [frequency]
        """
        band = self.default_frequencies(2)
        lo, hi = band[0], band[-1]
        bad = (f < lo * (1 - 1e-9)) | (f > hi * (1 + 1e-9))
        if np.any(bad):
            raise ArrayError(
                f"frequency: {f[bad][0].to_value(u.Hz):.4g} Hz is outside the array's band "
                f"{lo.to_value(u.nHz):.4g}-{hi.to_value(u.nHz):.4g} nHz (1/T to the "
                "Nyquist frequency of the median cadence); bare numbers are Hz, e.g. '8 nHz'")

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

    def snr_squared(self, h0, frequency, coord=None, inclination=None, psi=None,
                    pulsar_term=None, method="exact"):
        """S/N^2 of a circular binary summed over the pulsars (phase-averaged).

        Parameters
        ----------
        h0 : float or array (n_f,)
            Strain amplitude.
        frequency : Quantity (n_f,)
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
            raise ValueError("orientation: give coord, inclination and psi together, "
                             "or omit inclination and psi for the orientation average")
        fp, fx = antenna.antenna_pattern(self.vectors, _coord_vector(coord))
        return antenna.snr_squared(h0, f, w, fp, fx, inclination, psi, term)

    def snr(self, h0, frequency, **kwargs):
        """sqrt of :meth:`snr_squared` (same arguments)."""
        return np.sqrt(self.snr_squared(h0, frequency, **kwargs))

    def strain_psd(self, frequency, coord=None, pulsar_term=None, method="exact"):
        """Equivalent strain-noise PSD in the convention of :mod:`ptaconstrain.sensitivity.curve`.

        S_n = (16/5) T / (rho^2 per unit h0^2), T = :attr:`span`, so that
        ``curves.detection_threshold_h0(S_n, T, snr)`` is the h0 whose mean
        rho^2 (over inclination and polarisation; and sky if ``coord`` is None)
        equals snr^2.

        Returns
        -------
        Quantity (n_f,) [1 / Hz]
        """
        rho2 = self.snr_squared(1.0, frequency, coord=coord, pulsar_term=pulsar_term,
                                method=method)
        return noise_psd_for_threshold(1.0, self.span, np.sqrt(rho2))

    def curve_at(self, coord, snr=5.0, frequency=None, pulsar_term=None, method="exact"):
        """Noise-budget curve (kind ``strain_psd``) at ``coord``, or sky-averaged for None.

        Parameters
        ----------
        coord : SkyCoord or None
        snr : float
            S/N threshold, recorded in the meta.
        frequency : Quantity, optional
            Default :meth:`default_frequencies`.
        pulsar_term : bool, optional
        method : {"exact", "analytic"}

        Returns
        -------
        StrainCurve
        """
        f = self.default_frequencies() if frequency is None else frequency
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
        }
        return StrainCurve(f, psd, "strain_psd", meta=meta)

    def sky_averaged_curve(self, snr=5.0, frequency=None, pulsar_term=None, method="exact"):
        """:meth:`curve_at` with ``coord=None``."""
        return self.curve_at(None, snr, frequency, pulsar_term, method)

    def h0_threshold_map(self, frequencies, nside=32, snr=5.0, pulsar_term=None,
                         callback=None, chunk=65536):
        """HEALPix maps (RING, ICRS) of the h0 reaching S/N ``snr`` (orientation-averaged).

        One matrix product per pixel chunk: pattern[pix, p] @ w[p, f] (see
        the module docstring).

        Parameters
        ----------
        frequencies : Quantity (n_f,)
        nside : int, power of 2
        snr : float
        pulsar_term : bool, optional
        callback : callable, optional
            Called with 1 after each pulsar's weights and each pixel chunk.
        chunk : int
            Pixels per matrix product (bounds memory).

        Returns
        -------
        ndarray (n_f, 12 nside^2), dimensionless h0.
        """
        import healpy as hp

        nside = check_nside(nside)
        snr = _check_snr(snr)
        f = _check_frequency(frequencies)
        self.check_band(f)
        w = self.weights(f, callback=callback)
        term = self._term(pulsar_term)
        # rho^2 per unit h0^2 = pattern @ (0.4 w / (2 pi f)^2 [x 2 with pulsar term])
        scale = antenna.orientation_averaged_snr_squared(1.0, f, w, np.eye(len(self)), term)
        scale_t = np.ascontiguousarray(scale.T)  # (n_f, n_p)
        npix = hp.nside2npix(nside)
        out = np.empty((f.size, npix))
        for lo in range(0, npix, chunk):
            hi = min(lo + chunk, npix)
            vec = np.stack(hp.pix2vec(nside, np.arange(lo, hi)), axis=1)
            out[:, lo:hi] = scale_t @ antenna.pattern_power_grid(self.vectors, vec).T
            if callback is not None:
                callback(1)
        np.sqrt(out, out=out)
        np.divide(snr, out, out=out)
        return out

    def describe(self):
        """Summary as a flat dict of strings (for provenance)."""
        return {
            "array": self.name,
            "n_pulsars": str(len(self)),
            "span": f"{self.span.to_value(u.yr):.4g} yr",
            "toa_rms": f"{self.toa_rms.min().value:.3g}-{self.toa_rms.max().value:.3g} us",
            "red_noise": f"{int(np.sum(self.red_amp > 0))} pulsars",
        }


# -------------------------------------------------------------- validation
def check_nside(nside):
    """Return ``nside`` as int if it is a power of 2 (1..8192), else raise ValueError."""
    try:
        n = int(nside)
    except (TypeError, ValueError):
        n = -1
    if n != nside or n < 1 or n > 8192 or n & (n - 1):
        raise ValueError(f"nside: {nside!r} is not a power of 2: use 8, 16, 32, 64, ...")
    return n


def _check_snr(snr):
    snr = float(snr)
    if not np.isfinite(snr) or snr <= 0:
        raise ValueError(f"snr: must be positive, got {snr!r}")
    return snr


def _check_frequency(frequency):
    try:
        f = np.atleast_1d(u.Quantity(frequency).to(u.Hz))
    except u.UnitsError as err:
        raise ValueError(f"frequency: {frequency} is not a frequency: give it in Hz") from err
    if not np.all(np.isfinite(f.value)) or np.any(f.value <= 0):
        raise ValueError("frequency: must be finite and positive")
    return f


def _single_coord(coord):
    from astropy.coordinates import SkyCoord

    if not isinstance(coord, SkyCoord) or not coord.isscalar:
        raise ValueError("coord: give one astropy SkyCoord position (or None for sky-averaged)")
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
            fail(bad[0], f"{col} = {values[bad[0]]!r} is not positive and finite: {fix}")
    for col in ("start_mjd", "end_mjd"):
        bad = np.flatnonzero(~np.isfinite(getattr(arr, col)))
        if bad.size:
            fail(bad[0], f"{col} is not finite: give the epoch as an MJD")
    span = arr.end_mjd - arr.start_mjd
    bad = np.flatnonzero(span < 365.25)
    if bad.size:
        fail(bad[0], f"span is {span[bad[0]] / 365.25:.3g} yr: the astrometric fit needs at "
                     "least 1 yr of timing (end_mjd > start_mjd + 365.25)")
    ntoa = np.floor(span / arr.cadence.value + 1e-9) + 1
    bad = np.flatnonzero(ntoa < _MIN_TOAS)
    if bad.size:
        fail(bad[0], f"cadence gives only {int(ntoa[bad[0]])} TOAs over the span; the fit "
                     f"needs at least {_MIN_TOAS}: shorten the cadence")
    bad = np.flatnonzero(arr.red_amp < 0)
    if bad.size:
        fail(bad[0], f"red_amp = {arr.red_amp[bad[0]]:g} is negative: give the amplitude A "
                     "(not log10 A; use 10**value), or 0 for no red noise")
    bad = np.flatnonzero((arr.red_amp > 0) & ~np.isfinite(arr.red_gamma))
    if bad.size:
        fail(bad[0], "red_amp is set but red_gamma is missing: give the spectral index gamma")
    if arr.distance is not None:
        d = arr.distance.value
        bad = np.flatnonzero(~np.isnan(d) & ~(d > 0))
        if bad.size:
            fail(bad[0], "distance must be positive (kpc) or blank")


# --------------------------------------------------------------------- I/O


# The reader of the pulsar-list format, re-exported here for convenience.
from .pulsar_list import array_from_table, load_array  # noqa: E402  (needs PulsarArray)
