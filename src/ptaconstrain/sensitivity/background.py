"""The nanohertz background as a noise for continuous-wave forecasts.

A background of many binaries is, for a single continuous wave, a red noise
common to every pulsar.  Its one-sided timing-residual PSD has the power-law
form of the pulsars' own red noise (:func:`~.timing.red_noise_psd`),

    P_b(f) = A^2 / (12 pi^2) f_yr^-3 (f / f_yr)^-gamma,

with gamma = 13/3 for circular binaries driven by GW emission (Phinney 2001,
from memory: h_c ~ f^(-2/3) gives gamma = 3 - 2 alpha = 13/3).  Between
pulsars a and b it is correlated by the Hellings & Downs (1983, ApJ 265, L39)
curve Gamma_ab.

Two treatments:

* **per pulsar (uncorrelated)** -- what every forecast of the package does:
  P_b is added to each pulsar's noise inside its exact post-fit weights
  (:func:`~.timing.post_fit_weights`, the Fourier basis and prior of its red
  noise), and the cross-correlations are dropped.  This is exact for one
  pulsar and for an array whose pulsars' background terms were independent.
* **dense (correlated)** -- :func:`correlated_snr_squared`: the full covariance
  of all TOAs of all pulsars, including Gamma_ab between pulsars, inverted
  densely; for a handful of pulsars only (O(N_TOA^3)), as a check of the first.
  The difference is reported in the README and tested in
  tests/sensitivity/test_background.py.
"""

from dataclasses import dataclass

import numpy as np
from astropy import units as u

from ..errors import InputError
from . import antenna
from .timing import (
    red_noise_basis,
    red_noise_psd,
    single_blas_thread,
    timing_design_matrix,
    white_noise_psd,
)

__all__ = [
    "GAMMA_BINARIES",
    "Background",
    "parse_background",
    "hellings_downs",
    "correlated_snr_squared",
    "DENSE_MAX_TOAS",
]

#: Spectral index of a background of circular, GW-driven binaries.
GAMMA_BINARIES = 13.0 / 3.0
#: Largest total number of TOAs :func:`correlated_snr_squared` accepts.
DENSE_MAX_TOAS = 4000
_AMP_MAX = 1e-12  # far above any measured background: a larger A is a typo (log10 A?)
_DAY = 86400.0


@dataclass(frozen=True)
class Background:
    """A common red process (the background) with amplitude A and spectral index gamma.

    Parameters
    ----------
    amplitude : float
        Characteristic-strain amplitude A at f_yr = 1/yr, in (0, 1e-12].
    gamma : float
        Spectral index of the residual PSD, in [0, 10]; 13/3 by default.

    Examples
    --------
    >>> Background(2.4e-15)
    Background(amplitude=2.4e-15, gamma=4.333333333333333)
    """

    amplitude: float
    gamma: float = GAMMA_BINARIES

    def __post_init__(self):
        a, g = float(self.amplitude), float(self.gamma)
        if not (np.isfinite(a) and 0 < a <= _AMP_MAX):
            raise InputError(
                f"background amplitude: {a:g} is not in (0, {_AMP_MAX:g}]; give A "
                "itself (e.g. 2.4e-15), not log10 A"
            )
        if not (np.isfinite(g) and 0 <= g <= 10):
            raise InputError(
                f"background gamma: {g:g} is not in [0, 10]; 13/3 is the "
                "value for GW-driven circular binaries"
            )
        object.__setattr__(self, "amplitude", a)
        object.__setattr__(self, "gamma", g)

    def psd(self, frequency):
        """One-sided residual PSD P_b(f) (:func:`~.timing.red_noise_psd`).

        Parameters
        ----------
        frequency : Quantity [frequency]

        Returns
        -------
        Quantity [s^2 / Hz]
        """
        return red_noise_psd(frequency, self.amplitude, self.gamma)

    def describe(self):
        """One line for provenance, e.g. 'A = 2.4e-15, gamma = 4.333 (...)'."""
        return (
            f"A = {self.amplitude:.4g}, gamma = {self.gamma:.4g} (common red noise added "
            "to every pulsar, cross-correlations dropped)"
        )


