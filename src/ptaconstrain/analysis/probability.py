"""Exclusion probability over the mass-ratio x period plane from host uncertainties.

A black-hole mass is known to 0.1-0.3 dex and a distance to 5-20 %, and the
two are correlated when the mass is dynamical (it scales linearly with the
distance adopted for it).  This module draws Monte-Carlo samples of the host
(:func:`sample_host`) and turns them into the probability that each (q, P)
cell is excluded -- or, for a noise budget, detectable -- and into credible
bounds on the mass ratio (:func:`exclusion_probability`).

Algorithm.  The strain factorises as h0 = eta(q) S f^(2/3)
(:func:`ptaconstrain.binary.waveform.strain_prefactor`); every sample-to-sample
variation (mass, distance and, for a noise budget, the orientation factor
sqrt(g)) is in the scalar S.  Relative to the best-fit host, sample s has
u_s = S_s sqrt(g_s) / S_0, and cell (q, P) is excluded in sample s iff
ln u_s > ln eta_min(P) - ln eta(q), with eta_min of the deterministic
:class:`~ptaconstrain.analysis.exclusion.ExclusionMap`.  Sorting ln u once and answering
every cell with one ``np.searchsorted`` costs O(N log N + cells log N)
instead of the O(N x cells) of a direct comparison.  The credible bound at
credibility c follows in closed form: with u_c the value that a fraction c
of the samples exceed, eta_c = eta_min / u_c and q_c = eta^-1(eta_c)
(:func:`ptaconstrain.binary.waveform.mass_ratio_from_eta`).

Above the ISCO.  f_ISCO depends on the sampled mass only, so whether a cell
is above the ISCO in a sample depends on its period, not on q.  A cell above
the ISCO in a sample counts as *not excluded* in that sample (no such binary
exists, so the PTA rules nothing out there).  This is handled exactly: for
each period the samples above the ISCO are a known subset, and their
contribution is removed with a cumulative count over the (usually few)
samples that are above the ISCO anywhere on the grid.  A column whose every
sample is above the ISCO, or that lies outside the curve's band, has
probability NaN, as in the deterministic map.  The chirping flag does not
change ``excluded`` in the deterministic map and does not enter here either.
"""

import numpy as np
from astropy import constants as const
from astropy import units as u

from ..binary import waveform as wf
from ..sensitivity.curve import ORIENTATION_MEAN, FromCurve

__all__ = [
    "HostSamples",
    "ProbabilityMap",
    "sample_host",
    "exclusion_probability",
    "orientation_factor",
    "distance_sigma",
    "DEFAULT_CREDIBILITY",
]

DEFAULT_CREDIBILITY = (0.5, 0.9, 0.95)
_PERCENTILES = (16.0, 50.0, 84.0)


def orientation_factor(cos_inclination):
    """S/N^2 of an inclined binary relative to the orientation average.

    With h+ = h0 (1 + cos^2 i) cos Phi and hx = 2 h0 cos i sin Phi (the
    quadrupole polarisations for the PTA h0, see
    :func:`ptaconstrain.binary.waveform.strain_amplitude`) the polarisation-averaged
    S/N^2 is proportional to (1 + cos^2 i)^2 + 4 cos^2 i, whose mean over
    isotropic inclination is 16/5 (:data:`ptaconstrain.sensitivity.curve.ORIENTATION_MEAN`),
    the convention of :func:`ptaconstrain.sensitivity.curve.detection_threshold_h0`.  So a
    binary of inclination i has rho^2 = g(i) x (16/5) h0^2 T / S_n with

        g(i) = [(1 + cos^2 i)^2 + 4 cos^2 i] / (16/5),

    from 0.3125 (edge-on) to 2.5 (face-on), mean 1.

    Parameters
    ----------
    cos_inclination : float or array in [-1, 1]

    Returns
    -------
    ndarray, dimensionless.
    """
    c2 = np.asarray(cos_inclination, dtype=float) ** 2
    return ((1.0 + c2) ** 2 + 4.0 * c2) / ORIENTATION_MEAN


