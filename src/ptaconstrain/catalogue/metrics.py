"""Per-galaxy target metrics against a sensitivity (vectorised over galaxies).

Per galaxy, against a sensitivity (upper limit: "excluded"; noise budget:
"detectable"):

* ``f_best`` -- the most sensitive frequency: the tabulated frequency that
  minimises h0_threshold(f) / f^(2/3).  Since h0 = eta S f^(2/3)
  (:func:`ptaconstrain.binary.waveform.strain_prefactor`), this is where any binary
  of the galaxy is best constrained, whatever its mass or distance; it depends
  on the galaxy only through its sky position (for sky-dependent sensitivity).
* ``h0_equal_mass`` -- h0 of an equal-mass (q = 1) binary of the median total
  mass at f_best, and ``h0_ratio`` = h0_equal_mass / h0_threshold(f_best).
* ``min_mass_ratio`` -- the smallest mass ratio excluded (detectable) at
  f_best, the closed-form inverse of eta at eta_min = h0_threshold / (S
  f^(2/3)) (:func:`ptaconstrain.binary.waveform.mass_ratio_from_eta`); NaN when
  not even q = 1 is.
* ``prob_equal_mass`` -- the probability, over the log-normal mass
  uncertainty, that the q = 1 binary at f_best is excluded (detectable).
* ``expected_number`` -- expected number of excluded (detectable) binaries
  under the population model of :mod:`ptaconstrain.catalogue.population`,
  marginalised over the mass scatter.

The strain metrics are formal at f_best even when f_best > f_ISCO (flagged
``f_best_above_isco``); the expected number respects f_ISCO.
"""

import numpy as np
from astropy import units as u

from ..binary import waveform as wf
from .population import PopulationModel, expected_number, sky_rows

__all__ = ["METRICS", "most_sensitive_frequency", "galaxy_metrics"]

#: metric -> (sort descending?, description with {verb})
METRICS = {
    "expected_number": (True, "expected number of {verb} binaries (population model)"),
    "h0_ratio": (True, "h0 of a q = 1 binary / h0 threshold, at f_best"),
    "prob_equal_mass": (True, "probability that a q = 1 binary at f_best is {verb}"),
    "min_mass_ratio": (False, "smallest mass ratio {verb} at f_best"),
}


def most_sensitive_frequency(frequency, h0_threshold):
    """Index of the frequency minimising h0_threshold / f^(2/3) (the most sensitive one).

    Parameters
    ----------
    frequency : Quantity [frequency] (nf,)
    h0_threshold : array (nf,) or (n, nf)
        NaN entries are ignored.

    Returns
    -------
    ndarray of int, shape () or (n,); -1 where every entry is NaN.

    Examples
    --------
    >>> from astropy import units as u
    >>> f = [2, 10, 50] * u.nHz
    >>> most_sensitive_frequency(f, [3e-14, 1e-14, 4e-14])   # min of h0 / f^(2/3)
    array(1)
    """
    g = np.asarray(h0_threshold, dtype=float) / frequency.to_value(u.Hz) ** (2.0 / 3.0)
    empty = np.all(np.isnan(g), axis=-1)
    idx = np.argmin(np.where(np.isnan(g), np.inf, g), axis=-1)
    return np.where(empty, -1, idx)


def galaxy_metrics(
    log_mass,
    log_mass_sigma,
    distance,
    redshift,
    frequency,
    h0_threshold,
    population=None,
    n_nodes=16,
    sky_index=None,
):
    """All per-galaxy metrics, vectorised over galaxies.

    Parameters
    ----------
    log_mass : array (n,)
        Median log10(M / solMass), M the total black-hole mass.
    log_mass_sigma : array (n,)
        1 sigma of log10 M (dex).
    distance : Quantity [length] (n,)
        Luminosity distance.
    redshift : array (n,)
    frequency : Quantity [frequency] (nf,)
        Tabulated frequencies of the sensitivity (band edges).
    h0_threshold : array (nf,) or (G, nf)
        Threshold strain: one curve, or G sky-dependent curves.
    population : PopulationModel, optional
    n_nodes : int
        Quadrature nodes over the mass scatter.
    sky_index : array of int (n,), optional
        Row of ``h0_threshold`` for each galaxy (default: the only row, or
        row i for galaxy i when G = n).

    Returns
    -------
    dict
        ``f_best`` (Quantity Hz), ``h0_threshold_best``, ``h0_equal_mass``,
        ``h0_ratio``, ``min_mass_ratio``, ``prob_equal_mass``,
        ``expected_number`` (ndarrays), ``isco_frequency`` (Quantity Hz),
        ``f_best_above_isco`` (bool).

    Examples
    --------
    >>> from astropy import units as u
    >>> f = [2, 10, 50] * u.nHz
    >>> m = galaxy_metrics([10.3, 9.0], [0.3, 0.3], [100, 100] * u.Mpc, [0.022, 0.022], f,
    ...                    [3e-14, 1e-14, 4e-14])
    >>> m["f_best"]
    <Quantity [1.e-08, 1.e-08] Hz>
    >>> bool(m["h0_ratio"][0] > m["h0_ratio"][1])   # the heavier black hole is louder
    True
    """
    from scipy.special import ndtr

    population = population or PopulationModel()
    mu = np.atleast_1d(np.asarray(log_mass, dtype=float))
    n = mu.size
    sig = np.broadcast_to(np.asarray(log_mass_sigma, dtype=float), (n,))
    dist = np.broadcast_to(u.Quantity(distance, u.Mpc), (n,), subok=True)
    z = np.broadcast_to(np.asarray(redshift, dtype=float), (n,))
    thr = np.asarray(h0_threshold, dtype=float)
    f = frequency.to(u.Hz)

    thr2 = thr[None, :] if thr.ndim == 1 else thr
    sky = sky_rows(sky_index, thr2.shape[0], n)
    idx_b = most_sensitive_frequency(f, thr2)[sky]
    ok = idx_b >= 0
    safe = np.where(ok, idx_b, 0)
    thr_best = np.where(ok, thr2[sky, safe], np.nan)
    f_best = np.where(ok, f.value[safe], np.nan) * u.Hz

    mass = 10.0**mu * u.Msun
    s_med = wf.strain_prefactor(mass, dist, z).to_value(u.Hz ** (-2.0 / 3.0))
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        h0_q1 = 0.25 * s_med * f_best.value ** (2.0 / 3.0)
        ratio = h0_q1 / thr_best
        eta_min = thr_best / (s_med * f_best.value ** (2.0 / 3.0))
        q_min = np.where(eta_min <= 0.25, wf.mass_ratio_from_eta(eta_min), np.nan)
        # log S is normal with sd (5/3) sigma: P(S/4 > g_best) in closed form
        margin = np.log10(ratio)
        spread = (5.0 / 3.0) * sig
        prob = np.where(
            spread > 0, ndtr(margin / np.where(spread > 0, spread, 1.0)), (margin > 0).astype(float)
        )
        prob = np.where(np.isnan(margin), np.nan, prob)
    f_isco = wf.isco_frequency(mass, z)
    n_exp = expected_number(mu, sig, dist, z, f, thr2, population, n_nodes=n_nodes, sky_index=sky)
    return {
        "f_best": f_best,
        "h0_threshold_best": thr_best,
        "h0_equal_mass": h0_q1,
        "h0_ratio": ratio,
        "min_mass_ratio": q_min,
        "prob_equal_mass": prob,
        "expected_number": n_exp,
        "isco_frequency": f_isco,
        "f_best_above_isco": np.asarray(f_best > f_isco),
    }