def parse_background(text):
    """``"A"`` or ``"A,gamma"`` as a :class:`Background` (gamma 13/3 when omitted).

    Parameters
    ----------
    text : str

    Returns
    -------
    Background

    Raises
    ------
    InputError
        One line naming the problem.

    Examples
    --------
    >>> parse_background("2.4e-15,3.2").gamma
    3.2
    """
    parts = [p.strip() for p in str(text).split(",")]
    try:
        values = [float(p) for p in parts]
    except ValueError:
        values = []
    if len(values) not in (1, 2):
        raise InputError(
            f"background: cannot read {text!r}; give A or A,gamma, e.g. 2.4e-15 or 2.4e-15,4.333"
        )
    return Background(*values)


def hellings_downs(cos_angle, same_pulsar=False):
    """Hellings & Downs (1983) correlation of an isotropic background between two pulsars.

    Gamma = (3/2) x ln x - x/4 + 1/2 with x = (1 - cos zeta) / 2, plus 1/2 for a
    pulsar with itself (the pulsar term), so that Gamma_aa = 1: the background's
    full PSD P_b in each pulsar.

    Parameters
    ----------
    cos_angle : float or array
        Cosine of the angle zeta between the pulsars.
    same_pulsar : bool or array of bool
        Add the pulsar-term 1/2 (the auto-correlation).

    Returns
    -------
    ndarray

    Examples
    --------
    >>> float(hellings_downs(1.0, same_pulsar=True))
    1.0
    """
    x = (1.0 - np.clip(np.asarray(cos_angle, float), -1.0, 1.0)) / 2.0
    with np.errstate(divide="ignore", invalid="ignore"):
        xlnx = np.where(x > 0, x * np.log(np.where(x > 0, x, 1.0)), 0.0)
    return 1.5 * xlnx - x / 4.0 + 0.5 + 0.5 * np.asarray(same_pulsar, float)


