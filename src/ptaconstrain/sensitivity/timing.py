"""Pulsar noise and the timing-model fit: how much of a sinusoid survives in one pulsar.

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
is C = sigma^2 I + F Phi F^T (:func:`red_noise_basis`).  K is the last mode
with P_r >= 1e-4 P_w (at most min(100, N/4)); above it red noise is negligible.

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
amplitude (see :mod:`ptaconstrain.sensitivity.antenna`).  C^-1 is applied
through the Woodbury identity, so the cost is O(N (9 + 2K) n_f) per pulsar
with no N x N matrix: one Cholesky factor of the 2K x 2K matrix and one
triangular solve serve every frequency at once.  The N x n_f cosines and
sines are built by angle addition on the pulsar's regular TOA schedule
(about sqrt(N) sines per frequency, corrected to first order for each
epoch's rounding offset from the grid, so as exact as taking each sine
directly; irregular epochs take each sine directly).  The weights far below
the white-noise level (a signal the fit absorbs almost wholly, e.g. 5e-7 of
it at f ~ 1/T) are a difference of two nearly equal sums and carry a relative
rounding error of order 1e-16 / 5e-7 whichever way they are summed: up to a
few 1e-9 against an 80-bit reference, for this code and the code before the
batched sines alike (benchmarks/bench_array.py).

Analytic approximation
----------------------
:func:`approximate_weights` uses w(f) ~ N dt / P(f), P = P_w + P_r, the
continuum limit without fit losses.  Its domain: f >= 4 / T_p, more than
2 / T_p away from 1/yr and 2/yr, and below the Nyquist frequency 1 / (2 dt).
There it agrees with the exact weight to within 8% for white-noise pulsars and
within 15% where red noise dominates (measured in
tests/sensitivity/test_timing.py; the remaining difference is the fit and the
discrete Fourier basis).  Outside that domain (the 1/T roll-off, the notches
at 1/yr and 2/yr) use the exact weights.

BLAS threads
------------
The matrices of one pulsar have a few hundred rows; a multi-threaded BLAS
spends far more on waking and synchronising its threads than on the
arithmetic (a 200 x 200 Cholesky: about 100 ms with two OpenBLAS threads,
0.3-2 ms with one, on a busy 2-core machine).  :func:`post_fit_weights`
therefore runs with one BLAS thread by default (:func:`single_blas_thread`,
through threadpoolctl of the joblib / scikit-learn developers), and
:meth:`~ptaconstrain.sensitivity.PulsarArray.weights` can spread pulsars over
processes instead.  The arithmetic is the same either way.
"""

import numpy as np
from astropy import units as u

__all__ = [
    "F_YR",
    "SIDEREAL_YEAR",
    "N_TIMING_PARAMETERS",
    "white_noise_psd",
    "red_noise_psd",
    "timing_design_matrix",
    "red_noise_basis",
    "post_fit_weights",
    "approximate_weights",
    "single_blas_thread",
]

#: Reference frequency of the red-noise power law, 1 / (365.25 d).
F_YR = (1.0 / u.yr).to(u.Hz)
#: Orbital period of the Earth relative to the stars (Astronomical Almanac, from memory).
SIDEREAL_YEAR = 365.256363004 * u.d
_MJD_J2000 = 51544.5
#: Columns of :func:`timing_design_matrix`.
N_TIMING_PARAMETERS = 9
_DAY = 86400.0
_F_YR_HZ = F_YR.value
_PSD_UNIT = u.s**2 / u.Hz
_PER_S2 = u.s**-2
_PHASOR_MIN_TOAS = 16  # fewer TOAs: every phasor directly (see _phasors)
_PHASOR_MAX_CORRECTION = 1e-8  # rad; largest phase offset applied to first order
_CONTROLLER = []  # the threadpoolctl controller, made on first use (after scipy.linalg loads)


