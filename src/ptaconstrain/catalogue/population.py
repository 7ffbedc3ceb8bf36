"""A simple population model: how many binaries a galaxy holds in the PTA band.

Model (all of it a choice, written down here and in the output meta):

* Massive black-hole binaries form and merge in a galaxy at a steady rate R
  (a parameter, per galaxy).  Each has total mass M = the galaxy's black-hole
  mass and a mass ratio q drawn from p(q) ∝ q^gamma on [q_min, 1]
  (``gamma = -1`` is log-uniform).
* Once gravitational-wave driven, a circular binary spends the Peters (1964)
  residence time tau(f1) - tau(f2) between GW frequencies f1 < f2, with
  tau(f) = (5/256) (G Mz / c^3)^(-5/3) (pi f)^(-8/3)
  (:func:`ptaconstrain.binary.waveform.coalescence_time`), capped at f_ISCO
  (no circular binary exists above it).  In a steady state the expected
  number of binaries in that band is R (tau(f1) - tau(f2)).
* A binary counts as excluded (upper limit) or detectable (noise budget) in a
  band when its h0 exceeds the threshold over the whole band.  The bands are
  the intervals between consecutive tabulated frequencies of the
  sensitivity; as the curve is log-log linear in between, the largest
  h0_threshold / f^(2/3) over a band sits at one of its edges, so this test
  is conservative and exact for the tabulated curve.
* Binaries that chirp within the observing span are counted like the rest
  (as in ``ExclusionMap.excluded``, which flags but keeps them).

Factorisation.  With eta = q/(1+q)^2, h0 = eta S f^(2/3)
(:func:`ptaconstrain.binary.waveform.strain_prefactor`) and tau = (K / eta) f^(-8/3)
where S ∝ Mz^(5/3) / D_L and K ∝ Mz^(-5/3) carry all the mass and distance
dependence.  In band j (edges f_j < f_{j+1}, g_j = max over the edges of
h0_threshold / f^(2/3)) the expected number is therefore

    N_j = R K [f_j^(-8/3) - min(f_{j+1}, f_ISCO)^(-8/3)]_+ W(g_j / S),
    W(e) = int_{q >= q_min, eta(q) > e} p(q) / eta(q) dq,

with W in closed form (:meth:`MassRatioDistribution.inverse_eta_tail`).
The intrinsic scatter of the mass (log-normal in M) is marginalised by
Gauss-Legendre quadrature in the probability-integral transform of log10 M,
restricted to the masses where the summand can be non-zero
(:func:`mass_nodes`, :func:`mass_limits`); nothing loops over galaxies.
"""

import numpy as np
from astropy import units as u

from .._inputs import positive, quantity
from ..binary import waveform as wf
from ..errors import InputError

__all__ = [
    "MassRatioDistribution",
    "PopulationModel",
    "residence_time",
    "band_thresholds",
    "expected_number",
    "mass_nodes",
    "mass_limits",
    "sky_rows",
]

_LN10 = np.log(10.0)
#: Truncation of the log-normal mass scatter, in standard deviations.
TRUNCATE = 5.0


