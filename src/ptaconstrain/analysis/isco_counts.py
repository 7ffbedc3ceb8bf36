"""Which Monte-Carlo samples are above the ISCO, per period, counted without a loop over cells.

Used by :func:`ptaconstrain.analysis.probability.exclusion_probability`: a cell
above the ISCO in a sample (f > f_ISCO(M_s), Maggiore 2008, eq. 4.39, test-mass
Schwarzschild) counts as not excluded in that sample.  Whether a sample is
above the ISCO depends on the period only, so the samples above it form one
known subset per period; :class:`IscoCounts` counts, exactly, how many of
them have a ln u rank at or above any given rank (to be removed from the
sorted-sample counts), and :meth:`IscoCounts.kth_largest_rank` finds the
credible bound among the samples that remain.  :class:`RankedValues` sorts
ln u once and answers the threshold searches.

Sorting (:class:`RankedValues`).  Each ln u becomes an int64 key of the same
order whose low bits are replaced by the sample's index; one integer sort
gives the ranks and the sample of each rank together (no ``np.sort`` of the
floats and no ``argsort``).  The few runs of keys equal in the bits kept are
put in exact order by their values, and a threshold is searched with its
truncated key (a two-level binary search), compared with exact values only
where it falls inside such a run.

Algorithm of the counts (an offline two-dimensional dominance count).  With
the grid's frequencies sorted, sample s is below the ISCO for the ``b_s``
lowest ones (a bucket table on the float bit patterns, exact, in place of a
binary search per sample: :func:`_grid_count`), so in the column of frequency
rank r the samples above the ISCO are those with b_s <= r.  Laid out in ln u
order, G[t] = b of the sample of rank t (one gather through the sort's
order), the question "how many samples of rank >= x are above the ISCO in
column r" is #{t >= x : G[t] <= r}.  G is cut into blocks of 256 ranks:

* one table holds S[c, r] = #{t >= c * 256 : G[t] <= r} (per chunk of blocks
  that fits the cache, last first: an ``np.bincount`` and two cumulative sums);
* per block, the smallest and largest G.

A query is S[c + 1, r] plus the ranks x .. end of block c = x // 256 with
G <= r: none when the block's smallest G exceeds r, all when its largest G
does not, and otherwise (a block that straddles r, a few per cent of the
queries) counted one by one, from whichever end of the block is nearer.
Ranks outside a column's mixed range (before its first rank above the ISCO,
after its last rank below it) are decided without the table.  O(N) numpy
operations to build after the O(N log N) sort, O(1) per query plus at most
128 ranks for a straddling one, instead of the O(N x nP) of a per-column
cumulative count.
"""

import sys

import numpy as np

__all__ = ["IscoCounts", "RankedValues"]

_BLOCK = 256  # ranks per block of the count table
_CHUNK = 1 << 16  # histogram bins per chunk of the count table
_PASS = 1 << 16  # values per chunk of the passes around the sort
_HI_SHIFT = 6  # high 32 bits of a float64 >> 6: buckets of relative width 2^-14
_LUT_MAX = 1 << 20
_MAGNITUDE = np.int64(0x7FFF_FFFF_FFFF_FFFF)
_SEARCH_STEP = 256  # ranks per window of the two-level search
_INF_KEY = np.int64(0x7FF0_0000_0000_0000)  # the order key of +inf
_LITTLE_ENDIAN = sys.byteorder == "little"