def distance_sigma(host):
    """One-sigma Gaussian error of the host's luminosity distance.

    Combines, in quadrature (independent errors), ``host.distance_err`` and
    the distance error implied by ``host.velocity_err``.  A peculiar velocity
    v shifts the observed redshift by d(1+z) = (1+z) v / c, so with
    D_L = (1+z) D_C and dD_C/dz = c / H(z) (Hogg 1999, astro-ph/9905116,
    eqs. 15, 21)

        sigma_D = (1+z) (sigma_v / c) [D_L / (1+z) + (1+z) c / H(z)],

    which is the Hubble-law sigma_v / H0 at z << 1 (D ~ c z / H0).  The host's
    cosmology supplies H(z).

    Parameters
    ----------
    host : Host

    Returns
    -------
    Quantity [Mpc] (zero when the host has no distance error).
    """
    var = 0.0 * u.Mpc**2
    if host.distance_err is not None:
        var = var + host.distance_err.to(u.Mpc) ** 2
    if host.velocity_err is not None and host.velocity_err.value > 0:
        z = host.redshift
        c = const.c.to(u.km / u.s)
        hz = host.cosmology.H(z)
        dd_dz = host.distance / (1.0 + z) + (1.0 + z) * c / hz
        sig = ((1.0 + z) * host.velocity_err / c * dd_dz).to(u.Mpc)
        var = var + sig**2
    return np.sqrt(var).to(u.Mpc)


def _split_normal_dex(z, err_dex):
    """Map standard normals ``z`` to a two-piece normal offset in dex.

    An asymmetric error -lo/+hi is read as the 16th/84th percentiles around
    the median (common practice for quoted asymmetric errors): the offset is
    z * lo for z < 0 and z * hi for z >= 0, so each side holds half of the
    probability, the median is the quoted value and the 15.87 % / 84.13 %
    points are exactly -lo / +hi.  Equal errors give the usual log-normal.
    """
    if err_dex is None:
        return np.zeros_like(z)
    lo, hi = err_dex
    return np.where(z < 0.0, z * lo, z * hi)


def _truncated_normal(uniform, mean, sigma):
    """Inverse-CDF draw of a normal truncated to positive values.

    Non-positive distances are unphysical, so the Gaussian distance error is
    truncated at zero (not clipped): D = mean + sigma * Phi^-1(a + x (1 - a))
    with a = Phi(-mean / sigma) and x uniform in [0, 1).  For the usual
    fractional errors (< 30 %) a < 1e-3 and the truncation is immaterial.
    """
    from scipy import special

    a = special.ndtr(-mean / sigma)
    return mean + sigma * special.ndtri(a + uniform * (1.0 - a))


class HostSamples:
    """Monte-Carlo samples of a host's mass, distance and orientation.

    Attributes
    ----------
    n : int
    seed : int
        Seed of ``numpy.random.default_rng`` that produced the samples.
    mass : Quantity (n,) [solMass]
        Total mass at the sampled distance.
    distance : Quantity (n,) [Mpc]
        Luminosity distance.
    redshift : float
        Held at the host's redshift (a peculiar velocity changes (1+z) by
        ~1e-3, which is neglected in the strain).
    cos_inclination, polarisation : ndarray (n,) or None
        Drawn isotropically (cos i uniform in [-1, 1], psi uniform in
        [0, pi)) when ``orientation`` is set.  For a curve whose S_n is
        averaged over polarisation (the convention of
        :func:`ptaconstrain.sensitivity.curve.detection_threshold_h0`, sky-averaged or at
        a fixed position) psi does not change the S/N; it is kept for
        provenance and for position-resolved uses.
    strain_prefactor : Quantity (n,) [Hz^(-2/3)]
        S of :func:`ptaconstrain.binary.waveform.strain_prefactor` per sample.
    orientation_factor : ndarray (n,) or None
        g of :func:`orientation_factor` per sample.
    isco_frequency : Quantity (n,) [Hz]
    """

    def __init__(self, **fields):
        self.__dict__.update(fields)

    def log_scale(self, reference):
        """ln(S_s sqrt(g_s) / reference), the per-sample scalar of the algorithm.

        Parameters
        ----------
        reference : Quantity [Hz^(-2/3)]
            Usually the best-fit host's strain prefactor.

        Returns
        -------
        ndarray (n,).
        """
        ratio = (self.strain_prefactor / reference).to_value(u.dimensionless_unscaled)
        out = np.log(ratio)
        if self.orientation_factor is not None:
            out = out + 0.5 * np.log(self.orientation_factor)
        return out

    def summary(self):
        """16th/50th/84th percentiles of mass, distance, S (and g if drawn).

        Returns
        -------
        dict name -> Quantity or ndarray of three values (16, 50, 84 %).
        """
        out = {
            "mass": np.percentile(self.mass, _PERCENTILES),
            "distance": np.percentile(self.distance, _PERCENTILES),
            "strain_prefactor": np.percentile(self.strain_prefactor, _PERCENTILES),
        }
        if self.orientation_factor is not None:
            out["orientation_factor"] = np.percentile(self.orientation_factor, _PERCENTILES)
        return out