class MassRatioDistribution:
    """Power-law mass-ratio distribution p(q) ∝ q^index on [q_min, 1].

    Parameters
    ----------
    q_min : float
        Smallest mass ratio, 0 < q_min < 1.
    index : float
        Power-law index gamma; -1 (default) is log-uniform in q.

    Examples
    --------
    >>> p = MassRatioDistribution(q_min=0.01, index=-1.0)   # log-uniform on [0.01, 1]
    >>> p.q_min, p.index
    (0.01, -1.0)
    """

    def __init__(self, q_min=0.01, index=-1.0):
        q_min, index = float(q_min), float(index)
        if not (np.isfinite(q_min) and 0.0 < q_min < 1.0):
            raise InputError(f"q_min: must be in (0, 1), got {q_min!r}")
        if not np.isfinite(index):
            raise InputError(f"mass-ratio index: must be finite, got {index!r}")
        self.q_min = q_min
        self.index = index
        self._norm = _power_integral(index, 1.0) - _power_integral(index, q_min)
        self._top = self._antiderivative(1.0)

    def pdf(self, q):
        """Probability density p(q) (zero outside [q_min, 1])."""
        q = np.asarray(q, dtype=float)
        inside = (q >= self.q_min) & (q <= 1.0)
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(inside, q**self.index / self._norm, 0.0)

    def _antiderivative(self, q):
        # p(q)/eta(q) * norm = q^g (1+q)^2 / q = q^(g-1) + 2 q^g + q^(g+1)
        g = self.index
        return (
            _power_integral(g - 1.0, q) + 2.0 * _power_integral(g, q) + _power_integral(g + 1.0, q)
        )

    def inverse_eta_tail(self, q_low):
        """int_{max(q_low, q_min)}^1 p(q) / eta(q) dq, in closed form.

        Parameters
        ----------
        q_low : float or array in [0, 1]

        Returns
        -------
        ndarray (dimensionless), 0 at q_low = 1.
        """
        q = np.clip(np.asarray(q_low, dtype=float), self.q_min, 1.0)
        return (self._top - self._antiderivative(q)) / self._norm

    def tail_from_eta(self, eta_min):
        """W(e): the inverse-eta-weighted fraction of binaries with eta > e.

        Parameters
        ----------
        eta_min : float or array
            NaN (no sensitivity) and values >= 1/4 give 0.

        Returns
        -------
        ndarray (dimensionless).
        """
        e = np.asarray(eta_min, dtype=float)
        ok = e < 0.25  # False for NaN
        q = wf.mass_ratio_from_eta(np.where(ok, e, 0.25))
        return np.where(ok, self.inverse_eta_tail(q), 0.0)

    def describe(self):
        """Short text for provenance metadata."""
        shape = "log-uniform" if self.index == -1.0 else f"p(q) ∝ q^{self.index:g}"
        return f"{shape} on [{self.q_min:g}, 1]"

    def __repr__(self):
        return f"MassRatioDistribution(q_min={self.q_min:g}, index={self.index:g})"


def _power_integral(a, q):
    """Antiderivative of q^a: q^(a+1)/(a+1), or ln q for a = -1."""
    q = np.asarray(q, dtype=float)
    p = a + 1.0
    if p == 0.0:
        return np.log(q)
    if p == 1.0:
        return q.copy()
    if p == -1.0:
        return -1.0 / q
    if p == 2.0:
        return 0.5 * q * q
    return q**p / p


class PopulationModel:
    """Merger rate per galaxy and mass-ratio distribution of its binaries.

    Parameters
    ----------
    rate : Quantity [1/time] or float (per yr)
        Binaries merging per galaxy per unit time, R.  The default, one per
        10 Gyr, is illustrative only: every expected number is linear in R,
        so the ranking does not depend on it.
    mass_ratio : MassRatioDistribution, optional
        Default log-uniform on [0.01, 1].

    Examples
    --------
    >>> from astropy import units as u
    >>> model = PopulationModel(rate=1e-10 / u.yr)
    >>> model.rate
    <Quantity 1.e-10 1 / yr>
    """

    def __init__(self, rate=1e-10 / u.yr, mass_ratio=None):
        self.rate = positive(quantity(rate, 1 / u.yr, "rate"), "rate", allow_zero=True)
        self.mass_ratio = mass_ratio if mass_ratio is not None else MassRatioDistribution()

    def describe(self):
        """Dict of strings for provenance metadata."""
        return {
            "merger_rate_per_galaxy": f"{self.rate.to_value(1 / u.yr):.6g} / yr",
            "mass_ratio_distribution": self.mass_ratio.describe(),
            "residence_time": "Peters (1964) quadrupole inspiral, capped at f_ISCO",
        }


def residence_time(total_mass, mass_ratio, f_low, f_high, redshift=0.0):
    """Observer-frame time a circular binary spends between two GW frequencies.

    tau(f_low) - tau(min(f_high, f_ISCO)), with tau the Peters (1964)
    time to coalescence (:func:`ptaconstrain.binary.waveform.coalescence_time`) and
    f_ISCO from :func:`ptaconstrain.binary.waveform.isco_frequency`; zero when the
    band lies above f_ISCO.

    Parameters
    ----------
    total_mass : Quantity [mass]
    mass_ratio : float or array, 0 < q <= 1
    f_low, f_high : Quantity [frequency], f_low <= f_high
    redshift : float or array

    Returns
    -------
    Quantity [yr], broadcast over the inputs.
    """
    f_isco = wf.isco_frequency(total_mass, redshift)
    lo = np.minimum(f_low.to(u.Hz), f_isco)
    hi = np.minimum(f_high.to(u.Hz), f_isco)
    dt = wf.coalescence_time(total_mass, mass_ratio, lo, redshift) - wf.coalescence_time(
        total_mass, mass_ratio, hi, redshift
    )
    return np.maximum(dt, 0 * u.yr)