def _grid_count(grid, values, work=None):
    """``np.searchsorted(grid, values, side="right")`` for a sorted positive grid, exactly.

    Positive float64 numbers order like their bit patterns, so the high 32 bits
    shifted right by 6 cut the axis into buckets of relative width 2^-14.  A table
    gives, per bucket, the number of grid points below it; the few values in a
    bucket that holds a grid point (flagged -1 in the table) are counted by
    ``np.searchsorted``.  Several times faster than a binary search per value.
    Values must not be NaN (numpy's rule, NaN above everything, is kept for
    positive NaN only); falls back to ``np.searchsorted`` when the grid does not
    fit the scheme.  ``work``, an int32 array of at least 2 n elements that may be
    overwritten, holds the bucket numbers and the counts (returned as a view of it).
    """
    grid = np.ascontiguousarray(grid, dtype=np.float64)
    values = np.ascontiguousarray(values, dtype=np.float64)
    if grid.size == 0 or not grid[0] > 0 or not np.isfinite(grid[-1]) or grid.size >= 2**31:
        return np.searchsorted(grid, values, side="right")
    gkey = grid.view(np.int64) >> (32 + _HI_SHIFT)
    k0, k1 = int(gkey[0]) - 1, int(gkey[-1]) + 1  # a bucket without grid points at each end
    if k1 - k0 + 1 > _LUT_MAX or k0 < 0:
        return np.searchsorted(grid, values, side="right")
    per_bucket = np.bincount(gkey - k0, minlength=k1 - k0 + 1)
    lut = np.cumsum(per_bucket, dtype=np.int32)
    lut -= per_bucket.astype(np.int32)  # #{grid < the bucket's lowest value}
    lut[per_bucket > 0] = -1  # a grid point inside: counted one by one
    n = values.size
    key, out = (None, None) if work is None else (work[n : 2 * n], work[:n])
    if _LITTLE_ENDIAN:
        key = np.right_shift(values.view(np.int32)[1::2], _HI_SHIFT, out=key)  # high 32 bits
    else:  # pragma: no cover - big-endian machines
        key = (values.view(np.int64) >> (32 + _HI_SHIFT)).astype(np.int32)
    key -= k0
    out = lut.take(key, mode="clip", out=out)  # below the table: 0; above: all (end buckets)
    fix = np.flatnonzero(out < 0)
    out[fix] = np.searchsorted(grid, values[fix], side="right")
    return out


def _order_keys(values, out=None):
    """int64 keys in the order of float64 ``values``: key(a) < key(b) iff a < b.

    The bit pattern with the magnitude bits of negative numbers flipped: three
    in-place integer operations on one new array.  -0.0 gets the key -1, just below
    that of 0.0 (compare thresholds as ``thr + 0.0``, which turns -0.0 into 0.0);
    NaN keys lie beyond those of +-inf (on the side of their sign bit).  ``out``: an
    int64 array of the same size to write the keys into.
    """
    bits = np.ascontiguousarray(values, dtype=np.float64).view(np.int64)
    key = np.right_shift(bits, 63, out=out)
    key &= _MAGNITUDE
    key ^= bits
    return key


def _search_left(a, keys):
    """``np.searchsorted(a, keys, side="left")`` for a sorted int64 array, exactly.

    Two levels: numpy's binary search in every 256th element (a table that stays
    in the first-level cache) finds each key's window of 256 elements, and eight
    vectorised bisection steps find the rank inside it.  About twice as fast as one
    binary search over 10^6 elements, whose every step misses the cache.
    """
    n = a.size
    if n == 0:
        return np.zeros(keys.shape, dtype=np.intp)
    step = _SEARCH_STEP
    # window j: a[step (j-1)] < key <= a[step j]; the rank is in [step (j-1) + 1, step j]
    x = np.searchsorted(a[::step], keys, side="left")
    x *= step
    x -= step - 1
    np.maximum(x, 0, out=x)
    half = step // 2
    while half:  # probes past the end read a[-1] (clip): below every such key
        x += (a.take(x + (half - 1), mode="clip") < keys) * half
        half //= 2
    x[keys > a[-1]] = n
    return x


