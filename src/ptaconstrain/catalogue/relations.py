"""Black-hole mass scaling relations, kept as data.

A relation predicts the total black-hole mass M from one property of the host
galaxy (its *predictor*) as a straight line in log10 M:

* ``form = "power_law"``: log10(M / solMass) = alpha + beta log10(x / pivot)
* ``form = "linear"`` (for magnitudes): log10(M / solMass) = alpha + beta (x - pivot)

with an intrinsic (1 sigma) scatter of log10 M at fixed x, in dex.  The
coefficients live in TOML files: the shipped ``ptaconstrain/data/relations.toml``
(Kormendy & Ho 2013 M-sigma, M-M_bulge and M-L_K; Thomas et al. 2016 M-r_b;
alternatives) and any user file of the same schema (see that file's header).
The order of the shipped file is the default order of preference.

The scatter matters: h0 grows as M^(5/3), so a 0.3 dex scatter in M is a
0.5 dex scatter in h0; the ranking marginalises over it (population.py).
"""

from dataclasses import dataclass
from pathlib import Path

import numpy as np
from astropy import units as u

from .._files import read_toml
from .._inputs import check_schema
from ..errors import InputError

__all__ = [
    "PREDICTORS",
    "Relation",
    "RelationError",
    "load_relations",
    "shipped_relations",
    "select_relations",
]

#: Predictor name -> unit a bare number is read in.
PREDICTORS = {
    "velocity_dispersion": "km/s",
    "bulge_mass": "solMass",
    "stellar_mass": "solMass",
    "k_abs_mag": "mag",
    "core_radius": "kpc",
}
_FORMS = ("power_law", "linear")
_REQUIRED = ("name", "predictor", "alpha", "beta", "pivot", "unit", "scatter_dex", "citation")
#: schema of a relations TOML file (see :func:`ptaconstrain._inputs.check_schema`);
#: unknown keys of an entry are named by :func:`load_relations` itself
RELATIONS_SCHEMA = {
    "relation": [
        {
            "name": str,
            "predictor": str,
            "alpha": float,
            "beta": float,
            "pivot": float,
            "unit": str,
            "scatter_dex": float,
            "citation": str,
            "form": str,
            "from_memory": bool,
            "note": str,
            "*": object,
        }
    ],
    "*": object,
}


class RelationError(InputError):
    """A relation (or relations file) that cannot be used; the message names the fix.

    Parameters
    ----------
    message : str
        One line naming the problem and the fix.

    Examples
    --------
    >>> try:
    ...     select_relations(["no_such_relation"])
    ... except RelationError as err:
    ...     print(err)
    relation 'no_such_relation' is unknown: use one of kh13_sigma, ...
    """


@dataclass(frozen=True)
class Relation:
    """One black-hole mass scaling relation.

    Parameters
    ----------
    name : str
    predictor : str
        One of :data:`PREDICTORS`.
    alpha, beta : float
        log10(M / solMass) at the pivot, and the slope.
    pivot : float
        Pivot of the predictor, in ``unit``.
    unit : str
        Unit of the predictor (``"mag"`` for magnitudes).
    scatter_dex : float
        Intrinsic 1 sigma scatter of log10 M, dex (>= 0).
    citation : str
    form : {"power_law", "linear"}
    from_memory : bool
        True when the coefficients were recalled, not re-read from the paper.
    note : str

    Examples
    --------
    >>> rel = Relation(name="invented", predictor="velocity_dispersion", alpha=8.5,
    ...                beta=4.4, pivot=200.0, unit="km/s", scatter_dex=0.3,
    ...                citation="an invented example")
    >>> rel.log_mass(200.0)        # alpha at the pivot
    array(8.5)
    """

    name: str
    predictor: str
    alpha: float
    beta: float
    pivot: float
    unit: str
    scatter_dex: float
    citation: str
    form: str = "power_law"
    from_memory: bool = False
    note: str = ""

    def __post_init__(self):
        where = f"relation {self.name!r}"
        if not str(self.name).strip():
            raise RelationError("relation name: must not be empty")
        if self.predictor not in PREDICTORS:
            raise RelationError(
                f"{where}: predictor {self.predictor!r} is unknown; use one of "
                f"{', '.join(PREDICTORS)}"
            )
        if self.form not in _FORMS:
            raise RelationError(f"{where}: form {self.form!r} is unknown; use power_law or linear")
        for key in ("alpha", "beta", "pivot", "scatter_dex"):
            v = getattr(self, key)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not np.isfinite(v):
                raise RelationError(f"{where}: {key} must be a finite number, got {v!r}")
        if self.scatter_dex < 0:
            raise RelationError(f"{where}: scatter_dex must be >= 0")
        if self.form == "power_law" and self.pivot <= 0:
            raise RelationError(f"{where}: a power-law pivot must be positive")
        try:
            unit = u.Unit(self.unit)
        except ValueError as err:
            raise RelationError(f"{where}: unit {self.unit!r} is not an astropy unit") from err
        expected = u.Unit(PREDICTORS[self.predictor])
        if not unit.is_equivalent(expected):
            raise RelationError(
                f"{where}: unit {self.unit!r} does not fit predictor {self.predictor} "
                f"(needs something like {expected})"
            )

    def _values(self, x):
        """Predictor values as a float array in the relation's unit."""
        if isinstance(x, u.Quantity):
            if self.form == "linear" and x.unit.physical_type == "dimensionless":
                return np.asarray(x.value, dtype=float)
            return np.asarray(x.to_value(u.Unit(self.unit)), dtype=float)
        return np.asarray(x, dtype=float)

    def log_mass(self, x):
        """Median log10(M / solMass) at predictor value(s) ``x``.

        Parameters
        ----------
        x : Quantity or array
            Bare numbers are read in the relation's ``unit``.

        Returns
        -------
        ndarray (dex); NaN where ``x`` is not usable (non-finite, or <= 0
        for a power law).
        """
        x = self._values(x)
        with np.errstate(divide="ignore", invalid="ignore"):
            if self.form == "power_law":
                arg = np.where(x > 0, x / self.pivot, np.nan)
                out = self.alpha + self.beta * np.log10(arg)
            else:
                out = self.alpha + self.beta * (x - self.pivot)
        return np.where(np.isfinite(out), out, np.nan)

    def mass(self, x):
        """Median total black-hole mass at ``x`` (Quantity [solMass])."""
        return 10.0 ** self.log_mass(x) * u.Msun

    def log_mass_error(self, x, x_err):
        """Error of log10 M (dex) propagated from a 1 sigma error of the predictor.

        d log10 M = beta dx / (x ln 10) for a power law, beta dx for ``linear``.
        This is added in quadrature to :attr:`scatter_dex` by the catalogue.

        Parameters
        ----------
        x, x_err : Quantity or array (bare numbers in ``unit``)

        Returns
        -------
        ndarray (dex).
        """
        x, dx = self._values(x), self._values(x_err)
        with np.errstate(divide="ignore", invalid="ignore"):
            if self.form == "power_law":
                return np.abs(self.beta * dx / (x * np.log(10.0)))
            return np.abs(self.beta * dx)

    def describe(self):
        """One line: name, formula, scatter and citation (for provenance meta)."""
        if self.form == "power_law":
            law = f"log M = {self.alpha:g} + {self.beta:g} log(x/{self.pivot:g} {self.unit})"
        else:
            law = f"log M = {self.alpha:g} + {self.beta:g} (x - ({self.pivot:g} {self.unit}))"
        mem = " (from memory)" if self.from_memory else ""
        return (
            f"{self.name}: {self.predictor}, {law}, scatter {self.scatter_dex:g} dex; "
            f"{self.citation}{mem}"
        )


