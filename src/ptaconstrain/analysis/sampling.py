"""Monte-Carlo samples of a host's mass, distance and orientation.

A black-hole mass is known to 0.1-0.3 dex and a distance to 5-20 %, and the
two are correlated when the mass is dynamical (it scales linearly with the
distance adopted for it).  :func:`sample_host` draws samples that carry these
errors jointly; :func:`ptaconstrain.analysis.probability.exclusion_probability`
turns them into exclusion probabilities.  :func:`orientation_factor` is the
inclination dependence of the S/N of a noise-budget forecast and
:func:`distance_sigma` the combined distance error of a host.
"""

import warnings
from dataclasses import dataclass

import numpy as np
from astropy import constants as const
from astropy import units as u

from ..binary import waveform as wf
from ..errors import InputError, PtaconstrainWarning
from ..sensitivity.curve import ORIENTATION_MEAN

__all__ = ["HostSamples", "sample_host", "resample_host", "orientation_factor", "distance_sigma"]

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

    Examples
    --------
    >>> orientation_factor([0.0, 1.0])   # edge-on, face-on
    array([0.3125, 2.5   ])
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

    Examples
    --------
    >>> from ptaconstrain import Host
    >>> distance_sigma(Host("Invented galaxy", 2e10, 100, distance_err_frac=0.1))
    <Quantity 10. Mpc>
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


def _warn_exact(host):
    """Say which of the host's errors are missing and therefore taken as zero."""
    missing = []
    if host.mass_err_dex is None:
        missing.append("no mass error (0 dex assumed)")
    if host.distance_err is None and host.velocity_err is None:
        missing.append("no distance error (exact distance assumed)")
    if missing:
        warnings.warn(
            f"host {host.name!r} has {' and '.join(missing)}, so the samples "
            "do not vary that quantity",
            PtaconstrainWarning,
            stacklevel=3,
        )


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


@dataclass(frozen=True, eq=False)
class HostSamples:
    """Monte-Carlo samples of a host's mass, distance and orientation.

    Attributes
    ----------
    n : int
        Number of samples.
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
        cos i (dimensionless) and psi [rad], drawn isotropically (cos i
        uniform in [-1, 1], psi uniform in [0, pi)) when ``orientation`` is
        set.  For a curve whose S_n is
        averaged over polarisation (the convention of
        :func:`ptaconstrain.sensitivity.curve.detection_threshold_h0`, sky-averaged or at
        a fixed position) psi does not change the S/N; it is kept for
        provenance and for position-resolved uses.
    strain_prefactor : Quantity (n,) [Hz^(-2/3)]
        S of :func:`ptaconstrain.binary.waveform.strain_prefactor` per sample.
    orientation_factor : ndarray (n,) or None
        g of :func:`orientation_factor` per sample.
    isco_frequency : Quantity (n,) [Hz]

    Examples
    --------
    >>> from ptaconstrain import Host
    >>> host = Host("Invented galaxy", 2e10, 100, mass_err_dex=0.2, distance_err=5)
    >>> samples = sample_host(host, n=1000, seed=1)
    >>> samples.n, samples.mass.unit, samples.cos_inclination is None
    (1000, Unit("solMass"), True)
    """

    n: int
    seed: int
    mass: u.Quantity
    distance: u.Quantity
    redshift: float
    cos_inclination: np.ndarray | None
    polarisation: np.ndarray | None
    orientation_factor: np.ndarray | None
    strain_prefactor: u.Quantity
    isco_frequency: u.Quantity

    def __repr__(self):
        s = self.summary()
        m_lo, m_med, m_hi = s["mass"].to_value(u.Msun)
        d_lo, d_med, d_hi = s["distance"].to_value(u.Mpc)
        orient = (
            "orientation sampled"
            if self.orientation_factor is not None
            else ("orientation not sampled")
        )
        return (
            f"HostSamples(n={self.n}, seed={self.seed}, {orient};\n"
            f"  mass {m_med:.4g} (-{m_med - m_lo:.2g}/+{m_hi - m_med:.2g}) solMass, "
            f"distance {d_med:.4g} (-{d_med - d_lo:.2g}/+{d_hi - d_med:.2g}) Mpc)"
        )

    def to_table(self):
        """The samples as a table, one row per sample.

        Returns
        -------
        astropy.table.QTable
            Columns ``mass`` [solMass], ``distance`` [Mpc], ``strain_prefactor``
            [Hz^(-2/3)], ``isco_frequency`` [Hz] and, when the orientation was
            drawn, ``cos_inclination``, ``polarisation`` [rad] and
            ``orientation_factor``; meta ``seed``, ``redshift``.
        """
        from astropy.table import QTable

        t = QTable()
        t["mass"] = self.mass.to(u.Msun)
        t["distance"] = self.distance.to(u.Mpc)
        t["strain_prefactor"] = self.strain_prefactor
        t["isco_frequency"] = self.isco_frequency.to(u.Hz)
        if self.cos_inclination is not None:
            t["cos_inclination"] = self.cos_inclination
            t["polarisation"] = self.polarisation * u.rad
        if self.orientation_factor is not None:
            t["orientation_factor"] = self.orientation_factor
        t.meta["seed"] = self.seed
        t.meta["redshift"] = self.redshift
        return t

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
        out = np.log(ratio, out=ratio)  # a new array: written in place
        if self.orientation_factor is not None:
            half = np.log(self.orientation_factor)
            half *= 0.5
            out += half
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
    reproduces the samples exactly.  A host without a mass error or without a
    distance error gets a :class:`~ptaconstrain.errors.PtaconstrainWarning`:
    that quantity is then held at its best value.

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

    Examples
    --------
    >>> import numpy as np
    >>> from ptaconstrain import Host
    >>> host = Host("Invented galaxy", 2e10, 100, mass_err_dex=0.2, distance_err=5)
    >>> samples = sample_host(host, n=20_000, seed=1)
    >>> print(f"{np.std(np.log10(samples.mass.value)):.2f} dex")   # the 0.2 dex put in
    0.20 dex
    """
    n, seed = _check_draws(n, seed)
    _warn_exact(host)
    rng = np.random.default_rng(seed)
    z_mass = rng.standard_normal(n)
    d = _host_distances(host, rng, n)
    eps = _split_normal_dex(z_mass, host.mass_err_dex)
    m = host.mass_at(d).to(u.Msun) * 10.0**eps
    return _samples(host, n, seed, m, d, rng, orientation)


def _check_draws(n, seed):
    n = int(n)
    if n < 1:
        raise InputError(f"samples: need at least 1 sample, got {n}")
    if seed is None:
        seed = int(np.random.SeedSequence().generate_state(1)[0])  # 32 bits: easy to quote
    try:
        seed = int(seed)
    except (TypeError, ValueError) as err:
        raise InputError(f"seed: must be an integer, got {seed!r}") from err
    if seed < 0:
        raise InputError(f"seed: must be >= 0, got {seed}")
    return n, seed


def _host_distances(host, rng, n):
    """The host's distances: Gaussian (distance_sigma), truncated to D > 0, or exact."""
    x_dist = rng.random(n) + 2.0**-54  # in (0, 1): never exactly 0 (D = 0) or 1
    d0 = host.distance.to(u.Mpc)
    sig = distance_sigma(host)
    if sig.value > 0:
        return _truncated_normal(x_dist, d0.value, sig.to_value(u.Mpc)) * u.Mpc
    return np.full(n, d0.value) * u.Mpc