def sample_host(host, n=100_000, seed=None, orientation=False):
    """Draw Monte-Carlo samples of the host's mass, distance and orientation.

    * Distance: Gaussian with sigma from :func:`distance_sigma` (distance
      error and/or peculiar-velocity error), truncated to D > 0.
    * Mass: log-normal in dex around ``host.mass_at(D_s)``, two-piece for
      asymmetric errors (see ``_split_normal_dex``).  When the host's mass was
      measured at ``mass_distance`` each sample's mass scales linearly with
      its distance, M_s = M_quoted (D_s / D_ref) 10^eps, so that
      h0 ~ M^(5/3) / D ~ D^(2/3) (dynamical masses scale with distance).
    * Orientation (``orientation=True``): cos i uniform in [-1, 1], psi
      uniform in [0, pi).

    The draws are made in a fixed order (mass normals, distance uniforms,
    then orientation) from ``numpy.random.default_rng(seed)``, so a seed
    reproduces the samples exactly.

    Parameters
    ----------
    host : Host
    n : int
        Number of samples (>= 1).
    seed : int, optional
        Default: a fresh seed from ``numpy.random.SeedSequence``, recorded in
        the result so that the run can be repeated.
    orientation : bool
        Draw inclination and polarisation (for noise budgets).

    Returns
    -------
    HostSamples
    """
    n = int(n)
    if n < 1:
        raise ValueError(f"samples: need at least 1 sample, got {n}")
    if seed is None:
        seed = int(np.random.SeedSequence().generate_state(1)[0])  # 32 bits: easy to quote
    try:
        seed = int(seed)
    except (TypeError, ValueError) as err:
        raise ValueError(f"seed: must be an integer, got {seed!r}") from err
    if seed < 0:
        raise ValueError(f"seed: must be >= 0, got {seed}")
    rng = np.random.default_rng(seed)
    z_mass = rng.standard_normal(n)
    x_dist = rng.random(n) + 2.0**-54  # in (0, 1): never exactly 0 (D = 0) or 1
    d0 = host.distance.to(u.Mpc)
    sig = distance_sigma(host)
    if sig.value > 0:
        d = _truncated_normal(x_dist, d0.value, sig.to_value(u.Mpc)) * u.Mpc
    else:
        d = np.full(n, d0.value) * u.Mpc
    eps = _split_normal_dex(z_mass, host.mass_err_dex)
    m = host.mass_at(d).to(u.Msun) * 10.0**eps
    cos_i = psi = g = None
    if orientation:
        cos_i = rng.uniform(-1.0, 1.0, n)
        psi = rng.uniform(0.0, np.pi, n)
        g = orientation_factor(cos_i)
    z = host.redshift
    return HostSamples(
        n=n,
        seed=seed,
        mass=m,
        distance=d,
        redshift=z,
        cos_inclination=cos_i,
        polarisation=psi,
        orientation_factor=g,
        strain_prefactor=wf.strain_prefactor(m, d, z),
        isco_frequency=wf.isco_frequency(m, z),
    )