def load_relations(path):
    """Read relations from a TOML file (schema: see ``data/relations.toml``).

    Parameters
    ----------
    path : str or path-like

    Returns
    -------
    dict
        name -> :class:`Relation`, in file order.

    Raises
    ------
    RelationError
        Naming the file, the entry and the problem.

    Examples
    --------
    >>> from ptaconstrain.data import path
    >>> relations = load_relations(path("relations.toml"))
    >>> next(iter(relations))
    'kh13_sigma'
    """
    path = Path(path)
    data = read_toml(path, "relations file", RelationError)
    try:
        check_schema(data, RELATIONS_SCHEMA, path.name)
    except InputError as err:
        raise RelationError(str(err)) from err
    entries = data.get("relation")
    if not isinstance(entries, list) or not entries:
        raise RelationError(f"{path.name}: no [[relation]] tables found (see the schema)")
    out = {}
    for i, entry in enumerate(entries):
        missing = [k for k in _REQUIRED if k not in entry]
        if missing:
            raise RelationError(
                f"{path.name}: relation #{i + 1} lacks {', '.join(missing)}: add them"
            )
        unknown = set(entry) - set(_REQUIRED) - {"form", "from_memory", "note"}
        if unknown:
            raise RelationError(
                f"{path.name}: relation #{i + 1} has unknown keys {', '.join(sorted(unknown))}"
            )
        try:
            rel = Relation(**entry)
        except RelationError as err:
            raise RelationError(f"{path.name}: {err}") from err
        except TypeError as err:
            raise RelationError(f"{path.name}: relation #{i + 1}: {err}") from err
        if rel.name in out:
            raise RelationError(f"{path.name}: relation name {rel.name!r} appears twice")
        out[rel.name] = rel
    return out


def shipped_relations():
    """The relations shipped in ``ptaconstrain/data/relations.toml`` (name -> Relation).

    Returns
    -------
    dict
        name -> :class:`Relation`, in the file's order (the default order of preference).

    Examples
    --------
    >>> rel = shipped_relations()["kh13_sigma"]
    >>> rel.predictor, rel.unit
    ('velocity_dispersion', 'km/s')
    """
    from ..data import path

    return load_relations(path("relations.toml"))


def select_relations(choices=None):
    """Relations in order of preference, from names and/or TOML files.

    Parameters
    ----------
    choices : iterable of str or Relation, optional
        Each item is a shipped relation's name, a path to a TOML file (all of
        whose relations are taken, in file order), or a :class:`Relation`.
        Default: all shipped relations, in the shipped order.

    Returns
    -------
    list of Relation
        The order is the order of preference: a galaxy uses the first one
        whose predictor it has.

    Raises
    ------
    RelationError
        For an unknown name or a bad file.

    Examples
    --------
    >>> [r.name for r in select_relations(["mm13_sigma", "kh13_bulge"])]
    ['mm13_sigma', 'kh13_bulge']
    """
    shipped = shipped_relations()
    if not choices:
        return list(shipped.values())
    out = []
    for item in choices:
        if isinstance(item, Relation):
            out.append(item)
        elif str(item).lower().endswith(".toml"):
            out.extend(load_relations(item).values())
        elif item in shipped:
            out.append(shipped[item])
        else:
            raise RelationError(
                f"relation {item!r} is unknown: use one of {', '.join(shipped)} or a .toml file"
            )
    names = [r.name for r in out]
    dup = {n for n in names if names.count(n) > 1}
    if dup:
        raise RelationError(f"relation {sorted(dup)[0]!r} is chosen twice: name it once")
    return out