def resample_host(host, mass_samples, n=100_000, seed=None, orientation=False):
    """Draw host samples from measured posterior samples of the mass (and distance).

    ``n`` rows of ``mass_samples`` are drawn with replacement, with probability
    proportional to their weights (``numpy.random.Generator.choice``), so the
    draws follow the posterior whatever its shape.  They replace the
    parametric errors of :func:`sample_host`:

    * with a ``distance`` per sample, each draw keeps its (mass, distance)
      pair: the posterior's own correlation is used, and the host's distance
      error is ignored;
    * without, distances are drawn from the host's distance error as in
      :func:`sample_host`, and each mass, read as quoted at the host's
      ``mass_distance`` (if set), is rescaled linearly to its draw's distance.

    The host's ``mass_err_dex`` is not used.  Draws are made in a fixed order
    (rows, distances, orientation) from ``numpy.random.default_rng(seed)``.

    Parameters
    ----------
    host : Host
        Supplies the redshift, the distance (and its error) when the samples
        carry none, and ``mass_distance``.
    mass_samples : MassSamples
    n : int
    seed : int, optional
    orientation : bool

    Returns
    -------
    HostSamples

    Examples
    --------
    >>> import numpy as np
    >>> from ptaconstrain import Host
    >>> from ptaconstrain.binary.mass_samples import MassSamples
    >>> posterior = MassSamples([1.5e10, 2e10, 2.5e10], weights=[1, 2, 1])   # invented
    >>> host = Host("Invented galaxy", 2e10, 100, distance_err=5)
    >>> samples = resample_host(host, posterior, n=4000, seed=1)
    >>> np.unique(samples.mass.value / 1e10).tolist()    # the posterior values themselves
    [1.5, 2.0, 2.5]
    """
    n, seed = _check_draws(n, seed)
    rng = np.random.default_rng(seed)
    rows = rng.choice(mass_samples.size, size=n, replace=True, p=mass_samples.probabilities)
    m = mass_samples.mass[rows].to(u.Msun)
    if mass_samples.distance is not None:
        d = mass_samples.distance[rows].to(u.Mpc)
    else:
        if host.distance_err is None and host.velocity_err is None:
            warnings.warn(
                f"host {host.name!r} has no distance error and the mass samples no "
                "distances, so the exact distance is assumed",
                PtaconstrainWarning,
                stacklevel=3,
            )
        d = _host_distances(host, rng, n)
        if host.mass_distance is not None:
            m = (m * (d / host.mass_distance)).to(u.Msun)
    return _samples(host, n, seed, m, d, rng, orientation)


def _samples(host, n, seed, m, d, rng, orientation):
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
