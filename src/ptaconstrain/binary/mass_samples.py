"""Measured black-hole masses as posterior samples (and the file that holds them).

Dynamical models give posterior samples of the black-hole mass, often jointly
with the distance or a mass-to-light ratio, not a symmetric error in dex.  A
:class:`MassSamples` keeps them as they are: a mass per sample, optionally the
distance the sample belongs to, and optionally a weight (for weighted
posteriors, e.g. from nested sampling).
:func:`ptaconstrain.analysis.sampling.resample_host` draws from them.

File format (:func:`load_mass_samples`): any table astropy reads (ECSV, CSV,
FITS, ...), one sample per row, with a ``mass`` column (solMass; a unit in the
file wins) and optionally ``distance`` (Mpc; luminosity distance, the mass
being the one at that distance) and ``weight`` (or ``weights``; non-negative,
any normalisation).
"""

from dataclasses import dataclass

import numpy as np
from astropy import units as u

from .._inputs import check_distance, check_mass
from ..errors import InputError

__all__ = ["MassSamples", "MassSamplesError", "load_mass_samples"]


class MassSamplesError(InputError):
    """A posterior-sample table that cannot be used; the message names the fix.

    Parameters
    ----------
    message : str
        One line naming the problem and the fix.

    Examples
    --------
    >>> try:
    ...     MassSamples([1e9])
    ... except MassSamplesError as err:
    ...     print(err)
    mass samples: need at least two samples in one column
    """


@dataclass(frozen=True, eq=False)
class MassSamples:
    """Posterior samples of a black-hole mass (and optionally distance), with weights.

    Parameters
    ----------
    mass : Quantity (n,) [mass] or numbers (solMass)
        Total black-hole mass of each sample, within the plausible range.
    distance : Quantity (n,) [length] or numbers (Mpc), optional
        Luminosity distance of each sample (the mass is the one at it).
    weights : array (n,), optional
        Non-negative, not all zero; default equal.
    source : str
        Where the samples came from (for provenance).

    Examples
    --------
    >>> MassSamples([1e9, 2e9, 3e9]).effective_size
    3.0
    """

    mass: u.Quantity
    distance: u.Quantity | None = None
    weights: np.ndarray | None = None
    source: str = "samples"

    def __post_init__(self):
        m = np.atleast_1d(check_mass(self.mass, "mass samples"))
        if m.ndim != 1 or m.size < 2:
            raise MassSamplesError("mass samples: need at least two samples in one column")
        object.__setattr__(self, "mass", m.to(u.Msun))
        if self.distance is not None:
            d = np.atleast_1d(check_distance(self.distance, "distance samples"))
            if d.shape != m.shape:
                raise MassSamplesError("distance samples: need one distance per mass sample")
            object.__setattr__(self, "distance", d.to(u.Mpc))
        if self.weights is not None:
            w = np.asarray(self.weights, dtype=float).reshape(-1)
            if w.shape != m.shape:
                raise MassSamplesError("weights: need one weight per mass sample")
            bad = ~np.isfinite(w) | (w < 0)
            if np.any(bad):
                i = int(np.flatnonzero(bad)[0])
                raise MassSamplesError(
                    f"weights: row {i + 1} has {w[i]!r}; weights must be finite and >= 0"
                )
            if not w.sum() > 0:
                raise MassSamplesError("weights: all zero; give at least one positive weight")
            object.__setattr__(self, "weights", w)

    @property
    def size(self):
        """Number of samples (rows)."""
        return self.mass.size

    @property
    def probabilities(self):
        """Normalised weights (equal when none were given), ndarray (n,)."""
        if self.weights is None:
            return np.full(self.size, 1.0 / self.size)
        return self.weights / self.weights.sum()

    @property
    def effective_size(self):
        """Kish's effective sample size (sum w)^2 / sum w^2 (Kish 1965)."""
        p = self.probabilities
        return float(1.0 / np.sum(p**2))

    def describe(self):
        """Provenance as a flat dict of strings."""
        p = self.probabilities
        order = np.argsort(self.mass.value)
        cdf = np.cumsum(p[order])
        lo, med, hi = (self.mass.value[order][np.searchsorted(cdf, c)] for c in (0.16, 0.5, 0.84))
        return {
            "mass_samples": self.source,
            "mass_samples_rows": str(self.size),
            "mass_samples_effective_size": f"{self.effective_size:.4g}",
            "mass_samples_mass": f"{med:.4g} (-{med - lo:.3g}/+{hi - med:.3g}) solMass",
            "mass_samples_distance": "from the file"
            if self.distance is not None
            else "not in the file (the host's distance and its error)",
        }


def load_mass_samples(path):
    """Read a posterior-sample table (format in the module docstring).

    Parameters
    ----------
    path : path-like

    Returns
    -------
    MassSamples

    Raises
    ------
    MassSamplesError
        One line naming the file, the column and the fix.

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     table = Path(tmp) / "posterior.csv"
    ...     _ = table.write_text(chr(10).join(["mass", "1.8e10", "2.0e10", "2.3e10"]))
    ...     samples = load_mass_samples(table)
    >>> samples.mass
    <Quantity [1.8e+10, 2.0e+10, 2.3e+10] solMass>
    """
    from pathlib import Path

    from .._files import read_table

    path = Path(path)
    t = read_table(
        path,
        "mass-sample table",
        MassSamplesError,
        hint="write it as ECSV or CSV with a 'mass' column",
    )
    names = {c.lower(): c for c in t.colnames}
    if "mass" not in names:
        raise MassSamplesError(
            f"{path.name}: no 'mass' column (solMass); found "
            f"{', '.join(t.colnames) or 'no columns'}"
        )

    def column(key, unit):
        col = t[names[key]]
        values = np.ma.filled(np.ma.asarray(getattr(col, "value", col), dtype=float), np.nan)
        if np.any(np.isnan(values)):
            row = int(np.flatnonzero(np.isnan(values))[0]) + 1
            raise MassSamplesError(
                f"{path.name}: column '{key}' is empty or NaN in row {row}; remove that row"
            )
        if unit is None:
            return values
        return values * (col.unit if getattr(col, "unit", None) is not None else unit)

    wkey = "weight" if "weight" in names else ("weights" if "weights" in names else None)
    try:
        return MassSamples(
            column("mass", u.Msun),
            column("distance", u.Mpc) if "distance" in names else None,
            column(wkey, None) if wkey else None,
            source=path.name,
        )
    except (InputError, u.UnitsError) as err:
        raise MassSamplesError(f"{path.name}: {err}") from err