def band_thresholds(frequency, h0_threshold):
    """Per-band threshold on S: g_j = max of h0_threshold / f^(2/3) over the band edges.

    Parameters
    ----------
    frequency : Quantity [frequency], shape (nf,)
        Band edges (strictly increasing).
    h0_threshold : array, shape (..., nf)
        Threshold strain at the edges (NaN where the curve says nothing).

    Returns
    -------
    ndarray, shape (..., nf - 1), in Hz^(-2/3); NaN where either edge is NaN.
    """
    f = frequency.to_value(u.Hz)
    g = np.asarray(h0_threshold, dtype=float) / f ** (2.0 / 3.0)
    return np.maximum(g[..., :-1], g[..., 1:])


def mass_nodes(log_mass, log_mass_sigma, lower, upper, n_nodes=16, truncate=TRUNCATE):
    """Quadrature over a normal log10 M for a function that vanishes outside [lower, upper].

    E[F] = int F(u) N(u; mu, sigma) du = int_{v_lo}^{v_hi} F(mu + sigma Phi^-1(v)) dv
    with v = Phi((u - mu) / sigma) (the probability integral transform), taken
    with ``n_nodes``-point Gauss-Legendre on [v_lo, v_hi] =
    [Phi((lower - mu)/sigma), Phi((upper - mu)/sigma)].  In v the integrand is
    smooth apart from the onset at ``lower``, so a few nodes reach ~0.2%
    (tested against adaptive quadrature); intervals in the upper tail are
    mapped through the survival function for precision.  Rows with sigma = 0
    get one node of weight 1 at mu.  The normal is truncated at ``truncate``
    standard deviations (not renormalised: 5 sigma drops 6e-7 of the
    probability), so that galaxies whose mass would have to lie further out
    contribute exactly nothing and cost nothing.

    Parameters
    ----------
    log_mass, log_mass_sigma : array (n,)
        Mean and standard deviation of u = log10 M.
    lower, upper : array (n,)
        F(u) = 0 outside [lower, upper].
    n_nodes : int
    truncate : float
        Truncation of the normal, in standard deviations.

    Returns
    -------
    (ndarray, ndarray)
        Nodes u and weights, shape (n, n_nodes); weights are 0 where the
        interval is empty (or below double precision).
    """
    from scipy.special import ndtr, ndtri

    n_nodes = int(n_nodes)
    if n_nodes < 1:
        raise InputError(f"n_nodes: must be >= 1, got {n_nodes}")
    mu = np.asarray(log_mass, dtype=float)
    sig = np.asarray(log_mass_sigma, dtype=float)
    t, w = np.polynomial.legendre.leggauss(n_nodes)
    t, w = 0.5 * (t + 1.0), 0.5 * w
    spread = sig > 0
    s = np.where(spread, sig, 1.0)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        z0 = np.maximum((np.asarray(lower, dtype=float) - mu) / s, -truncate)
        z1 = np.minimum((np.asarray(upper, dtype=float) - mu) / s, truncate)
        upper_tail = z0 > 0  # map through the survival function there
        a = np.where(upper_tail, ndtr(-z1), ndtr(z0))
        b = np.where(upper_tail, ndtr(-z0), ndtr(z1))
        # where the lower limit (the onset of F, a square-root kink) is inside, nodes
        # are spread as t^2 from it: the kink becomes smooth in t
        onset = z0 > -truncate
        tt = np.where(onset[:, None], t[None, :] ** 2, t[None, :])
        jac = np.where(onset[:, None], 2.0 * t[None, :], 1.0)
        # in the upper tail v runs the other way: the onset is at b
        frac = np.where(upper_tail[:, None], 1.0 - tt, tt)
        v = a[:, None] + (b - a)[:, None] * frac
        x = np.where(upper_tail[:, None], -ndtri(v), ndtri(v))
    nodes = mu[:, None] + s[:, None] * x
    weights = np.where(z1 > z0, b - a, 0.0)[:, None] * (w * jac)
    # no scatter: F(mu) itself, if mu lies in the interval
    point = ~spread
    inside = point & (mu > lower) & (mu < upper)
    nodes[point] = mu[point, None]
    weights[point] = 0.0
    weights[inside, 0] = 1.0
    weights[~np.isfinite(nodes)] = 0.0
    nodes[~np.isfinite(nodes)] = 0.0
    return nodes, weights