class RankedValues:
    """float64 values in ascending order, from one int64 sort, with their sample indices.

    Each value's int64 order key (:func:`_order_keys`) keeps its high bits and
    carries the value's index in the ``shift`` low bits (``shift`` = bit length of
    n - 1); one integer sort (numpy's vectorised sort, faster than ``np.sort`` of
    the floats and several times faster than ``argsort``) then gives the ranks and
    the sample of each rank together.  Values whose keys agree in the bits kept (a
    run of equal truncated keys: rare, the bits dropped are the lowest of the
    mantissa) are put in exact order by ``np.lexsort`` of their values.  Equal
    values keep an arbitrary order among themselves, which no count depends on.

    Parameters
    ----------
    values : ndarray of float64 (n,)
        No NaN.

    Attributes
    ----------
    n : int
    values : ndarray (n,)
        The values, in their own order.
    order : ndarray of int32 (n,), int64 from 2^31 values on
        Index of the value of each rank: ``values[order]`` is ``np.sort(values)``.
    """

    def __init__(self, values):
        values = np.ascontiguousarray(values, dtype=np.float64)
        n = values.size
        shift = max(1, (n - 1).bit_length())
        low = np.int64((1 << shift) - 1)
        # the passes before and after the sort go chunk by chunk through the cache
        step = _PASS
        packed = np.empty(n, dtype=np.int64)
        work = np.arange(min(n, step), dtype=np.int64)  # the indices of one chunk
        for a in range(0, n, step):
            part = _order_keys(values[a : a + step], out=packed[a : a + step])
            part &= ~low
            part |= work[: part.size]
            work += step
        packed.sort()
        # adjacent keys that agree above the low bits (as unsigned: across the sign too)
        tie = [np.zeros(0, dtype=np.intp)]
        for a in range(0, n - 1, step):
            b = min(a + step, n - 1)
            same = np.bitwise_xor(packed[a + 1 : b + 1], packed[a:b], out=work[: b - a])
            tie.append(np.flatnonzero(same.view(np.uint64) <= np.uint64(low)) + a)
        tie = np.concatenate(tie)
        order = np.empty(n, dtype=np.int32 if n < 2**31 else np.int64)
        np.bitwise_and(packed, low, out=order, casting="unsafe")
        if tie.size:
            pos = np.union1d(tie, tie + 1)  # whole runs of equal truncated keys, ascending
            fix = np.lexsort((values[order[pos]], packed[pos] >> shift))
            order[pos] = order[pos[fix]]
            packed[pos] = packed[pos[fix]]
        if n and (
            packed[0] >> shift <= -_INF_KEY >> shift or packed[-1] >> shift >= _INF_KEY >> shift
        ):  # infinities, or NaN (whose keys lie beyond them)
            if np.isnan(values).any():
                raise ValueError("RankedValues: NaN among the values")
        self.n = n
        self.values = values
        self.order = order
        self._packed = packed
        self._shift = shift

    def release_keys(self):
        """Hand over the sorted keys' memory (int64, n) as scratch space.

        :meth:`count_at_most` is unavailable afterwards; :attr:`order` and
        :meth:`at_rank` remain.
        """
        packed, self._packed = self._packed, None
        return packed

    def at_rank(self, rank):
        """The values of the given ranks (``np.sort(values)[rank]``)."""
        return self.values[self.order[rank]]

    def count_at_most(self, thr):
        """#(values <= thr) per threshold: ``np.searchsorted(np.sort(values), thr, "right")``.

        The truncated keys decide every threshold whose key differs from all the
        values' in the bits kept; a threshold that shares them with a run of values
        is compared with the run's exact values.  NaN thresholds give n.

        Parameters
        ----------
        thr : ndarray of float

        Returns
        -------
        ndarray of intp, the shape of ``thr``.
        """
        thr = np.asarray(thr, dtype=np.float64)
        shape = thr.shape
        thr = thr.ravel()
        n, shift, packed = self.n, self._shift, self._packed
        if n == 0:
            return np.zeros(shape, dtype=np.intp)
        top = _order_keys(thr + 0.0) >> shift  # -0.0 as 0.0
        nan = np.isnan(thr)
        top[nan] = 0  # any key; set to n below
        x = _search_left(packed, top << shift)  # ranks with a truncated key below
        hit = np.flatnonzero((packed.take(x, mode="clip") >> shift == top) & (x < n) & ~nan)
        if hit.size:  # a run shares the threshold's truncated key: exact values
            start = x[hit]
            stop = np.searchsorted(packed, (top[hit] + 1) << shift, side="left")
            length = stop - start
            end = np.cumsum(length)
            t = np.arange(end[-1]) - np.repeat(end - length - start, length)
            below = np.zeros(t.size + 1, dtype=np.intp)
            np.cumsum(self.at_rank(t) <= np.repeat(thr[hit], length), out=below[1:])
            x[hit] = start + below[end] - below[end - length]
        x[nan] = n
        return x.reshape(shape)


