"""Ranked rows on disk: per-chunk sorted runs, merged into one global order by blocks.

How a catalogue too large for memory is ranked (an external merge sort):

1. each chunk's rows are sorted by the ranking key (:func:`sort_keys`, then the
   name) and written as a *run*: one ``.npy`` file per column in a private
   temporary directory;
2. only the compact keys stay in memory (two float64 and the UTF-8 name per
   row, about 30 bytes); when the last chunk is in, one ``lexsort`` of the
   keys gives the global order (rows whose key and tie-breaker are equal are
   ordered by name, the rule of the in-memory ranking);
3. :meth:`RankedRuns.blocks` hands the rows out in global order, a block at a
   time.  Because every run is sorted by the same rule, the rows a block takes
   from one run are a contiguous slice of that run, read sequentially.

Peak memory is the keys plus one chunk or one block, whatever the catalogue's size.
Sort keys are rounded to 12 significant digits, so the order of two galaxies
cannot depend on last-bit differences between chunkings of the same arithmetic.
"""

import shutil
import tempfile
from pathlib import Path

import numpy as np
from astropy import units as u

from .metrics import METRICS
from .names import name_bytes

__all__ = ["sort_keys", "ranking_order", "RankedRuns", "KEY_DIGITS"]

#: significant digits kept in the sort keys
KEY_DIGITS = 12


def _round_sig(x, digits=KEY_DIGITS):
    x = np.array(x, dtype=float)
    fin = np.isfinite(x) & (x != 0)
    e = np.floor(np.log10(np.abs(x[fin])))
    scale = 10.0 ** (digits - 1 - e)
    x[fin] = np.round(x[fin] * scale) / scale
    return x + 0.0  # -0.0 -> 0.0


def sort_keys(metric, values, h0_ratio):
    """(key, tie): ascending sort keys of a ranking, rounded to :data:`KEY_DIGITS` digits.

    The key is the metric (negated when larger is better), the tie-breaker
    -h0_ratio; NaN sorts last in both.

    Parameters
    ----------
    metric : str
        A key of :data:`~ptaconstrain.catalogue.metrics.METRICS`.
    values, h0_ratio : array of float

    Returns
    -------
    (ndarray, ndarray) of float64

    Examples
    --------
    >>> key, tie = sort_keys("expected_number", [1e-5, 3e-5, float("nan")], [2.0, 1.0, 0.5])
    >>> key                 # larger is better: negated; NaN last
    array([-1.e-05, -3.e-05,     inf])
    """
    descending = METRICS[metric][0]
    values = np.asarray(values, dtype=float)
    key = _round_sig(-values if descending else values)
    tie = _round_sig(-np.asarray(h0_ratio, dtype=float))
    return np.where(np.isnan(key), np.inf, key), np.where(np.isnan(tie), np.inf, tie)


def ranking_order(metric, values, h0_ratio, names):
    """Indices that sort rows best first: by key, then tie-breaker, then name.

    Parameters
    ----------
    metric : str
    values, h0_ratio : array of float
    names : array of str or bytes

    Returns
    -------
    ndarray of int
    """
    key, tie = sort_keys(metric, values, h0_ratio)
    return np.lexsort((name_bytes(names), tie, key))