class ProbabilityMap(FromCurve):
    """Result of :func:`exclusion_probability`; 2-D arrays are indexed [q, P].

    Attributes
    ----------
    mass_ratio : ndarray (nq,)
    period : Quantity (nP,) [yr]
    frequency : Quantity (nP,) [Hz]
    probability : ndarray (nq, nP)
        Fraction of samples in which the cell is excluded (upper limit) or
        detectable (noise budget); NaN outside the curve's band and where
        every sample is above the ISCO.
    credibility : tuple of float
    max_mass_ratio : dict {credibility: ndarray (nP,)}
        q_c(P): mass ratios above q_c are excluded with probability >= c,
        those below are not.  1 where even q = 1 is not excluded with
        that probability; NaN where the probability is NaN.
    above_isco_fraction : ndarray (nP,)
        Fraction of samples for which the period is above the ISCO.
    deterministic : ExclusionMap
        The best-fit map, for comparison.
    samples : HostSamples
    summary : dict
        :meth:`HostSamples.summary`.
    seed : int
    n_samples : int
    orientation : bool
        Whether inclination was sampled (noise budgets).
    """

    def __init__(self, **fields):
        self.__dict__.update(fields)

    @property
    def host(self):
        return self.deterministic.host

    @property
    def curve(self):
        return self.deterministic.curve

    def tightest(self, credibility):
        """Period of the smallest credible ``max_mass_ratio`` and that ratio, or None.

        Periods whose credible bound lies in the chirping region are skipped,
        as in :meth:`ptaconstrain.analysis.exclusion.ExclusionMap.tightest`.

        Parameters
        ----------
        credibility : float, one of ``self.credibility``

        Returns
        -------
        (Quantity [yr], float) or None when nothing is excluded at that credibility.
        """
        qmax = self.max_mass_ratio[_credibility_key(self.max_mass_ratio, credibility)]
        # as ExclusionMap.tightest: skip periods whose bound lies in the chirping region
        chirp = np.nan_to_num(self.deterministic.chirp_mass_ratio, nan=np.inf) < qmax
        qmax = np.where(np.isnan(qmax) | chirp, np.inf, qmax)
        i = int(np.argmin(qmax))
        if not np.isfinite(qmax[i]) or qmax[i] >= 1.0:
            return None
        return self.period[i], float(qmax[i])

    def describe(self):
        """Provenance as a flat dict of strings (for table/figure meta)."""
        out = {
            "probability_samples": str(self.n_samples),
            "probability_seed": str(self.seed),
            "probability_credibility": ", ".join(f"{c:g}" for c in self.credibility),
            "probability_orientation": (
                "cos i uniform in [-1, 1], psi uniform in [0, pi)"
                if self.orientation
                else "not sampled"
            ),
        }
        for name, unit in (("mass", u.Msun), ("distance", u.Mpc)):
            lo, med, hi = self.summary[name].to_value(unit)
            out[f"sampled_{name}"] = f"{med:.4g} (-{med - lo:.3g}/+{hi - med:.3g}) {unit}"
        return out


def _credibility_key(mapping, credibility):
    for key in mapping:
        if np.isclose(key, credibility, rtol=0, atol=1e-12):
            return key
    raise ValueError(
        f"credibility: {credibility!r} was not computed; use one of "
        f"{', '.join(f'{c:g}' for c in mapping)}"
    )


def _check_credibility(credibility):
    levels = tuple(float(c) for c in np.atleast_1d(credibility))
    if not levels or not all(np.isfinite(c) and 0.0 < c <= 1.0 for c in levels):
        raise ValueError(
            f"credibility: each level must be in (0, 1], e.g. 0.95, got {credibility!r}"
        )
    return levels


def _min_count(c, n):
    """Smallest k with k / n >= c in floating point (so k/n >= c <=> count >= k)."""
    k = int(np.ceil(c * n))
    while k > 1 and (k - 1) / n >= c:
        k -= 1
    while k / n < c:
        k += 1
    return k