def single_blas_thread(threads=1):
    """Context manager limiting the BLAS libraries of this process to ``threads`` threads.

    Parameters
    ----------
    threads : int or None
        None leaves the libraries' own setting (a no-op context).

    Returns
    -------
    context manager

    Examples
    --------
    >>> import numpy as np
    >>> with single_blas_thread():
    ...     x = np.linalg.solve(np.eye(3), np.ones(3))
    >>> x
    array([1., 1., 1.])
    """
    import contextlib

    if threads is None:
        return contextlib.nullcontext()
    if not _CONTROLLER:
        import scipy.linalg  # noqa: F401  (load its BLAS before the controller looks)
        from threadpoolctl import ThreadpoolController

        _CONTROLLER.append(ThreadpoolController())
    return _CONTROLLER[0].limit(limits=int(threads), user_api="blas")


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

    Examples
    --------
    >>> from astropy import units as u
    >>> white_noise_psd(1 * u.us, 1 * u.s)
    <Quantity 2.e-12 s2 / Hz>
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

    Examples
    --------
    >>> from astropy import units as u
    >>> f_yr = 1 / u.yr
    >>> red_noise_psd(f_yr, 1e-14, 13 / 3).to(u.s**2 / u.Hz)   # A^2 / (12 pi^2) f_yr^-3
    <Quantity 2.654e-08 s2 / Hz>
    """
    return _red_psd(u.Quantity(frequency, u.Hz).value, amplitude, gamma) * _PSD_UNIT


def _red_psd(f, amplitude, gamma):
    """:func:`red_noise_psd` on plain numbers: f in Hz, the PSD in s^2 / Hz."""
    amp = np.asarray(amplitude, float)
    gamma = np.where(amp > 0, np.asarray(gamma, float), 0.0)
    return amp**2 / (12.0 * np.pi**2) * _F_YR_HZ**-3 * (np.asarray(f) / _F_YR_HZ) ** (-gamma)


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

    Examples
    --------
    >>> import numpy as np
    >>> timing_design_matrix(np.linspace(55000.0, 58650.0, 100)).shape
    (100, 9)
    """
    mjd = np.asarray(mjd, float)
    span = max(mjd[-1] - mjd[0], 1.0)
    x = (mjd - 0.5 * (mjd[0] + mjd[-1])) / span
    a = 2.0 * np.pi * (mjd - _MJD_J2000) / SIDEREAL_YEAR.to_value(u.d)
    ca, sa = np.cos(a), np.sin(a)
    m = np.stack(
        [np.ones_like(x), x, x**2, ca, sa, x * ca, x * sa, np.cos(2 * a), np.sin(2 * a)], axis=1
    )
    return m / np.sqrt(np.mean(m**2, axis=0))


def red_noise_basis(t, span, toa_rms, cadence, red_amp, red_gamma, background=None):
    """Fourier basis F and prior variances Phi of a pulsar's red noise.

    With ``background`` (an object with ``amplitude`` and ``gamma``, e.g.
    :class:`~.background.Background`) its power law is added to the pulsar's
    own on the same modes: P = P_r + P_b.

    Modes f_k = k / T_p, k = 1..K, sine and cosine, each of variance
    P_r(f_k) / T_p, with K the last mode where P_r >= 1e-4 P_w (at most
    min(100, N / 4)); see the module docstring.

    Parameters
    ----------
    t : Quantity (N,) [time]
        TOA times (any origin).
    span : Quantity [time]
        The pulsar's span T_p.
    toa_rms, cadence : Quantity [time]
        White noise, for the cut at 1e-4 P_w.
    red_amp, red_gamma : float
        Power law (A, gamma); A = 0 for none.
    background : Background, optional
        A common red process, treated as this pulsar's own (no correlations).

    Returns
    -------
    (ndarray (N, 2K), Quantity (2K,) [s^2]) or None
        None when the red noise is negligible at every mode.

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> t = np.arange(0.0, 3652.5, 14.0) * u.d
    >>> red_noise_basis(t, 10 * u.yr, 1 * u.us, 14 * u.d, 0.0, 0.0) is None   # no red noise
    True
    >>> basis, power = red_noise_basis(t, 10 * u.yr, 1 * u.us, 14 * u.d, 1e-14, 13 / 3)
    >>> basis.shape[0] == t.size and basis.shape[1] == power.size
    True
    """
    if not (red_amp > 0 or background is not None):
        return None
    t = u.Quantity(t, u.s).value
    span = u.Quantity(span, u.s).value
    pw = white_noise_psd(u.Quantity(toa_rms, u.s), u.Quantity(cadence, u.s)).value
    red = _red_modes(t, span, pw, red_amp, red_gamma, background)
    return None if red is None else (red[0], red[1] * u.s**2)