class IscoCounts:
    """Per-period counts of the samples above the ISCO, by ln u rank.

    Parameters
    ----------
    f_grid : ndarray (nP,)
        GW frequencies of the grid [Hz].
    f_isco : ndarray (n,)
        f_ISCO of each sample [Hz].
    order : ndarray of int (n,)
        The sample of each ln u rank (:attr:`RankedValues.order`, as
        ``np.argsort`` of ln u).
    scratch : ndarray of int64 (>= n,), optional
        Memory that may be overwritten (:meth:`RankedValues.release_keys`).

    Attributes
    ----------
    n : int
        Number of samples.
    n_above : ndarray of int (nP,)
        Number of samples above the ISCO in each column.
    """

    def __init__(self, f_grid, f_isco, order, scratch=None):
        n = f_isco.size
        n_p = f_grid.size
        bk = _BLOCK
        grid_order = np.argsort(f_grid, kind="stable")
        r = np.empty(n_p, dtype=np.intp)
        r[grid_order] = np.arange(n_p)
        work = None if scratch is None else scratch.view(np.int32)[: 2 * n]
        b = _grid_count(f_grid[grid_order], f_isco, work)
        n_blocks = max(1, -(-n // bk))
        # G in ln u order, padded to whole blocks with n_p (above the ISCO in no column)
        g = np.full(n_blocks * bk, n_p, dtype=np.int32)
        if n:
            np.take(b.astype(np.int32, copy=False), order, out=g[:n], mode="clip")
        self.n = n
        self._g = g
        self._r = r
        self._n_blocks = n_blocks
        # table[c, r] = #{t >= c * block : G[t] <= r}; row n_blocks is the empty suffix
        blocks = g.reshape(n_blocks, bk)
        table = np.empty((n_blocks + 1, n_p), dtype=np.int32)
        table[n_blocks] = 0
        # in chunks of blocks, last first, so that each histogram stays in the cache: per
        # block the count of G <= r (a histogram and its cumulative sum), then the
        # suffix sums over blocks c .. last
        width = n_p + 1
        chunk = max(1, _CHUNK // width)
        offset = np.arange(chunk, dtype=np.intp)[:, None] * width
        for c1 in range(n_blocks, 0, -chunk):
            c0 = max(0, c1 - chunk)
            cell = blocks[c0:c1] + offset[: c1 - c0]
            hist = np.bincount(cell.ravel(), minlength=(c1 - c0) * width)
            part = table[c1 - 1 : (c0 - 1 if c0 else None) : -1]  # blocks c1 - 1 .. c0
            np.cumsum(hist.reshape(c1 - c0, width)[::-1, :n_p], axis=1, out=part)
            part[0] += table[c1]
            np.add.accumulate(part, axis=0, out=part)
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
        rr = self._r[np.asarray(col)]  # per column, broadcast against x
        x = np.asarray(x)
        first = self._first[rr]
        # decided by where x lies: all of the samples above the ISCO at or after x, or
        # every rank from x on above the ISCO
        out = np.where(x <= first, self._at_most[rr], self.n - x)
        und = (x > first) & (x <= self._last[rr])
        if und.any():
            x, rr = np.broadcast_arrays(x, rr)
            out[und] = self._straddling(x[und], rr[und])
        return out

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
        k : int or ndarray of int (col.size,)
            Count required, 1 <= k <= n (one per column: several credibility
            levels in one call).

        Returns
        -------
        ndarray of int (col.size,); -1 where fewer than k samples are below the ISCO.
        """
        col = np.asarray(col, dtype=np.intp)
        k = np.broadcast_to(k, col.shape)
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
        best = lo * bk + np.count_nonzero(count >= k[:, None], axis=1) - 1
        return np.where(ok0, best, -1)