class _IscoCounts:
    """Per-period bookkeeping of the samples that are above the ISCO.

    Sample s is above the ISCO at frequency f iff f > f_ISCO(M_s) (the test
    of the deterministic map).  With the grid's frequencies sorted, sample s
    is below the ISCO for the ``b_s`` lowest ones, so for column j of rank
    r_j the samples above the ISCO are {s : b_s <= r_j}.  Only the "at-risk"
    samples (b_s < nP, above the ISCO somewhere on the grid) matter, and only
    in the "partial" columns, where some but not all samples are above the
    ISCO.  There a prefix count over the at-risk samples ordered by their
    ln u rank answers "how many are above the ISCO with rank >= x" by one
    lookup; it is built for a block of columns at a time in one reused buffer
    of at most ``_BLOCK_CELLS`` entries (16 MB), a loop over column blocks
    (about 8 for 10^5 at-risk samples and 300 periods) that bounds memory.
    """

    _BLOCK_CELLS = 4_000_000

    def __init__(self, f_grid, f_isco, rank):
        n = f_isco.size
        order = np.argsort(f_grid, kind="stable")
        r = np.empty(f_grid.size, dtype=np.intp)
        r[order] = np.arange(f_grid.size)
        b = np.searchsorted(f_grid[order], f_isco, side="right")
        self.n = n
        self.n_above = np.searchsorted(np.sort(b), r, side="right")  # #(b_s <= r_j)
        self.partial = np.flatnonzero((self.n_above > 0) & (self.n_above < n))
        self.rows = r[self.partial]
        risk = np.flatnonzero(b < f_grid.size)
        by_rank = np.argsort(rank[risk], kind="stable")
        self.risk_rank = rank[risk][by_rank]  # ascending ln u ranks of at-risk samples
        self.risk_b = b[risk][by_rank]

    def blocks(self):
        """Yield (column slice into ``partial``, above(p, x) function) per block."""
        width = self.risk_b.size + 1
        per = max(1, self._BLOCK_CELLS // width)
        dtype = np.int64 if per * width >= np.iinfo(np.int32).max else np.int32
        buf = np.zeros(min(per, self.rows.size) * width, dtype=dtype)
        for lo in range(0, self.rows.size, per):
            rows = self.rows[lo:lo + per]
            pre = buf[: rows.size * width].reshape(rows.size, width)
            # pre[p, k] = #{k' < k : b_k' <= r_p}, as one flat cumulative sum
            # (numpy's 1-D cumsum is fast) from which each row's start is removed.
            pre[:, 0] = 0
            np.less_equal(self.risk_b[None, :], rows[:, None], out=pre[:, 1:],
                          casting="unsafe")
            np.cumsum(pre.reshape(-1), out=pre.reshape(-1))
            total = self.n_above[self.partial[lo:lo + per]] + pre[:, 0]

            def above(p, x, pre=pre, total=total):
                k = np.searchsorted(self.risk_rank, x, side="left")
                return total[p] - pre[p, k]

            yield slice(lo, lo + rows.size), above


def exclusion_probability(
    host,
    curve,
    mass_ratio=None,
    period=None,
    samples=100_000,
    seed=None,
    credibility=DEFAULT_CREDIBILITY,
    snr=5.0,
    span=None,
    *,
    orientation=None,
):
    """Probability that each companion (q, P) of ``host`` is excluded (or detectable).

    Parameters
    ----------
    host : Host
        Its mass error (dex), distance error, peculiar-velocity error and
        reference distance of the mass are propagated (:func:`sample_host`).
    curve : StrainCurve, or an object with ``curve_at(coord)``
    mass_ratio : array, optional
        Default as :func:`ptaconstrain.analysis.exclusion.exclusion_map`.
    period : Quantity [time], optional
        Default as :func:`ptaconstrain.analysis.exclusion.exclusion_map`.
    samples : int or HostSamples
        Number of Monte-Carlo samples, or samples already drawn.
    seed : int, optional
        Seed of ``numpy.random.default_rng``; recorded in the result.  A fresh
        one is drawn (and recorded) when omitted.  Ignored when ``samples``
        is a HostSamples.
    credibility : float or sequence of float in (0, 1]
        Levels of the credible mass-ratio bounds.
    snr : float
        S/N threshold (noise budgets).
    span : Quantity [time], optional
        Observing span; default the curve's.
    orientation : bool, optional
        Sample the inclination; default True for noise budgets and False for
        upper limits (an h0 limit already bounds h0 itself).

    Returns
    -------
    ProbabilityMap
    """
    from . import exclusion

    levels = _check_credibility(credibility)
    det = exclusion.exclusion_map(host, curve, mass_ratio, period, snr=snr, span=span)
    if orientation is None:
        orientation = not det.is_limit
    if isinstance(samples, HostSamples):
        draws = samples
        if orientation and draws.orientation_factor is None:
            raise ValueError("samples: these were drawn without orientation; redraw with it")
    else:
        draws = sample_host(host, samples, seed=seed, orientation=bool(orientation))
    if not orientation:
        draws = HostSamples(**{**draws.__dict__, "orientation_factor": None})

    s0 = wf.strain_prefactor(host.mass, host.distance, host.redshift)
    log_u = draws.log_scale(s0)
    order = np.argsort(log_u, kind="stable")
    sorted_u = log_u[order]
    rank = np.empty(draws.n, dtype=np.intp)
    rank[order] = np.arange(draws.n)
    n = draws.n

    f = det.frequency.to_value(u.Hz)
    isco = _IscoCounts(f, draws.isco_frequency.to_value(u.Hz), rank)
    log_eta = np.log(wf.symmetric_mass_ratio(det.mass_ratio))
    with np.errstate(invalid="ignore"):
        log_eta_min = np.log(det.eta_min)
        thr = log_eta_min[None, :] - log_eta[:, None]
    x = np.searchsorted(sorted_u, thr, side="right")  # first rank with ln u > threshold
    count = n - x
    ks = {c: _min_count(c, n) for c in levels}
    # rank of the k-th largest ln u among the samples below the ISCO, per column
    xk = {c: np.full(f.size, n - k) for c, k in ks.items()}
    for cols, above in isco.blocks():
        j = isco.partial[cols]
        p = np.arange(j.size)
        count[:, j] -= above(p[None, :], x[:, j])
        for c, k in ks.items():
            xk[c][j] = _kth_largest_rank(above, p, n, k)
    nothing = np.isnan(det.eta_min) | (isco.n_above == n)
    prob = count / n
    prob[:, nothing] = np.nan

    n_exist = n - isco.n_above
    qmax = {}
    for c, k in ks.items():
        lk = sorted_u[np.clip(xk[c], 0, n - 1)]
        with np.errstate(invalid="ignore", over="ignore"):
            eta_c = det.eta_min * np.exp(-lk)
            q_c = np.where(eta_c >= 0.25, 1.0, wf.mass_ratio_from_eta(eta_c))
        q_c = np.where(n_exist < k, 1.0, q_c)
        qmax[c] = np.where(nothing, np.nan, q_c)

    return ProbabilityMap(
        mass_ratio=det.mass_ratio,
        period=det.period,
        frequency=det.frequency,
        probability=prob,
        credibility=levels,
        max_mass_ratio=qmax,
        above_isco_fraction=isco.n_above / n,
        deterministic=det,
        samples=draws,
        summary=draws.summary(),
        seed=draws.seed,
        n_samples=n,
        orientation=bool(orientation),
    )


def _kth_largest_rank(above, p, n, k):
    """Per partial column ``p``, the largest rank x with #(below ISCO, rank >= x) >= k.

    Vectorised bisection over the columns (about log2 n steps); a column
    with fewer than k samples below the ISCO returns -1.
    """

    def existing(x):
        return (n - x) - above(p, x)

    lo = np.zeros(p.size, dtype=np.intp)
    hi = np.full(p.size, n - 1, dtype=np.intp)
    ok0 = existing(lo) >= k
    while np.any(lo < hi):
        mid = (lo + hi + 1) // 2
        ok = existing(mid) >= k
        lo = np.where(ok, mid, lo)
        hi = np.where(ok, hi, mid - 1)
    return np.where(ok0, lo, -1)