def _red_modes(t, span, pw, red_amp, red_gamma, background):
    """:func:`red_noise_basis` on plain numbers (t, span in s; pw in s^2 / Hz; Phi in s^2)."""
    if not (red_amp > 0 or background is not None):
        return None
    kmax = int(min(100, t.size // 4))
    fk = np.arange(1, kmax + 1) / span
    pr = _red_psd(fk, red_amp, red_gamma)
    if background is not None:
        pr = pr + _red_psd(fk, background.amplitude, background.gamma)
    keep = np.flatnonzero(pr >= 1e-4 * pw)
    if keep.size == 0:
        return None
    fk, pr = fk[: keep[-1] + 1], pr[: keep[-1] + 1]
    modes = _phasors(t, 2.0 * np.pi * fk)
    basis = np.concatenate([modes.real, modes.imag], axis=1)
    return basis, np.tile(pr / span, 2)


def _phasors(t, omega):
    """exp(i omega t) for every epoch and angular frequency: complex (N, n).

    The direct route takes a cosine and a sine of every N x n phase.  TOAs on a
    regular schedule t_k = t_0 + k h (up to rounding, as every pulsar of a
    :class:`~.pulsar_array.PulsarArray`) need only about sqrt(N) n of them:
    with k = j B + i (B ~ sqrt(N)),
    exp(i omega t_k) = exp(i omega T_j) exp(i omega h)^i exp(i omega e_k)
    (the powers by repeated products, i < B: at most ~B 1e-16 of rounding),
    T_j = t_0 + j B h and e_k = (t_k - T_j) - i h the (tiny) offset of the
    actual epoch from the regular one, applied to first order,
    exp(i d) = 1 + i d, when every |d| = |omega e_k| <= 1e-8 rad (the
    neglected d^2 / 2 is below double precision).  The phase is then as exact
    as omega t_k rounded directly (a few 1e-14 rad at omega t ~ 500 rad), so
    the results agree with the direct route to rounding.  Epochs further from
    a regular grid take the direct route.
    """
    t = np.asarray(t, float)
    omega = np.asarray(omega, float)
    n = t.size
    if n >= _PHASOR_MIN_TOAS:
        block = int(np.ceil(np.sqrt(n)))
        rows = -(-n // block)
        step = (t[-1] - t[0]) / (n - 1)
        starts = t[0] + (block * step) * np.arange(rows)
        offsets = step * np.arange(block)
        j, i = np.divmod(np.arange(n), block)
        off = (t - starts[j]) - offsets[i]
        if np.max(np.abs(off)) * np.max(np.abs(omega), initial=0.0) <= _PHASOR_MAX_CORRECTION:
            coarse = _direct_phasors(starts, omega)
            fine = np.empty((block, omega.size), complex)  # exp(i omega h)^i: i < B products
            fine[0] = 1.0
            fine[1:] = _direct_phasors(offsets[1:2], omega)
            np.multiply.accumulate(fine, axis=0, out=fine)
            out = np.empty((rows * block, omega.size), complex)
            np.multiply(coarse[:, None, :], fine[None, :, :], out=out.reshape(rows, block, -1))
            out = out[:n]
            d = np.multiply.outer(off, omega)  # first order: exp(i d) = 1 + i d
            re, im = out.real, out.imag
            d_im = d * im
            d *= re
            re -= d_im
            im += d
            return out
    return _direct_phasors(t, omega)


def _direct_phasors(t, omega):
    """exp(i omega t) from a cosine and a sine per element (the reference route)."""
    arg = np.multiply.outer(t, omega)
    out = np.empty(arg.shape, complex)
    np.cos(arg, out=out.real)
    np.sin(arg, out=out.imag)
    return out


def post_fit_weights(
    mjd, toa_rms, frequency, red_amp=0.0, red_gamma=0.0, blas_threads=1, background=None
):
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
    blas_threads : int or None
        BLAS threads for this pulsar's matrix algebra (module docstring);
        None leaves the library's setting.
    background : Background, optional
        A common red process (:mod:`.background`) added to this pulsar's noise
        covariance, exactly, on its red-noise basis; cross-pulsar correlations
        are not part of a single pulsar's weight.

    Returns
    -------
    Quantity (n_f,) [1 / s^2]

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> mjd = np.arange(53000.0, 53000.0 + 3652.5, 14.0)          # 10 yr, every 14 d
    >>> w = post_fit_weights(mjd, 1 * u.us, [0.5, 10.0] * u.nHz)
    >>> w.unit
    Unit("1 / s2")
    >>> flat = approximate_weights(mjd.size, 14 * u.d, white_noise_psd(1 * u.us, 14 * u.d))
    >>> (w / flat).to_value("").round(2)   # the timing fit absorbs slow signals
    array([0.  , 0.95])
    """
    with single_blas_thread(blas_threads):
        return _post_fit_weights(mjd, toa_rms, frequency, red_amp, red_gamma, background)


def _post_fit_weights(mjd, toa_rms, frequency, red_amp, red_gamma, background=None):
    from scipy import linalg

    mjd = np.asarray(mjd, float)
    t = (mjd - 0.5 * (mjd[0] + mjd[-1])) * _DAY
    sig = toa_rms.to_value(u.s)
    cadence = (mjd[-1] - mjd[0]) * _DAY / max(mjd.size - 1, 1)
    span = (mjd[-1] - mjd[0]) * _DAY
    f = np.atleast_1d(u.Quantity(frequency, u.Hz).value)
    m = timing_design_matrix(mjd)
    # q = [cos f1, sin f1, cos f2, ...] (the complex phasors viewed as pairs of reals):
    # every product below is one matrix product over all frequencies at once.
    q = _phasors(t, 2.0 * np.pi * f).view(float)
    a_mm = m.T @ m  # sig^2 M^T C^-1 M, white part
    a_mq = m.T @ q  # sig^2 M^T C^-1 Q
    d_qq = np.einsum("ij,ij->j", q, q)  # diagonal of sig^2 Q^T C^-1 Q
    pw = 2.0 * sig**2 * cadence  # white_noise_psd, s^2 / Hz
    red = _red_modes(t, span, pw, red_amp, red_gamma, background)
    if red is not None:
        basis, phi = red
        # Woodbury: C = sig^2 (I + F D F^T), C^-1 = sig^-2 (I - F K^-1 F^T), K = D^-1 + F^T F
        kmat = np.diag(sig**2 / phi) + basis.T @ basis
        chol = linalg.cholesky(kmat, lower=True, check_finite=False)
        z_m = linalg.solve_triangular(chol, basis.T @ m, lower=True, check_finite=False)
        z_q = linalg.solve_triangular(chol, basis.T @ q, lower=True, check_finite=False)
        a_mm -= z_m.T @ z_m
        a_mq -= z_m.T @ z_q
        d_qq -= np.einsum("ij,ij->j", z_q, z_q)

    lam, vec = np.linalg.eigh(a_mm)
    ok = lam > lam[-1] * 1e-12  # drop degenerate fit directions (pseudo-inverse)
    proj = vec[:, ok] / np.sqrt(lam[ok])
    fit = np.sum((proj.T @ a_mq) ** 2, axis=0)
    post = d_qq - fit
    w = (post[0::2] + post[1::2]) / (2.0 * sig**2)
    return np.clip(w, 0.0, None) * _PER_S2


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

    Examples
    --------
    >>> from astropy import units as u
    >>> approximate_weights(100, 1 * u.s, 2e-12 * u.s**3)
    <Quantity 5.e+13 1 / s2>
    """
    return (np.asarray(n_toas) * cadence / noise_psd).to(u.s**-2)
