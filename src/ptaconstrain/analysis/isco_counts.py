"""Which Monte-Carlo samples are above the ISCO, per period, counted without a loop over cells.

Used by :func:`ptaconstrain.analysis.probability.exclusion_probability`: a cell
above the ISCO in a sample (f > f_ISCO(M_s), Maggiore 2008, eq. 4.39, test-mass
Schwarzschild) counts as not excluded in that sample.  Whether a sample is
above the ISCO depends on the period only, so the samples above it form one
known subset per period; :class:`IscoCounts` counts, exactly, how many of
them have a ln u rank at or above any given rank (to be removed from the
sorted-sample counts), and :meth:`IscoCounts.kth_largest_rank` finds the
credible bound among the samples that remain.

Algorithm (an offline two-dimensional dominance count).  With the grid's
frequencies sorted, sample s is below the ISCO for the ``b_s`` lowest ones
(a bucket table on the float bit patterns, exact, in place of a binary search
per sample), so in the column of frequency rank r the samples above the ISCO
are those with b_s <= r.  Laid out in ln u order, G[t] = b of the sample of
rank t, the question "how many samples of rank >= x are above the ISCO in
column r" is #{t >= x : G[t] <= r}.  G is cut into blocks of 64 ranks:

* one table holds S[c, r] = #{t >= c * 64 : G[t] <= r} (one ``np.bincount``
  of the N samples and two cumulative sums over the (N / 64) x nP table);
* per block, the 64 ranks sorted by G and the running OR of their bits
  (``P[c, k]``, a uint64 bit mask of the k ranks of block c with the smallest
  G), so that the ranks of block c with G <= r are the mask P[c, k_r] with
  k_r = #{G <= r in block c} = S[c, r] - S[c + 1, r].

A query is then S[c + 1, r] + popcount(P[c, k_r] >> (x mod 64)) with c = x // 64:
O(1) numpy operations per query, O(N + nP N / 64) to build, after the
O(N log N) sort of the samples, instead of the O(N x nP) of a per-column
cumulative count.
"""

import numpy as np

__all__ = ["IscoCounts"]

_WORD = 64  # ranks per block: one uint64 bit mask per block
_LUT_SHIFT = 42  # float64 bit patterns >> 42: buckets of relative width 2^-10
_LUT_MAX = 1 << 20
_LUT_STEPS = 4


def _grid_count(grid, values):
    """``np.searchsorted(grid, values, side="right")`` for a sorted positive grid, exactly.

    Positive float64 numbers order like their bit patterns, so ``bits >> 42`` cuts
    the axis into buckets of relative width 2^-10.  A table gives, per bucket, the
    number of grid points below it, and a few vectorised steps add the grid points
    inside the value's bucket that are <= the value (at most ``_LUT_STEPS`` per
    bucket).  Several times faster than a binary search per value; falls back to
    ``np.searchsorted`` when the grid or the values do not fit the scheme.
    """
    grid = np.ascontiguousarray(grid, dtype=np.float64)
    values = np.ascontiguousarray(values, dtype=np.float64)
    if grid.size == 0 or not grid[0] > 0 or not np.isfinite(grid[-1]):
        return np.searchsorted(grid, values, side="right")
    gkey = grid.view(np.int64) >> _LUT_SHIFT
    k0, k1 = int(gkey[0]), int(gkey[-1])
    if k1 - k0 + 1 > _LUT_MAX:
        return np.searchsorted(grid, values, side="right")
    per_bucket = int(np.bincount(gkey - k0).max())
    if per_bucket > _LUT_STEPS or not (
        values.min(initial=1.0) > 0 and values.max(initial=1.0) < np.inf
    ):
        return np.searchsorted(grid, values, side="right")  # also NaN (min/max propagate)
    low = (np.arange(k0, k1 + 1, dtype=np.int64) << _LUT_SHIFT).view(np.float64)
    lut = np.searchsorted(grid, low, side="left").astype(np.int32)  # #{grid < bucket}
    key = values.view(np.int64) >> _LUT_SHIFT
    key -= k0
    np.clip(key, 0, k1 - k0, out=key)  # below: 0 grid points; above: all (added below)
    out = lut[key]
    ext = np.append(grid, np.inf)
    for _ in range(per_bucket):  # the grid points inside the value's bucket
        out += ext[out] <= values
    return out


