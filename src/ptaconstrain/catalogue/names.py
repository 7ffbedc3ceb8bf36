"""Galaxy names: compact storage, 64-bit hashes, and de-duplication across chunks.

A catalogue of 10^7 rows cannot afford a sort of all its names to find
repeats.  :class:`NameSet` keeps the names seen so far as 64-bit hashes (FNV-1a
over the Unicode code points, then the splitmix64 finaliser; Vigna 2015,
"Further scramblings of Marsaglia's xorshift generators") in a few sorted
levels, merged when a level grows as large as the one before it (a
log-structured merge), so each chunk costs a binary search per name.  A hash
match is always confirmed by comparing the names exactly, so two names that
share a hash are never mistaken for one.  Names are held as UTF-8 bytes
(``numpy.bytes_``), whose byte order is the code-point order of the text.
"""

import numpy as np

__all__ = ["name_bytes", "name_hashes", "NameSet", "duplicate_mask"]

_FNV_OFFSET = np.uint64(0xCBF29CE484222325)
_FNV_PRIME = np.uint64(0x100000001B3)


def name_bytes(names):
    """Names as UTF-8 bytes (a ``numpy.bytes_`` array), byte order = code-point order.

    Parameters
    ----------
    names : array of str (or of bytes, returned as they are)

    Returns
    -------
    ndarray of ``numpy.bytes_``

    Examples
    --------
    >>> name_bytes(["Invented 1", "Œ"]).tolist()
    [b'Invented 1', b'\\xc5\\x92']
    """
    names = np.asarray(names)
    if names.dtype.kind == "S":
        return names
    names = names if names.dtype.kind == "U" else names.astype(str)
    names = names if names.flags.c_contiguous else names.copy()
    if names.size == 0:
        return names.astype("S1")
    width = names.dtype.itemsize // 4
    codes = names.reshape(-1).view(np.uint32)
    if codes.size == 0:
        return names.astype("S1")
    if int(codes.max()) < 128:  # ASCII: each code point is its byte (NUL padding stays NUL)
        return codes.astype(np.uint8).view(f"S{width}").reshape(names.shape)
    return np.char.encode(names, "utf-8")


def name_hashes(names):
    """64-bit hashes of names, vectorised over rows (a loop over character positions only).

    Parameters
    ----------
    names : array of str or bytes

    Returns
    -------
    ndarray of uint64

    Examples
    --------
    >>> h = name_hashes(["Invented 1", "Invented 2", "Invented 1"])
    >>> h.dtype, bool(h[0] == h[2]), bool(h[0] != h[1])
    (dtype('uint64'), True, True)
    """
    names = np.asarray(names)
    if names.dtype.kind == "S":
        width = max(names.dtype.itemsize, 1)
        codes = np.frombuffer(
            np.ascontiguousarray(names).astype(f"S{width}").tobytes(), np.uint8
        ).reshape(names.size, width)
    else:
        names = np.ascontiguousarray(names.astype(str))
        width = max(names.dtype.itemsize // 4, 1)
        codes = names.astype(f"U{width}").view(np.uint32).reshape(names.size, width)
    h = np.full(names.size, _FNV_OFFSET, dtype=np.uint64)
    with np.errstate(over="ignore"):
        for j in range(codes.shape[1]):  # padding (code 0) leaves the hash unchanged
            c = codes[:, j].astype(np.uint64)
            h = np.where(c != 0, (h ^ c) * _FNV_PRIME, h)
        h ^= h >> np.uint64(30)
        h *= np.uint64(0xBF58476D1CE4E5B9)
        h ^= h >> np.uint64(27)
        h *= np.uint64(0x94D049BB133111EB)
        h ^= h >> np.uint64(31)
    return h


class NameSet:
    """The names seen so far, for finding repeats chunk by chunk (first occurrence kept).

    Memory: 8 bytes of hash plus the UTF-8 name per distinct name.

    Examples
    --------
    >>> s = NameSet()
    >>> s.add(["a", "b", "a"]).tolist(), s.add(["b", "c"]).tolist()
    ([False, False, True], [True, False])
    """

    def __init__(self):
        self._levels = []  # (sorted hashes, names in the same order), largest first

    def __len__(self):
        return int(sum(h.size for h, _ in self._levels))

    def add(self, names):
        """Record ``names``; True for each that repeats an earlier name (this call or before).

        Parameters
        ----------
        names : array of str or bytes

        Returns
        -------
        ndarray of bool
        """
        names = name_bytes(names)
        h = name_hashes(names)
        dup = _repeats_within(h, names)
        for level_h, level_names in self._levels:
            if not level_h.size:
                continue
            pos = np.minimum(np.searchsorted(level_h, h), level_h.size - 1)
            hit = np.flatnonzero(~dup & (level_h[pos] == h))
            same = level_names[pos[hit]] == names[hit]
            dup[hit[same]] = True
            for i in hit[~same]:  # a 64-bit hash collision (about 1e-6 at 1e7 names)
                lo, hi = (
                    np.searchsorted(level_h, h[i], "left"),
                    np.searchsorted(level_h, h[i], "right"),
                )
                dup[i] = bool(np.any(level_names[lo:hi] == names[i]))
        keep = ~dup
        order = np.argsort(h[keep], kind="stable")
        self._levels.append((h[keep][order], names[keep][order]))
        while len(self._levels) > 1 and self._levels[-1][0].size >= self._levels[-2][0].size:
            (h2, n2), (h1, n1) = self._levels.pop(), self._levels.pop()
            hh, nn = np.concatenate([h1, h2]), np.concatenate([n1, n2])
            order = np.argsort(hh, kind="stable")
            self._levels.append((hh[order], nn[order]))
        return dup


def _repeats_within(h, names):
    """True for each name that repeats an earlier one of the same array (by hash, then exactly)."""
    dup = np.zeros(h.size, dtype=bool)
    if h.size < 2:
        return dup
    order = np.argsort(h, kind="stable")  # equal hashes keep their arrival order
    hs = order[1:][h[order][1:] == h[order][:-1]]
    if not hs.size:
        return dup
    # rows whose hash equals the previous row's (in hash order): compare with the group's first
    start = np.flatnonzero(np.r_[True, h[order][1:] != h[order][:-1]])
    first_of = order[start[np.searchsorted(start, np.arange(h.size), "right") - 1]]
    rank = np.empty(h.size, dtype=np.int64)
    rank[order] = np.arange(h.size)
    same = names[hs] == names[first_of[rank[hs]]]
    dup[hs[same]] = True
    for i in hs[~same]:  # a hash collision inside the chunk: compare with every earlier row
        earlier = order[start[np.searchsorted(start, rank[i], "right") - 1] : rank[i]]
        dup[i] = bool(np.any(names[earlier] == names[i]))
    return dup


def duplicate_mask(names):
    """True for every repeat of a name already seen earlier in ``names``.

    Parameters
    ----------
    names : array of str

    Returns
    -------
    ndarray of bool

    Examples
    --------
    >>> duplicate_mask(["a", "b", "a"]).tolist()
    [False, False, True]
    """
    return NameSet().add(names)
