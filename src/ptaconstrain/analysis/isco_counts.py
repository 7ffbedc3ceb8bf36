"""Which Monte-Carlo samples are above the ISCO, per period, counted without a loop over cells.

Used by :func:`ptaconstrain.analysis.probability.exclusion_probability`: a cell
above the ISCO in a sample (f > f_ISCO(M_s), Maggiore 2008, eq. 4.39, test-mass
Schwarzschild) counts as not excluded in that sample.  Whether a sample is
above the ISCO depends on the period only, so the samples above it form one
known subset per period; :class:`IscoCounts` removes their contribution from
the sorted-sample counts exactly, and :func:`kth_largest_rank` finds the
credible bound among the samples that remain.
"""

import numpy as np

__all__ = ["IscoCounts", "kth_largest_rank"]


class IscoCounts:
    """Per-period bookkeeping of the samples that are above the ISCO.

    Parameters
    ----------
    f_grid : ndarray (nP,)
        GW frequencies of the grid [Hz].
    f_isco : ndarray (n,)
        f_ISCO of each sample [Hz].
    rank : ndarray of int (n,)
        Rank of each sample's ln u in ascending order.

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


def kth_largest_rank(above, p, n, k):
    """Per partial column ``p``, the largest rank x with #(below ISCO, rank >= x) >= k.

    Vectorised bisection over the columns (about log2 n steps); a column
    with fewer than k samples below the ISCO returns -1.

    Parameters
    ----------
    above : callable
        ``above(p, x)`` of :meth:`IscoCounts.blocks`.
    p : ndarray of int
        Column indices within the block.
    n, k : int
        Number of samples; count required.

    Returns
    -------
    ndarray of int (p.size,)
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
