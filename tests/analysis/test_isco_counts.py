from dataclasses import replace

import numpy as np
import pytest
from astropy import units as u
from curves_for_tests import power_law_limit

from ptaconstrain.analysis import isco_counts as isco_module
from ptaconstrain.analysis.isco_counts import IscoCounts
from ptaconstrain.analysis.probability import exclusion_probability
from ptaconstrain.analysis.sampling import sample_host
from ptaconstrain.binary import waveform as wf
from ptaconstrain.binary.host import Host

Q = np.geomspace(1e-4, 1, 40)


def direct_counts(f_grid, f_isco, rank, x):
    """Brute force: above[j, i] = #{s : f_grid[j] > f_isco[s] and rank[s] >= x[i]}."""
    above = f_grid[:, None] > f_isco[None, :]  # Maggiore (2008) eq. 4.39: no orbit above ISCO
    return (above[:, None, :] & (rank[None, None, :] >= x[None, :, None])).sum(axis=2)


def direct_kth(f_grid, f_isco, rank, k):
    """Brute force: largest x with #{below the ISCO, rank >= x} >= k, else -1."""
    out = []
    for fj in f_grid:
        below = np.sort(rank[f_isco >= fj])[::-1]
        out.append(below[k - 1] if below.size >= k else -1)
    return np.array(out)


