"""A table of hosts to bound one by one: the catalogue policy, one Host per row.

``ptaconstrain exclude --hosts TABLE`` reads its table exactly as ``rank``
reads a catalogue (:mod:`ptaconstrain.catalogue.columns` for the column
mapping, :func:`ptaconstrain.catalogue.rows.prepare_chunk` for the input
policy of every field, :class:`~ptaconstrain.catalogue.rows.Rejections` for
bad rows), then makes one :class:`~ptaconstrain.binary.host.Host` per usable
row.  Beyond the catalogue fields, a host row may carry ``distance_err``
(Gaussian 1 sigma, Mpc) and ``velocity_dispersion`` (draws the hardening
radius).  A mass from a scaling relation carries the relation's scatter as
its error, so such a host is sampled like one with a measured error.
"""

from dataclasses import dataclass

import numpy as np
from astropy import units as u

from ..binary.host import Host
from ..cosmo import DistanceRedshift
from ..errors import InputError
from .columns import CatalogError, ColumnMap
from .names import duplicate_mask
from .reader import CatalogReader
from .relations import select_relations
from .rows import Rejections, column_values, prepare_chunk

__all__ = ["HostTable", "read_hosts"]


@dataclass(frozen=True)
class HostTable:
    """The usable hosts of a table and the rows that were not.

    Attributes
    ----------
    hosts : list of Host
        In table order.
    rows : ndarray of int
        0-based table row of each host.
    mass_source : ndarray of str
        ``"measured"`` or the name of the relation that gave each mass.
    rejections : Rejections
        Rows that could not be used, each with its reason.
    name : str
        The table's file name (or ``"<table>"``).

    Examples
    --------
    Made by :func:`read_hosts`:

    >>> from ptaconstrain.data import path
    >>> read_hosts(path("example_hosts"))
    HostTable('example_hosts.ecsv', 12 hosts, 0 rows rejected)
    """

    hosts: list
    rows: np.ndarray
    mass_source: np.ndarray
    rejections: Rejections
    name: str

    def __len__(self):
        return len(self.hosts)

    def __repr__(self):
        return (
            f"HostTable({self.name!r}, {len(self.hosts)} hosts, "
            f"{self.rejections.total} rows rejected)"
        )


def read_hosts(source, columns=None, on_bad="error", relations=None, cosmology=None):
    """Hosts from any table astropy reads, under the catalogue's input policy.

    Parameters
    ----------
    source : path-like or astropy.table.Table
    columns : ColumnMap, optional
        Column mapping (default: fields matched by name, ignoring case).
    on_bad : {"error", "skip"}
        Stop at the first bad row (one line naming it), or skip and count.
    relations : list of str, optional
        Scaling relations for hosts without a measured mass, in order of
        preference (default: every shipped relation).
    cosmology : astropy.cosmology.Cosmology, optional
        For redshift <-> distance (default: astropy's default, Planck18).

    Returns
    -------
    HostTable

    Raises
    ------
    CatalogError
        For a missing column, a bad row with ``on_bad="error"``, or a table
        without any usable row.

    Examples
    --------
    >>> from astropy.table import Table
    >>> t = Table({"name": ["A", "B"], "ra": [10.0, "12h30m00s"], "dec": [-5.0, 12.0],
    ...            "distance": [20.0, 40.0], "mass": [3e9, 5e9],
    ...            "mass_err_dex": [0.1, 0.2]})
    >>> [h.name for h in read_hosts(t).hosts]
    ['A', 'B']
    """
    colmap = columns if columns is not None else ColumnMap()
    rels = select_relations(relations)
    reader = source if isinstance(source, CatalogReader) else CatalogReader(source)
    resolved = colmap.resolve(reader.colnames)
    dz = DistanceRedshift(cosmology)
    rejections = Rejections()
    hosts, rows, sources = [], [], []
    for start, piece in reader.chunks():
        gal = prepare_chunk(piece, colmap, resolved, rels, start, dz, rejections)
        rejections.check(on_bad)
        local = gal["row"] - start
        extra = _extra_fields(piece, colmap, resolved, local, gal, rejections)
        rejections.check(on_bad)
        for i in np.flatnonzero(extra["ok"]):  # one Host per row: each is bounded on its own
            try:
                hosts.append(_host(gal, extra, i, resolved, dz.cosmology))
            except InputError as err:
                rejections.add([gal["row"][i]], [gal["name"][i]], _reason(err))
                rejections.check(on_bad)
                continue
            rows.append(int(gal["row"][i]))
            sources.append(str(gal["mass_source"][i]))
    if not hosts:
        raise CatalogError(
            f"{reader.name}: no usable host ({rejections.total} rows rejected: "
            f"{'; '.join(rejections.counts) or 'empty table'}): fix the table "
            "or its column mapping"
        )
    return HostTable(
        hosts, np.array(rows, dtype=np.int64), np.array(sources, dtype=str), rejections, reader.name
    )


def _extra_fields(piece, colmap, resolved, local, gal, rejections):
    """distance_err and velocity_dispersion of the kept rows; rows with bad ones flagged."""
    n = local.size
    ok = np.ones(n, dtype=bool)
    out = {}
    for field, unit in (("distance_err", "Mpc"), ("velocity_dispersion", "km/s")):
        values = column_values(piece, colmap, resolved, field)
        values = np.full(n, np.nan) if values is None else values[local]
        with np.errstate(invalid="ignore"):
            bad = ~np.isnan(values) & ~((values >= 0) & np.isfinite(values))
        bad &= ok
        if bad.any():
            text = np.char.add(f"{field} = ", np.char.mod("%.4g", values[bad]))
            rejections.add(
                gal["row"][bad],
                gal["name"][bad],
                f"impossible {field} (must be >= 0 and finite, in {unit})",
                np.char.add(text, f" {unit}"),
            )
            ok &= ~bad
        out[field] = values
    # each host's files are named after it: duplicate names would overwrite each other
    dup = duplicate_mask(gal["name"]) & ok
    if dup.any():
        rejections.add(
            gal["row"][dup],
            gal["name"][dup],
            "duplicate name (each host's files are named after it)",
        )
        ok &= ~dup
    out["ok"] = ok
    return out


def _host(gal, extra, i, resolved, cosmology):
    """The Host of kept row ``i``: the adopted mass at the adopted distance."""
    d = float(gal["distance"][i])
    sigma = float(gal["log_mass_sigma"][i])
    d_err = float(extra["distance_err"][i])
    v_disp = float(extra["velocity_dispersion"][i])
    return Host(
        str(gal["name"][i]),
        10.0 ** float(gal["log_mass"][i]) * u.Msun,
        d * u.Mpc,
        mass_err_dex=sigma if sigma > 0 else None,
        distance_err=d_err * u.Mpc if d_err > 0 else None,
        # the mass is already at distance d; keeping d as its reference distance lets a
        # sampled distance rescale it linearly (dynamical masses scale with D)
        mass_distance=d * u.Mpc if "mass_distance" in resolved else None,
        ra=float(gal["ra"][i]),
        dec=float(gal["dec"][i]),
        velocity_dispersion=v_disp * u.km / u.s if v_disp > 0 else None,
        cosmology=cosmology,
    )


def _reason(err):
    text = str(err)
    return text if len(text) < 200 else text[:197] + "..."