class RankedRuns:
    """Ranked rows written chunk by chunk as sorted runs, read back in global order.

    Parameters
    ----------
    metric : str
        What the ranking sorts by.
    directory : path-like
        Where the private temporary directory of the runs is made (e.g. the
        output directory, so that the runs sit on the same disk); it is
        removed by :meth:`close`.

    Attributes
    ----------
    n_rows : int
        Rows added so far.

    Examples
    --------
    >>> import tempfile
    >>> import numpy as np
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     runs = RankedRuns("h0_ratio", tmp)
    ...     runs.add({"name": np.array(["A", "B"]), "h0_ratio": np.array([0.5, 2.0])})
    ...     runs.add({"name": np.array(["C"]), "h0_ratio": np.array([1.0])})
    ...     runs.finish()
    ...     print([b"".join(block["name"]).decode() for block in runs.blocks()])
    ...     runs.close()
    ['BCA']
    """

    def __init__(self, metric, directory):
        self.metric = metric
        Path(directory).mkdir(parents=True, exist_ok=True)
        self._dir = Path(tempfile.mkdtemp(prefix=".ranking-runs-", dir=directory))
        self._keys, self._ties, self._names, self._sizes = [], [], [], []
        self._units, self._widths, self._columns = {}, {}, None
        self._order = None
        self.n_rows = 0

    def add(self, data):
        """Sort one chunk's rows and write them as a run.

        Parameters
        ----------
        data : dict of array or Quantity
            Equal-length columns with at least ``name``, ``h0_ratio`` and the metric;
            the same keys for every chunk.
        """
        names = name_bytes(data["name"])
        key, tie = sort_keys(self.metric, data[self.metric], data["h0_ratio"])
        order = np.lexsort((names, tie, key))
        run = len(self._sizes)
        self._columns = list(data)
        for k, v in data.items():
            if isinstance(v, u.Quantity):
                self._units[k] = v.unit
                v = v.value
            v = name_bytes(v) if np.asarray(v).dtype.kind == "U" else np.asarray(v)
            if v.dtype.kind == "S":
                self._widths[k] = max(self._widths.get(k, 1), v.dtype.itemsize)
            np.save(self._dir / f"{run}_{k}.npy", v[order])
        self._keys.append(key[order])
        self._ties.append(tie[order])
        self._names.append(names[order])
        self._sizes.append(names.size)
        self.n_rows += names.size

    def finish(self):
        """Merge the runs' keys into the global order (call once, after the last chunk)."""
        key, tie = np.concatenate(self._keys), np.concatenate(self._ties)
        self._keys = self._ties = None
        order = np.lexsort((tie, key))  # stable: within equal keys, run by run
        ks, ts = key[order], tie[order]
        del key, tie
        eq = (ks[1:] == ks[:-1]) & (ts[1:] == ts[:-1])
        del ks, ts
        if eq.any():  # equal key and tie-breaker across runs: order those rows by name
            mark = np.zeros(order.size, dtype=bool)
            mark[1:] |= eq
            mark[:-1] |= eq
            group = np.cumsum(np.r_[True, ~eq])[mark]
            sub = order[mark]
            names = self._gather_names(sub)
            order[mark] = sub[np.lexsort((names, group))]
        self._order = order
        self._names = None

    def _starts(self):
        return np.r_[0, np.cumsum(self._sizes)].astype(np.int64)

    def _gather_names(self, index):
        starts = self._starts()
        run = np.searchsorted(starts, index, "right") - 1
        out = np.empty(index.size, dtype=f"S{max(n.dtype.itemsize for n in self._names)}")
        for r in np.unique(run):  # a loop over runs, not rows
            sel = run == r
            out[sel] = self._names[r][index[sel] - starts[r]]
        return out

    def blocks(self, size=1 << 18, columns=None):
        """Yield the rows in global order, ``size`` at a time.

        Parameters
        ----------
        size : int
        columns : list of str, optional
            Only these columns (default: all).

        Yields
        ------
        dict of ndarray or Quantity
            Text columns as UTF-8 bytes of one width for the whole ranking.
        """
        if self._order is None:
            raise RuntimeError("RankedRuns.blocks before finish()")
        columns = list(self._columns) if columns is None else list(columns)
        starts = self._starts()
        for b0 in range(0, self.n_rows, int(size)):
            idx = self._order[b0 : b0 + int(size)]
            run = np.searchsorted(starts, idx, "right") - 1
            by_run = np.argsort(run, kind="stable")
            runs, first = np.unique(run[by_run], return_index=True)
            bounds = np.r_[first, idx.size]
            out = {}
            for k in columns:
                dtype = f"S{self._widths[k]}" if k in self._widths else None
                col = None
                for r, a, b in zip(runs, bounds[:-1], bounds[1:], strict=True):
                    pos = by_run[a:b]
                    lo = int(idx[pos[0]] - starts[r])  # contiguous and increasing in the run
                    piece = np.load(self._dir / f"{r}_{k}.npy", mmap_mode="r")[lo : lo + b - a]
                    if col is None:
                        col = np.empty(idx.size, dtype=dtype or piece.dtype)
                    col[pos] = piece
                out[k] = col * self._units[k] if k in self._units else col
            yield out

    def column(self, key):
        """One column of every row, in global order (e.g. for a figure)."""
        parts = [b[key] for b in self.blocks(columns=[key])]
        if isinstance(parts[0], u.Quantity):
            return np.concatenate([p.value for p in parts]) * parts[0].unit
        return np.concatenate(parts)

    def close(self):
        """Remove the runs from disk."""
        shutil.rmtree(self._dir, ignore_errors=True)

    def __repr__(self):
        return f"RankedRuns({self.n_rows} rows in {len(self._sizes)} runs by {self.metric})"