# Constants of the factorisation for M = 1 solMass, D_L = 1 Mpc, f = 1 Hz.
def _unit_constants():
    one = 1.0 * u.Msun
    log_s1 = np.log10(wf.strain_prefactor(one, 1.0 * u.Mpc).to_value(u.Hz ** (-2.0 / 3.0)))
    # tau = (K / eta) f^(-8/3): K = eta * tau at f = 1 Hz, from q = 1 (eta = 1/4)
    log_k1 = np.log10(0.25 * wf.coalescence_time(one, 1.0, 1.0 * u.Hz).to_value(u.yr))
    log_isco1 = np.log10(wf.isco_frequency(one).to_value(u.Hz))
    return log_s1, log_k1, log_isco1


_CONST = None


def _constants():
    global _CONST
    if _CONST is None:
        _CONST = _unit_constants()
    return _CONST


def mass_limits(distance, redshift, frequency, h0_threshold, sky_index=None):
    """Range of log10 M (rest frame) outside which no binary is excluded (detectable).

    Below ``lower`` even an equal-mass binary stays under the threshold in
    every band (S / 4 < min_j g_j); above ``upper`` the ISCO frequency lies
    below the lowest band.

    Parameters
    ----------
    distance : Quantity [length] (n,)
    redshift : array (n,)
    frequency : Quantity [frequency] (nf,)
    h0_threshold : array (nf,) or (G, nf)
    sky_index : array of int (n,), optional
        Row of ``h0_threshold`` for each galaxy (see :func:`expected_number`).

    Returns
    -------
    (ndarray, ndarray), each (n,).
    """
    log_s1, _, log_isco1 = _constants()
    log_d = np.log10(u.Quantity(distance, u.Mpc).value)
    lz = np.log10(1.0 + np.asarray(redshift, dtype=float))
    g = band_thresholds(frequency, h0_threshold)
    ok = ~np.isnan(g)
    g_min = np.min(np.where(ok, g, np.inf), axis=-1)
    if g.ndim == 2:
        g_min = g_min[sky_rows(sky_index, g.shape[0], log_d.size)]
    f_lo = frequency.to_value(u.Hz)[:-1]
    any_ok = np.any(ok, axis=0) if g.ndim == 2 else ok
    f0 = f_lo[np.argmax(any_ok)] if np.any(any_ok) else np.inf
    with np.errstate(divide="ignore"):
        lower = (np.log10(4.0 * g_min) - log_s1 + log_d) * 0.6 - lz
    upper = log_isco1 - np.log10(f0) - lz
    return lower, upper


def sky_rows(sky_index, n_groups, n):
    """Row of a threshold table for each of ``n`` galaxies.

    Parameters
    ----------
    sky_index : array of int (n,) or None
        None: the only row (``n_groups == 1``) or row i for galaxy i (``n_groups == n``).
    n_groups : int
        Rows of the threshold table.
    n : int
        Number of galaxies.

    Returns
    -------
    ndarray of int64 (n,)
    """
    if sky_index is None:
        if n_groups not in (1, n):
            raise ValueError(f"h0_threshold has {n_groups} rows for {n} galaxies: give sky_index")
        return np.zeros(n, dtype=np.int64) if n_groups == 1 else np.arange(n)
    idx = np.broadcast_to(np.asarray(sky_index, dtype=np.int64), (n,))
    if idx.size and (idx.min() < 0 or idx.max() >= n_groups):
        raise ValueError(f"sky_index: must lie in [0, {n_groups})")
    return idx