@pytest.mark.parametrize("scratch", [False, True])
@pytest.mark.parametrize("n", [1, 37, 64, 65, 256, 500, 512, 2049])
def test_counts_and_kth_rank_equal_brute_force(n, scratch):
    rng = np.random.default_rng(n)
    f_grid = rng.permutation(np.geomspace(1e-9, 1e-6, 23))  # unsorted grid
    f_isco = 10 ** rng.normal(-7.5, 0.6, n)
    f_isco[: n // 3] = f_grid[rng.integers(0, f_grid.size, n // 3)]  # ties with the grid
    order = rng.permutation(n)
    rank = np.empty(n, dtype=np.intp)
    rank[order] = np.arange(n)
    # scratch: memory full of other numbers, which the counts may overwrite
    work = rng.integers(-(2**62), 2**62, n) if scratch else None
    c = IscoCounts(f_grid, f_isco, order, scratch=work)  # order: the sample of each rank
    x = np.arange(n + 1)
    cols = np.arange(f_grid.size)
    np.testing.assert_array_equal(
        c.above(cols[:, None], x[None, :]), direct_counts(f_grid, f_isco, rank, x)
    )
    np.testing.assert_array_equal(c.n_above, (f_grid[:, None] > f_isco[None, :]).sum(axis=1))
    ks = [1, max(1, n // 2), n]
    for k in ks:
        np.testing.assert_array_equal(
            c.kth_largest_rank(cols, k), direct_kth(f_grid, f_isco, rank, k)
        )
    # several counts in one call (one per column), as for the credibility levels
    np.testing.assert_array_equal(
        c.kth_largest_rank(np.tile(cols, 3), np.repeat(ks, cols.size)),
        np.concatenate([direct_kth(f_grid, f_isco, rank, k) for k in ks]),
    )


@pytest.mark.parametrize(
    "grid",
    [
        np.geomspace(1e-9, 1e-6, 300),  # the default-like log grid
        np.array([3e-8]),  # one period
        np.sort(np.r_[np.geomspace(1e-9, 1e-6, 50), 2e-8 * (1 + np.arange(4) * 1e-5)]),
        np.sort(np.r_[1e-9, 1e-9, 2e-9, np.nextafter(2e-9, 1)]),  # ties and neighbours
        np.linspace(1e-9, 1e-6, 3000),  # too dense: binary-search path
        np.array([1e-30, 1e30]),  # too wide: binary-search path
    ],
)
def test_grid_count_equals_searchsorted(grid):
    # reference: numpy's searchsorted(side="right"); values on, next to, below and
    # above the grid points
    rng = np.random.default_rng(5)
    v = np.r_[
        10 ** rng.uniform(-10, -5, 20000),
        grid,
        np.nextafter(grid, 0),
        np.nextafter(grid, np.inf),
        1e-300,
        1e300,
    ]
    want = np.searchsorted(grid, v, side="right")
    np.testing.assert_array_equal(isco_module._grid_count(grid, v), want)
    work = np.full(2 * v.size, -7, dtype=np.int32)  # scratch holding other numbers
    np.testing.assert_array_equal(isco_module._grid_count(grid, v, work), want)


def awkward_values(rng):
    """Values one ulp apart (runs of equal truncated keys), exact ties, signed zeros,
    both signs, infinities and values of every magnitude."""
    v = rng.normal(size=5000)
    v[:1000] = 0.3 + np.arange(1000) * np.spacing(0.3)  # neighbours one ulp apart
    v[1000:1100] = -2.5
    v[1100:1110] = [0.0, -0.0] * 5
    v[1110:1400] = -0.7 - np.arange(290) * np.spacing(0.7)
    v[1400:1410] = [np.inf, -np.inf, 5e-324, -5e-324, 1e308, -1e308, 1e-300, -1e-300, 7.0, -7.0]
    return v[rng.permutation(v.size)]


@pytest.mark.parametrize("chunk", [None, 7])
@pytest.mark.parametrize("n", [0, 1, 2, 3, 1000, 5000])
def test_ranked_values_order_equals_np_sort_exactly(n, chunk, monkeypatch):
    # reference: numpy's sort; equal values may come in any order, so the sorted
    # values (not the indices) are compared, and the order must be a permutation.
    # chunk=7: the passes around the sort in chunks of 7 values (runs across chunks)
    if chunk:
        monkeypatch.setattr(isco_module, "_PASS", chunk)
    rng = np.random.default_rng(3)
    v = awkward_values(rng)[:n]
    ranked = isco_module.RankedValues(v)
    np.testing.assert_array_equal(np.sort(ranked.order), np.arange(n))
    np.testing.assert_array_equal(ranked.at_rank(np.arange(n)), np.sort(v))


@pytest.mark.parametrize("chunk", [None, 7])
@pytest.mark.parametrize("n", [1, 2, 255, 256, 257, 5000])
def test_count_at_most_equals_searchsorted(n, chunk, monkeypatch):
    # reference: numpy's searchsorted(side="right") on np.sort of the same values;
    # keys on, one ulp beside, below and above the values, runs of equal values,
    # signed zeros, infinities and NaN
    if chunk:
        monkeypatch.setattr(isco_module, "_PASS", chunk)
    rng = np.random.default_rng(n)
    values = awkward_values(rng)[:n]
    values[: min(n, 3)] = 0.0
    values[-1] = -0.0
    keys = np.r_[
        values,
        np.nextafter(values, -np.inf),
        np.nextafter(values, np.inf),
        rng.normal(size=2000) * 3,
        0.0,
        -0.0,
        np.inf,
        -np.inf,
        np.nan,
        -np.nan,
    ]
    ranked = isco_module.RankedValues(values)
    want = np.searchsorted(np.sort(values), keys, side="right")
    np.testing.assert_array_equal(ranked.count_at_most(keys), want)
    grid = keys[:1800].reshape(30, 60)  # a 2-D map of thresholds keeps its shape
    np.testing.assert_array_equal(
        ranked.count_at_most(grid), np.searchsorted(np.sort(values), grid, side="right")
    )


def test_ranked_values_refuse_nan():
    with pytest.raises(ValueError, match="NaN"):
        isco_module.RankedValues(np.array([1.0, np.nan, -np.inf]))


def brute_probability(r):
    """Cell by cell over every sample: excluded in s iff ln u_s > threshold and below ISCO."""

    det = r.deterministic
    s0 = wf.strain_prefactor(det.host.mass, det.host.distance, det.host.redshift)
    log_u = r.samples.log_scale(s0)
    log_eta = np.log(wf.symmetric_mass_ratio(det.mass_ratio))
    with np.errstate(invalid="ignore"):
        thr = np.log(det.eta_min)[None, :] - log_eta[:, None]
    f = det.frequency.to_value(u.Hz)
    exists = f[None, :] <= r.samples.isco_frequency.to_value(u.Hz)[:, None]
    count = ((log_u[:, None, None] > thr[None]) & exists[:, None, :]).sum(axis=0)
    p = count / log_u.size
    p[:, np.isnan(det.eta_min) | ~exists.any(axis=0)] = np.nan
    return p


@pytest.mark.parametrize("n", [300, 3000])
def test_probability_map_equals_brute_force_bit_for_bit(n):
    # the same per-cell thresholds and samples as the fast path, compared one by one
    # (the benchmark does the same at 1e5 samples): equal, not merely close
    host = Host("B", 3e10, 200, mass_err_dex=(0.2, 0.4), distance_err=20, mass_distance=190)
    period = np.geomspace(0.05, 60, 45) * u.yr
    r = exclusion_probability(host, power_law_limit(), Q, period, samples=n, seed=5)
    partial = (r.above_isco_fraction > 0) & (r.above_isco_fraction < 1)
    assert partial.sum() >= 3
    np.testing.assert_array_equal(r.probability, brute_probability(r))


def test_probability_map_with_every_column_partly_above_the_isco_equals_brute_force():
    # every period partly above the ISCO (the whole map counted in one call, as for the
    # wide-error host of the benchmark); reference: the cell-by-cell count
    host = Host("B", 3e10, 200, mass_err_dex=(0.2, 0.4), distance_err=20, mass_distance=190)
    period = np.geomspace(0.12, 10, 30) * u.yr
    r = exclusion_probability(host, power_law_limit(), Q, period, samples=3000, seed=5)
    assert np.all((r.above_isco_fraction > 0) & (r.above_isco_fraction < 1))
    np.testing.assert_array_equal(r.probability, brute_probability(r))


def suffix_counts(f_grid, f_isco, order):
    """Brute force for every rank at once: above[j, x] = #{rank >= x above the ISCO in j}."""
    above = f_grid[:, None] > f_isco[None, order]  # samples in rank order
    out = np.zeros((f_grid.size, f_isco.size + 1), dtype=np.intp)
    out[:, :-1] = np.cumsum(above[:, ::-1], axis=1)[:, ::-1]
    return out


def correlated_samples(n, rng):
    """ln u rising with the mass and f_ISCO falling with it, as in a host's samples.

    f_ISCO is proportional to 1 / M (Maggiore 2008, eq. 4.39) and ln u to (5/3) ln M
    plus a distance scatter, so that G (the grid count of f_ISCO) falls, with
    exceptions, as the ln u rank rises: whole blocks on one side of a column, and a
    few straddling it, as in the probability map.
    """
    ln_m = rng.normal(0.0, 0.7, n)
    scatter = np.where(rng.uniform(size=n) < 0.005, 1.0, 0.02)  # a few far outliers
    values = 5.0 / 3.0 * ln_m + rng.normal(0.0, 1.0, n) * scatter
    f_isco = 1e-7 * np.exp(-ln_m)
    return values, f_isco


@pytest.mark.parametrize("chunk", [None, 100])
def test_counts_decided_alone_and_by_block_equal_brute_force(chunk, monkeypatch):
    # every branch of `above`: ranks decided by the column's first/last rank alone,
    # by a uniform block, and counted in a straddling block from its head or its
    # tail; reference: the brute-force count over every sample.  chunk=100: the
    # count table built 3 blocks at a time (27 chunks, that of the first blocks short)
    if chunk:
        monkeypatch.setattr(isco_module, "_CHUNK", chunk)
    rng = np.random.default_rng(11)
    n = 20000
    values, f_isco = correlated_samples(n, rng)
    f_grid = rng.permutation(np.geomspace(2e-8, 5e-7, 31))
    order = np.argsort(values, kind="stable")
    c = IscoCounts(f_grid, f_isco, order)
    rank = np.empty(n, dtype=np.intp)
    rank[order] = np.arange(n)
    x = np.arange(n + 1)
    cols = np.arange(f_grid.size)
    expected = suffix_counts(f_grid, f_isco, order)
    np.testing.assert_array_equal(c.above(cols[:, None], x[None, :]), expected)
    # the cases were all met
    rr = c._r[cols][:, None]
    first, last = c._first[rr], c._last[rr]
    alone = (x <= first) | (x > last)
    blk = np.minimum(x // isco_module._BLOCK, c._n_blocks - 1)
    uniform = (c._gmin[blk] > rr) | (c._gmax[blk] <= rr)
    offset = x % isco_module._BLOCK
    head = offset < isco_module._BLOCK // 2
    assert alone.any() and (~alone & uniform).any()
    assert (~alone & ~uniform & head).any() and (~alone & ~uniform & ~head).any()
    for k in (1, 7, n // 3, n):
        np.testing.assert_array_equal(
            c.kth_largest_rank(cols, k), direct_kth(f_grid, f_isco, rank, k)
        )


@pytest.mark.parametrize("where", ["all below", "all above", "one sample", "equal values"])
def test_counts_at_the_edges_equal_brute_force(where):
    # all samples below the ISCO in every column (no count to remove), all above it
    # (every rank removed), a single sample, and runs of equal ln u with different
    # f_ISCO (ties: any order of equal values gives the same counts)
    rng = np.random.default_rng(4)
    f_grid = np.geomspace(1e-9, 1e-6, 17)
    n = 1 if where == "one sample" else 700
    values, f_isco = correlated_samples(n, rng)
    if where == "all below":
        f_isco = f_isco * 0 + 1e-5
    elif where == "all above":
        f_isco = f_isco * 0 + 1e-10
    elif where == "equal values":
        values = np.round(values, 1)  # ~40 distinct values, each shared by many samples
    order = np.argsort(values, kind="stable")
    c = IscoCounts(f_grid, f_isco, order)
    rank = np.empty(n, dtype=np.intp)
    rank[order] = np.arange(n)
    sv = values[order]
    # ranks a search of the sorted values can return (never inside a run of equal values)
    x = np.unique(np.searchsorted(sv, np.r_[sv, -np.inf, np.inf], side="right"))
    cols = np.arange(f_grid.size)
    np.testing.assert_array_equal(
        c.above(cols[:, None], x[None, :]), direct_counts(f_grid, f_isco, rank, x)
    )
    np.testing.assert_array_equal(c.n_above, (f_grid[:, None] > f_isco[None, :]).sum(axis=1))
    for k in sorted({1, max(1, n // 2), n}):
        got = c.kth_largest_rank(cols, k)
        want = direct_kth(f_grid, f_isco, rank, k)
        # a rank inside a run of equal values is as good as any other of that run
        np.testing.assert_array_equal(got < 0, want < 0)
        np.testing.assert_array_equal(sv[got[got >= 0]], sv[want[want >= 0]])


def test_probability_map_with_repeated_samples_equals_brute_force_bit_for_bit():
    # every sample drawn twice: equal ln u values (ties in the sort) with the same
    # f_ISCO, plus the partly-above-ISCO columns of a wide mass error
    host = Host("B", 3e10, 200, mass_err_dex=(0.2, 0.4), distance_err=20, mass_distance=190)
    draws = sample_host(host, 400, seed=8)
    twice = replace(
        draws,
        n=2 * draws.n,
        mass=np.concatenate([draws.mass, draws.mass[::-1]]),
        distance=np.concatenate([draws.distance, draws.distance[::-1]]),
        strain_prefactor=np.concatenate([draws.strain_prefactor, draws.strain_prefactor[::-1]]),
        isco_frequency=np.concatenate([draws.isco_frequency, draws.isco_frequency[::-1]]),
    )
    period = np.geomspace(0.05, 60, 45) * u.yr
    r = exclusion_probability(host, power_law_limit(), Q, period, samples=twice)
    assert ((r.above_isco_fraction > 0) & (r.above_isco_fraction < 1)).sum() >= 3
    np.testing.assert_array_equal(r.probability, brute_probability(r))