class IscoCounts:
    """Per-period counts of the samples above the ISCO, by ln u rank.

    Parameters
    ----------
    f_grid : ndarray (nP,)
        GW frequencies of the grid [Hz].
    f_isco : ndarray (n,)
        f_ISCO of each sample [Hz].
    order : ndarray of int (n,)
        The samples in ascending ln u order (``order[t]`` has rank t).

    Attributes
    ----------
    n : int
        Number of samples.
    n_above : ndarray of int (nP,)
        Number of samples above the ISCO in each column.
    """

    def __init__(self, f_grid, f_isco, order):
        n = f_isco.size
        n_p = f_grid.size
        bk = _WORD
        grid_order = np.argsort(f_grid, kind="stable")
        r = np.empty(n_p, dtype=np.intp)
        r[grid_order] = np.arange(n_p)
        n_blocks = -(-n // bk)
        # G in ln u order, padded (one spare block) with a value above every column so
        # that reads past the last rank count nothing
        g = np.full((n_blocks + 1) * bk, n_p, dtype=np.int32)
        g[:n] = _grid_count(f_grid[grid_order], f_isco)[order]
        self.n = n
        self.n_above = np.bincount(g[:n], minlength=n_p + 1)[:n_p].cumsum()[r]  # #(b <= r_j)
        self._g = g
        self._r = r
        self._n_blocks = n_blocks
        # table[r, k] = #{t >= (n_blocks - k) * block : G[t] <= r}, k = n_blocks - c, so
        # that both cumulative sums run forward (column 0 is the empty suffix)
        cell = g[: n_blocks * bk] * np.int32(n_blocks + 1)
        cell += np.int32(n_blocks) - np.arange(n_blocks * bk, dtype=np.int32) // bk
        table = np.bincount(cell, minlength=(n_p + 1) * (n_blocks + 1))
        table = table.reshape(n_p + 1, n_blocks + 1)[:n_p]
        table = np.cumsum(table, axis=1, dtype=np.int32)  # suffix over blocks, by rows
        for k in range(1, n_p):  # prefix over r, one contiguous row at a time
            np.add(table[k - 1], table[k], out=table[k])
        self._table = table
        # per block: G sorted (with the rank's offset in the low 6 bits) and the running
        # OR of the offsets' bits in that order (disjoint bits: a cumulative sum)
        key = g.reshape(n_blocks + 1, bk) * np.int32(bk) + np.arange(bk, dtype=np.int32)
        key.sort(axis=1)
        bits = np.left_shift(np.uint64(1), (key & (bk - 1)).astype(np.uint64))
        masks = np.zeros((n_blocks + 1, bk + 1), dtype=np.uint64)
        np.cumsum(bits, axis=1, out=masks[:, 1:])
        self._masks = masks.ravel()

    def above(self, col, x):
        """#{samples above the ISCO in column ``col`` with ln u rank >= ``x``}.

        Parameters
        ----------
        col : ndarray of int
            Column (period) indices.
        x : ndarray of int, broadcast against ``col``
            Ranks, 0 <= x <= n.

        Returns
        -------
        ndarray of int, the broadcast shape.
        """
        col, x = np.broadcast_arrays(col, x)
        rr = self._r[col]
        c = x >> 6
        # whole blocks after the one holding x, and from x's block on, from the table
        row = rr * (self._n_blocks + 1)
        after = self._table.ravel()[row + np.maximum(self._n_blocks - 1 - c, 0)]
        k = self._table.ravel()[row + np.maximum(self._n_blocks - c, 0)] - after
        # ranks x .. end of block c: the mask of the block's k ranks with G <= rr
        mask = self._masks[c * (_WORD + 1) + k]
        mask >>= (x & (_WORD - 1)).astype(np.uint64)
        return after + np.bitwise_count(mask)

    def kth_largest_rank(self, col, k):
        """Per column, the largest rank x with #(below the ISCO, rank >= x) >= k.

        Exact: the table's block boundaries locate the block holding the answer
        (a vectorised bisection over blocks), and the ranks of that block are
        then counted one by one.

        Parameters
        ----------
        col : ndarray of int
            Column (period) indices.
        k : int
            Count required, 1 <= k <= n.

        Returns
        -------
        ndarray of int (col.size,); -1 where fewer than k samples are below the ISCO.
        """
        col = np.asarray(col, dtype=np.intp)
        bk, n = _WORD, self.n
        rr = self._r[col]
        n_blocks = self._n_blocks

        def below_from_block(c):  # #(below the ISCO, rank >= c * block)
            return (n - np.minimum(c * bk, n)) - self._table[rr, n_blocks - c]

        # largest block boundary c with below_from_block(c) >= k
        lo = np.zeros(col.size, dtype=np.intp)
        hi = np.full(col.size, n_blocks, dtype=np.intp)
        ok0 = below_from_block(lo) >= k
        while np.any(lo < hi):
            mid = (lo + hi + 1) // 2
            ok = below_from_block(mid) >= k
            lo = np.where(ok, mid, lo)
            hi = np.where(ok, hi, mid - 1)
        # inside block lo: ranks lo * block + d, d = block - 1 .. 0, counted downwards
        start = lo * bk
        count = below_from_block(np.minimum(lo + 1, n_blocks))
        best = np.full(col.size, -1, dtype=np.intp)
        for d in range(bk - 1, -1, -1):
            t = start + d
            valid = t < n
            count = count + (valid & (self._g[t] > rr))
            best = np.where((best < 0) & valid & (count >= k), t, best)
        return np.where(ok0, best, -1)
