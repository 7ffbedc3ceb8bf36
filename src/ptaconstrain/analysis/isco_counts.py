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
(one ``np.searchsorted`` of the per-sample f_ISCO into the sorted grid), so
in the column of frequency rank r the samples above the ISCO are those with
b_s <= r.  Laid out in ln u order, G[t] = b of the sample of rank t, the
question "how many samples of rank >= x are above the ISCO in column r" is
#{t >= x : G[t] <= r}.  G is cut into blocks of ``block`` ranks and one
table holds S[c, r] = #{t >= c * block : G[t] <= r} (one ``np.bincount`` of
the N samples and two cumulative sums over the (N / block) x nP table); a
query reads the table at the first block boundary at or after x and adds
the fewer than ``block`` ranks before it directly.  With block ~ sqrt(N /
nq) the whole map costs O(N + nP sqrt(N nq)) after the O(N log N) sort of
the samples, instead of the O(N x nP) of a per-column cumulative count.
"""

import numpy as np

__all__ = ["IscoCounts"]


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
    block : int, optional
        Ranks per block of the count table; default about sqrt(n / 300),
        a power of two between 8 and 256.

    Attributes
    ----------
    n : int
        Number of samples.
    n_above : ndarray of int (nP,)
        Number of samples above the ISCO in each column.
    """

    def __init__(self, f_grid, f_isco, order, block=None):
        n = f_isco.size
        n_p = f_grid.size
        grid_order = np.argsort(f_grid, kind="stable")
        r = np.empty(n_p, dtype=np.intp)
        r[grid_order] = np.arange(n_p)
        if block is None:
            block = int(2 ** np.clip(np.round(np.log2(np.sqrt(max(n, 1) / 300.0))), 3, 8))
        n_blocks = -(-n // block)
        # G in ln u order (searching the f_ISCO in that order is ~2x faster: heavy
        # samples have large u), padded with a value above every column so that reads
        # past the last rank count nothing
        g = np.full(n_blocks * block + block, n_p, dtype=np.int32)
        g[:n] = np.searchsorted(f_grid[grid_order], f_isco[order], side="right")
        self.n = n
        self.n_above = np.bincount(g[:n], minlength=n_p + 1)[:n_p].cumsum()[r]  # #(b <= r_j)
        self._g = g
        self._r = r
        self._block = block
        self._n_blocks = n_blocks
        # table[r, k] = #{t >= (n_blocks - k) * block : G[t] <= r}, k = n_blocks - c, so
        # that both cumulative sums run forward (column 0 is the empty suffix)
        cell = g[: n_blocks * block] * np.int32(n_blocks + 1)
        cell += np.int32(n_blocks) - np.arange(n_blocks * block, dtype=np.int32) // block
        table = np.bincount(cell, minlength=(n_p + 1) * (n_blocks + 1))
        table = table.reshape(n_p + 1, n_blocks + 1)[:n_p]
        np.cumsum(table, axis=1, out=table)  # suffix over blocks, along contiguous rows
        for k in range(1, n_p):  # prefix over r, one contiguous row at a time
            np.add(table[k - 1], table[k], out=table[k])
        self._table = table

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
        bk = self._block
        c = (x + (bk - 1)) // bk
        out = self._table[rr, self._n_blocks - c]
        # the ranks x .. c * block - 1 before the block boundary, one offset at a time
        for d in range(bk - 1):
            t = x + d
            out += (t < c * bk) & (self._g[t] <= rr)
        return out

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
        bk, n = self._block, self.n
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