def expected_number(
    log_mass,
    log_mass_sigma,
    distance,
    redshift,
    frequency,
    h0_threshold,
    population,
    n_nodes=16,
    sky_index=None,
    max_block=65_536,
):
    """Expected number of excluded (or detectable) binaries per galaxy.

    N = R sum_j E_M[K [f_j^(-8/3) - min(f_{j+1}, f_ISCO)^(-8/3)]_+ W(g_j / S)]
    (see the module docstring), the expectation over a log-normal total
    mass taken with :func:`mass_nodes` between the limits of
    :func:`mass_limits` (outside them the summand vanishes exactly).

    Parameters
    ----------
    log_mass : array (n,)
        Median log10(M / solMass) of the total black-hole mass.
    log_mass_sigma : array (n,)
        1 sigma of log10 M, dex (intrinsic scatter and errors; 0 allowed).
    distance : Quantity [length] (n,)
        Luminosity distance.
    redshift : array (n,)
    frequency : Quantity [frequency] (nf,)
        Band edges, strictly increasing (usually the curve's frequencies).
    h0_threshold : array (nf,) or (G, nf)
        Threshold strain at the edges: one curve, or G sky-dependent ones.
        NaN marks frequencies the curve says nothing about.
    population : PopulationModel
    n_nodes : int
        Quadrature nodes over the mass scatter.
    sky_index : array of int (n,), optional
        Row of ``h0_threshold`` for each galaxy; default: the only row, or
        row i for galaxy i when G = n.
    max_block : int
        Largest number of (galaxy, node, band) elements held at once.

    Returns
    -------
    ndarray (n,), dimensionless.

    Examples
    --------
    >>> from astropy import units as u
    >>> f = [2, 10, 50] * u.nHz
    >>> args = ([10.3, 10.3], [0.3, 0.3], [100, 1000] * u.Mpc, [0.022, 0.2], f,
    ...         [3e-14, 1e-14, 4e-14])
    >>> n1 = expected_number(*args, PopulationModel(rate=1e-10 / u.yr))
    >>> n2 = expected_number(*args, PopulationModel(rate=2e-10 / u.yr))
    >>> bool(n1[0] > n1[1] > 0), bool(abs(n2[0] / n1[0] - 2) < 1e-12)  # nearer wins; N ~ R
    (True, True)
    """
    mu = np.atleast_1d(np.asarray(log_mass, dtype=float))
    n = mu.size
    sig = np.broadcast_to(np.asarray(log_mass_sigma, dtype=float), (n,))
    dist = np.broadcast_to(u.Quantity(distance, u.Mpc), (n,), subok=True)
    z = np.broadcast_to(np.asarray(redshift, dtype=float), (n,))
    rate = np.broadcast_to(population.rate.to_value(1 / u.yr), (n,))
    out = np.zeros(n)
    if n == 0:
        return out
    lower, upper = mass_limits(dist, z, frequency, h0_threshold, sky_index)
    lower, upper = np.broadcast_to(lower, (n,)), np.broadcast_to(upper, (n,))
    # only rows whose (truncated) mass range meets [lower, upper] get nodes: a
    # necessary condition for a positive weight in mass_nodes, with a margin against
    # rounding; the others (most galaxies of a deep catalogue) cost nothing
    reach = (TRUNCATE + 0.01) * np.where(sig > 0, sig, 0.0)
    with np.errstate(invalid="ignore"):
        some = np.flatnonzero((lower < upper) & (mu + reach > lower) & (mu - reach < upper))
    lg_m, weight = mass_nodes(mu[some], sig[some], lower[some], upper[some], n_nodes)
    sub, nodes = np.nonzero(weight > 0)
    if sub.size == 0:
        return out
    rows = some[sub]
    lg_mz = lg_m[sub, nodes] + np.log10(1.0 + z[rows])
    log_s = _constants()[0] + (5.0 / 3.0) * lg_mz - np.log10(dist.value[rows])
    g_band = band_thresholds(frequency, h0_threshold)
    g_band = g_band[None, :] if g_band.ndim == 1 else g_band
    sky = sky_rows(sky_index, g_band.shape[0], n)
    group = sky[rows]
    contrib = _pair_numbers(
        lg_mz, log_s, group, frequency, g_band, population.mass_ratio, max_block
    )
    out = np.bincount(rows, weights=weight[sub, nodes] * contrib, minlength=n)
    return rate * out