def correlated_snr_squared(array, background, h0, frequency, coord, correlated=True):
    """Orientation-averaged S/N^2 of a binary with the full array covariance (dense).

    The covariance of all TOAs is C = diag(sigma^2) + (each pulsar's red noise)
    + Gamma_ab F Phi_b F^T, the background on a Fourier basis common to all
    pulsars (f_k = k / T, T the array's span, variance P_b(f_k) / T per sine and
    cosine; as :func:`~.timing.red_noise_basis`) with the Hellings & Downs
    correlation between pulsars (``correlated=False`` keeps only Gamma_aa = 1).
    After a generalised least-squares fit of each pulsar's timing model,
    rho^2 = s^T G s, G = C^-1 - C^-1 M (M^T C^-1 M)^-1 M^T C^-1.  Averaged over
    the source phase, polarisation and isotropic inclination,
    E[Z_a Z_b^*] = (h0 / 2 pi f)^2 (8/5) (F+_a F+_b + Fx_a Fx_b) for the
    residual phasors Z, so
    rho^2 = (8/5) (h0 / 2 pi f)^2 sum_ab K_ab (c_a^T G_ab c_b + s_a^T G_ab s_b) / 2,
    K_ab = F+_a F+_b + Fx_a Fx_b, c and s the cosine and sine at f on the TOA
    epochs (one common time origin).  For a = b this is the package's per-pulsar
    weight; the cross terms are what the per-pulsar treatment leaves out.
    The earth term only; dense algebra, for small arrays (at most
    :data:`DENSE_MAX_TOAS` TOAs in total).

    Parameters
    ----------
    array : PulsarArray
    background : Background or None
    h0 : float
        Strain amplitude.
    frequency : Quantity (n_f,) [frequency]
    coord : SkyCoord
        Source position.
    correlated : bool
        Include the Hellings-Downs cross-correlations of the background.

    Returns
    -------
    ndarray (n_f,)

    Examples
    --------
    >>> from astropy import units as u
    >>> from astropy.coordinates import SkyCoord
    >>> from ptaconstrain import PulsarArray
    >>> array = PulsarArray(["Invented A", "Invented B"],
    ...                     SkyCoord([10, 200], [20, -40], unit="deg"), [1, 1] * u.us,
    ...                     [30, 30] * u.d, [55000, 55000], [56826, 56826])
    >>> source = SkyCoord(100, 0, unit="deg")
    >>> alone = correlated_snr_squared(array, None, 1e-14, [10] * u.nHz, source)
    >>> with_bg = correlated_snr_squared(array, Background(2.4e-15), 1e-14, [10] * u.nHz, source)
    >>> bool(with_bg[0] < alone[0])     # the background is one more noise
    True
    """
    from scipy import linalg

    f = np.atleast_1d(u.Quantity(frequency, u.Hz).value)
    n_toas = array.n_toas
    if n_toas.sum() > DENSE_MAX_TOAS:
        raise InputError(
            f"array: {n_toas.sum()} TOAs in total; the dense check handles at "
            f"most {DENSE_MAX_TOAS} (use a few pulsars with a few hundred TOAs)"
        )
    t = [array.epochs(i) * _DAY for i in range(len(array))]
    t0 = np.mean(np.concatenate(t))
    t = [ti - t0 for ti in t]
    sig = array.toa_rms.to_value(u.s)
    cov = linalg.block_diag(
        *[np.full(ti.size, s**2) * np.eye(ti.size) for ti, s in zip(t, sig, strict=True)]
    )
    edges = np.concatenate([[0], np.cumsum(n_toas)])
    # each pulsar's own red noise on its own basis, as the per-pulsar weights have it
    for i, ti in enumerate(t):
        red = red_noise_basis(
            (ti - 0.5 * (ti[0] + ti[-1])) * u.s,
            (ti[-1] - ti[0]) * u.s,
            array.toa_rms[i],
            array.cadence[i],
            array.red_amp[i],
            array.red_gamma[i],
        )
        if red is not None:
            sl = slice(edges[i], edges[i + 1])
            cov[sl, sl] += (red[0] * red[1].to_value(u.s**2)) @ red[0].T
    if background is not None:
        # common modes k / T; the cut of red_noise_basis (P_b >= 1e-4 P_w of the
        # quietest pulsar, at most min(100, N_p / 4) modes)
        all_t = np.concatenate(t)
        span = all_t.max() - all_t.min()
        k = np.arange(1, min(100, int(n_toas.min()) // 4) + 1) / span
        p_b = background.psd(k * u.Hz).value
        p_w = white_noise_psd(array.toa_rms, array.cadence).to_value(u.s**2 / u.Hz).min()
        k = k[: np.flatnonzero(p_b >= 1e-4 * p_w).max(initial=-1) + 1]
        fb = _fourier(all_t, k) * np.sqrt(np.tile(p_b[: k.size] / span, 2))
        cos_ab = array.vectors @ array.vectors.T
        gamma = (
            hellings_downs(cos_ab, same_pulsar=np.eye(len(array), dtype=bool))
            if correlated
            else np.eye(len(array))
        )
        corr = np.repeat(np.repeat(gamma, n_toas, axis=0), n_toas, axis=1)
        cov += corr * (fb @ fb.T)
    design = linalg.block_diag(*[timing_design_matrix(array.epochs(i)) for i in range(len(array))])
    fp, fx = antenna.antenna_pattern(array.vectors, antenna.coord_to_vectors(coord))
    arg = np.multiply.outer(np.concatenate(t), 2 * np.pi * f)
    out = np.zeros(f.size)
    with single_blas_thread():
        chol = linalg.cho_factor(cov, lower=True)
        cinv_m = linalg.cho_solve(chol, design)
        fisher = design.T @ cinv_m
        # sum_ab K_ab x_a^T G_ab x_b = sum_A (F^A x)^T G (F^A x), F^A per TOA
        for pattern in (fp, fx):
            per_toa = np.repeat(pattern, n_toas)[:, None]
            for basis in (np.cos(arg), np.sin(arg)):
                v = per_toa * basis
                g_v = linalg.cho_solve(chol, v) - cinv_m @ linalg.solve(
                    fisher, cinv_m.T @ v, assume_a="pos"
                )
                out += np.einsum("if,if->f", v, g_v)
    amp = np.asarray(h0, float) / (2 * np.pi * f)
    return 1.6 * amp**2 * out / 2.0


def _fourier(t, k):
    arg = 2.0 * np.pi * t[:, None] * k[None, :]
    return np.concatenate([np.cos(arg), np.sin(arg)], axis=1)
