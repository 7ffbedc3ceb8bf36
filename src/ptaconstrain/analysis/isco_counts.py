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
rank t (one integer sort of the ln u bit patterns with b in the low bits; see
:func:`_buckets_in_value_order`), the question "how many samples of rank >= x
are above the ISCO in column r" is #{t >= x : G[t] <= r}.  G is cut into
blocks of 256 ranks:

* one table holds S[c, r] = #{t >= c * 256 : G[t] <= r} (one ``np.bincount``
  of the N samples and two cumulative sums over the (N / 256) x nP table);
* per block, the smallest and largest G.

A query is S[c + 1, r] plus the ranks x .. end of block c = x // 256 with
G <= r: none when the block's smallest G exceeds r, all when its largest G
does not, and otherwise (a block that straddles r, a few per cent of the
queries) counted one by one, from whichever end of the block is nearer.
O(N) numpy operations to build after the O(N log N) sort, O(1) per query
plus at most 128 ranks for a straddling one, instead of the O(N x nP) of a
per-column cumulative count.
"""

import numpy as np

__all__ = ["IscoCounts"]

_BLOCK = 256  # ranks per block of the count table
_LUT_SHIFT = 42  # float64 bit patterns >> 42: buckets of relative width 2^-10
_LUT_MAX = 1 << 20
_LUT_STEPS = 4
_SIGN_FLIP = np.int64(0x7FFF_FFFF_FFFF_FFFF)


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
    out = lut.take(key, mode="clip")  # below: 0 grid points; above: all (added below)
    ext = np.append(grid, np.inf)
    for _ in range(per_bucket):  # the grid points inside the value's bucket
        out += ext[out] <= values
    return out


def _buckets_in_value_order(values, buckets, out):
    """Write ``buckets[np.argsort(values)]`` into ``out``, exactly, from one int64 sort.

    The float64 bit patterns of ``values`` are mapped to int64 keys of the same
    order (flip the magnitude bits of negative numbers), their low bits are replaced
    by the bucket (``buckets`` must be < 2^bits with bits = ``buckets.max()``'s bit
    length) and the keys are sorted: numpy's vectorised integer sort, several times
    faster than ``argsort`` followed by a gather.  Values whose keys agree in the
    bits kept (a run of equal truncated keys: rare, as the bits dropped are the
    lowest of the mantissa) are found again among the samples and put in exact order
    by ``np.argsort``.  Equal values keep an arbitrary order among themselves, which
    no count depends on (a rank found by searching the sorted values never splits
    them).

    Parameters
    ----------
    values : ndarray of float64 (n,)
    buckets : ndarray of int (n,), >= 0
    out : ndarray of int32 (n,)
    """
    bits = max(1, int(buckets.max(initial=0)).bit_length())
    low = np.int64((1 << bits) - 1)
    bit_pattern = np.ascontiguousarray(values, dtype=np.float64).view(np.int64)
    packed = bit_pattern >> 63
    packed &= _SIGN_FLIP
    packed ^= bit_pattern  # int64 keys in the order of the values
    packed &= ~low
    packed |= buckets
    packed.sort()
    np.bitwise_and(packed, low, out=out, casting="unsafe")
    # adjacent keys that agree above the low bits (as unsigned: across the sign too)
    same = packed[1:] ^ packed[:-1]
    tie = np.flatnonzero(same.view(np.uint64) <= np.uint64(low))
    if tie.size:
        pos = np.union1d(tie, tie + 1)  # whole runs of equal truncated keys, ascending
        key = bit_pattern ^ ((bit_pattern >> 63) & _SIGN_FLIP)
        members = np.flatnonzero(np.isin(key & ~low, packed[pos] & ~low))
        out[pos] = buckets[members[np.argsort(values[members], kind="stable")]]


class IscoCounts:
    """Per-period counts of the samples above the ISCO, by ln u rank.

    Parameters
    ----------
    f_grid : ndarray (nP,)
        GW frequencies of the grid [Hz].
    f_isco : ndarray (n,)
        f_ISCO of each sample [Hz].
    values : ndarray (n,)
        ln u of each sample; the rank of a sample is its position in ascending
        order of ``values`` (as in ``np.sort(values)``).

    Attributes
    ----------
    n : int
        Number of samples.
    n_above : ndarray of int (nP,)
        Number of samples above the ISCO in each column.
    """

    def __init__(self, f_grid, f_isco, values):
        n = f_isco.size
        n_p = f_grid.size
        bk = _BLOCK
        grid_order = np.argsort(f_grid, kind="stable")
        r = np.empty(n_p, dtype=np.intp)
        r[grid_order] = np.arange(n_p)
        b = _grid_count(f_grid[grid_order], f_isco)
        n_blocks = max(1, -(-n // bk))
        # G in ln u order, padded to whole blocks with n_p (above the ISCO in no column)
        g = np.full(n_blocks * bk, n_p, dtype=np.int32)
        if n:
            _buckets_in_value_order(values, b, g[:n])
        self.n = n
        self._g = g
        self._r = r
        self._n_blocks = n_blocks
        # table[c, r] = #{t >= c * block : G[t] <= r}; row n_blocks is the empty suffix
        blocks = g.reshape(n_blocks, bk)
        cell = blocks + (np.arange(n_blocks, dtype=np.int32) * np.int32(n_p + 1))[:, None]
        hist = np.bincount(cell.ravel(), minlength=n_blocks * (n_p + 1))
        hist = hist.reshape(n_blocks, n_p + 1)[:, :n_p]
        table = np.zeros((n_blocks + 1, n_p), dtype=np.int32)
        np.cumsum(hist, axis=1, dtype=np.int32, out=table[:n_blocks])  # G <= r, per block
        suffix = table[n_blocks - 1 :: -1]
        np.add.accumulate(suffix, axis=0, out=suffix)  # blocks c .. last
        self._table = table
        self._at_most = table[0]  # #(G <= r), by grid rank
        self.n_above = table[0, r].astype(np.intp)
        # smallest and largest G per block (the padding of the last block excluded)
        self._gmin = blocks.min(axis=1)
        self._gmax = blocks.max(axis=1)
        if n % bk:
            self._gmax[-1] = g[(n_blocks - 1) * bk : n].max()
        # per grid rank r: the lowest rank with G <= r (n if none) and the highest rank
        # with G > r (-1 if none), located by block and then within the block; a rank x
        # outside (first, last] decides its count alone
        ranks = np.arange(n_p)
        offset = np.arange(bk)
        c = np.searchsorted(-np.minimum.accumulate(self._gmin), -ranks, side="left")
        cc = np.minimum(c, n_blocks - 1)
        inside = np.argmax(g[cc[:, None] * bk + offset] <= ranks[:, None], axis=1)
        self._first = np.where(c < n_blocks, cc * bk + inside, n)
        suffix_max = np.maximum.accumulate(self._gmax[::-1])[::-1]
        c = np.searchsorted(-suffix_max, -ranks, side="left") - 1  # last block with G > r
        cc = np.maximum(c, 0)
        t = cc[:, None] * bk + offset[::-1]
        inside = np.argmax((g[t] > ranks[:, None]) & (t < n), axis=1)
        self._last = np.where(c >= 0, cc * bk + bk - 1 - inside, -1)

    def _count_at_most(self, start, stop, rr):
        """#{t in [start, stop) : G[t] <= rr}, element by element (short ranges)."""
        length = stop - start
        end = np.cumsum(length)
        t = np.arange(end[-1] if end.size else 0) - np.repeat(end - length - start, length)
        hit = np.zeros(t.size + 1, dtype=np.int64)
        np.cumsum(self._g[t] <= np.repeat(rr, length), out=hit[1:])
        return hit[end] - hit[end - length]

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
        shape = x.shape
        rr = self._r[col.ravel()]
        x = x.ravel()
        # decided by where x lies: all of the samples above the ISCO at or after x, or
        # every rank from x on above the ISCO
        out = np.where(x <= self._first[rr], self._at_most[rr], self.n - x)
        und = np.flatnonzero((x > self._first[rr]) & (x <= self._last[rr]))
        if und.size:
            out[und] = self._straddling(x[und], rr[und])
        return out.reshape(shape)

    def _straddling(self, x, rr):
        """``above`` for ranks x between the first rank above and the last rank below."""
        bk, n_p = _BLOCK, self._table.shape[1]
        c = x // bk
        after = self._table.ravel()[(c + 1) * n_p + rr]  # whole blocks after x's block
        stop = np.minimum((c + 1) * bk, self.n)
        # ranks x .. stop - 1 of block c: none, all, or (straddling blocks) counted
        out = after + np.where(self._gmax[c] <= rr, stop - x, 0)
        mixed = np.flatnonzero((self._gmin[c] <= rr) & (self._gmax[c] > rr))
        if mixed.size:
            xm, cm, rm, sm = x[mixed], c[mixed], rr[mixed], stop[mixed]
            head = xm - cm * bk < sm - xm  # fewer ranks before x than from x on
            cnt = np.empty(mixed.size, dtype=out.dtype)
            h = np.flatnonzero(head)
            whole = self._table.ravel()[cm[h] * n_p + rm[h]] - after[mixed[h]]  # block c
            cnt[h] = whole - self._count_at_most(cm[h] * bk, xm[h], rm[h])
            t = np.flatnonzero(~head)
            cnt[t] = self._count_at_most(xm[t], sm[t], rm[t])
            out[mixed] += cnt
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
        bk, n = _BLOCK, self.n
        rr = self._r[col]
        n_blocks = self._n_blocks

        def below_from_block(c):  # #(below the ISCO, rank >= c * block)
            return (n - np.minimum(c * bk, n)) - self._table[c, rr]

        # largest block boundary c with below_from_block(c) >= k (never the last, 0)
        lo = np.zeros(col.size, dtype=np.intp)
        hi = np.full(col.size, n_blocks, dtype=np.intp)
        ok0 = below_from_block(lo) >= k
        while np.any(lo < hi):
            mid = (lo + hi + 1) // 2
            ok = below_from_block(mid) >= k
            lo = np.where(ok, mid, lo)
            hi = np.where(ok, hi, mid - 1)
        # inside block lo: #(below, rank >= t) for t = the block's ranks, downwards
        lo = np.minimum(lo, n_blocks - 1)
        t = lo[:, None] * bk + np.arange(bk)
        below = (self._g[t] > rr[:, None]) & (t < n)
        count = np.cumsum(below[:, ::-1], axis=1)[:, ::-1]
        count += below_from_block(lo + 1)[:, None]
        best = lo * bk + np.count_nonzero(count >= k, axis=1) - 1
        return np.where(ok0, best, -1)