def _pair_numbers(lg_mz, log_s, group, frequency, g_band, dist, max_block):
    """K sum_j D_j W(g_j / S) for each (galaxy, node) pair.

    The bands of each sky group are sorted by g; a pair with S gets W = 0
    from every band with g >= S / 4, so only the first k = #(g < S/4) sorted
    bands matter.  Pairs are sorted by k and taken in blocks of about
    ``max_block`` elements, each block dense over its largest k: exact, and
    the work is ~ sum of k instead of pairs x bands.
    """
    _, log_k1, log_isco1 = _constants()
    f = frequency.to_value(u.Hz)
    keep = ~np.all(np.isnan(g_band), axis=0)
    g_band = np.where(np.isnan(g_band), np.inf, g_band)[:, keep]  # no sensitivity: W = 0
    a_all = f[:-1][keep] ** (-8.0 / 3.0)
    b_all = f[1:][keep] ** (-8.0 / 3.0)
    order = np.argsort(g_band, axis=1, kind="stable")  # (G, nb)
    g_s = np.take_along_axis(g_band, order, axis=1)
    a_s, b_s = a_all[order], b_all[order]
    d_s = a_s - b_s  # band weights when f_ISCO lies above the band
    b_top = b_all[-1] if b_all.size else np.inf  # f_ISCO above every band: no capping
    norm = dist._norm
    quarter_s = 0.25 * 10.0**log_s
    # k = number of sorted bands with g < S/4 (plus one, against rounding)
    nb = g_s.shape[1]
    if g_s.shape[0] == 1:
        k = np.searchsorted(g_s[0], quarter_s, side="left")
    else:
        # one searchsorted over all groups: log g shifted by a per-group offset
        lg = np.log(g_s)
        finite = np.isfinite(lg)
        lo = lg[finite].min() if finite.any() else 0.0
        hi = lg[finite].max() if finite.any() else 0.0
        lg = np.where(finite, lg, hi + 1.0)
        width = hi - lo + 4.0
        offset = np.arange(g_s.shape[0]) * width
        flat = (lg - lo + offset[:, None]).ravel()
        key = np.clip(np.log(quarter_s), lo - 1.0, hi + 0.5) - lo + offset[group]
        k = np.searchsorted(flat, key, side="left") - group * nb
    k = np.minimum(k + 1, nb)
    perm = np.argsort(k, kind="stable")
    contrib = np.zeros(lg_mz.size)
    k_sorted = k[perm]
    start = np.searchsorted(k_sorted, 1)  # pairs with k = 0 contribute nothing
    shared = g_s.shape[0] == 1
    while start < perm.size:
        # grow the block while (pairs x largest k) stays within max_block
        stop = min(perm.size, start + max(1, int(max_block) // int(k_sorted[start])))
        while stop < perm.size and (stop - start) * int(k_sorted[stop - 1]) > max_block:
            stop = start + max(1, (stop - start) // 2)
        idx = perm[start:stop]
        kmax = int(k_sorted[stop - 1])
        lm = lg_mz[idx]
        inv_s = 10.0 ** (-log_s[idx])
        if shared:
            g, dd, aa, bb = g_s[:, :kmax], d_s[0, :kmax], a_s[:, :kmax], b_s[:, :kmax]
        else:
            gr = group[idx]
            g, dd, aa, bb = g_s[gr, :kmax], d_s[gr, :kmax], a_s[gr, :kmax], b_s[gr, :kmax]
        wq = _scaled_tails(np.multiply(g, inv_s[:, None]), dist)  # W * norm
        res = wq @ dd if shared else np.einsum("ij,ij->i", wq, dd)
        c = 10.0 ** ((8.0 / 3.0) * (lm - log_isco1))  # f_ISCO^(-8/3)
        capped = np.flatnonzero(c > b_top)  # f_ISCO inside the bands
        if capped.size:
            ac = aa if shared else aa[capped]
            bc = bb if shared else bb[capped]
            dc = np.clip(ac - np.maximum(bc, c[capped, None]), 0.0, None)
            res[capped] = np.einsum("ij,ij->i", wq[capped], dc)
        contrib[idx] = 10.0 ** (log_k1 - (5.0 / 3.0) * lm) * res / norm
        start = stop
    return contrib


def _scaled_tails(eta, dist):
    """W(eta) * norm for a block of eta values, overwriting ``eta`` (the hot loop).

    The same arithmetic, operation for operation, as
    ``dist._top - dist._antiderivative(clip(mass_ratio_from_eta(eta), q_min, 1))``
    (so the same bits), done in place with two temporaries instead of a dozen:
    q = 2 eta / ((1 - 2 eta) + sqrt(1 - 4 eta)); eta >= 1/4 gives q = 1 and W = 0.
    """
    np.minimum(eta, 0.25, out=eta)  # eta >= 0 here (thresholds and S positive)
    root = np.multiply(eta, 4.0)
    np.subtract(1.0, root, out=root)
    np.sqrt(root, out=root)
    q = np.multiply(eta, 2.0)
    np.subtract(1.0, q, out=eta)
    eta += root
    np.divide(q, eta, out=q)
    np.clip(q, dist.q_min, 1.0, out=q)
    if dist.index == -1.0:  # log-uniform: q^-2, q^-1, q^0 -> -1/q + 2 ln q + q
        out = np.divide(-1.0, q, out=root)
        term = np.log(q, out=eta)
        term *= 2.0
        out += term
        out += q
    else:
        out = dist._antiderivative(q)
    return np.subtract(dist._top, out, out=out)
