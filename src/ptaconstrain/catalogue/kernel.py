"""The ranking kernel: one piece of a catalogue in, its ranked rows and rejections out.

A pure function of one chunk of rows (plus the settings of the run, a
:class:`RankPlan`), so that any engine can run it: the in-memory and streamed
ranking call it chunk by chunk (:func:`~ptaconstrain.catalogue.rank_catalog`),
the Dask engine once per partition on a cluster
(:mod:`~ptaconstrain.catalogue.dask_engine`).  Rows are prepared under the one
input policy (:func:`~ptaconstrain.catalogue.rows.prepare_chunk`), thresholds
looked up (:class:`~ptaconstrain.catalogue.thresholds.ThresholdLookup`) and the
metrics computed (:func:`~ptaconstrain.catalogue.metrics.galaxy_metrics`).
"""

from dataclasses import dataclass

import numpy as np
from astropy import units as u

from .metrics import galaxy_metrics
from .rows import prepare_chunk

__all__ = ["RankPlan", "chunk_metrics", "rank_piece", "NO_SENSITIVITY_NOTE"]

NO_SENSITIVITY_NOTE = (
    "no sensitivity at the galaxy's position (e.g. a blank map pixel): "
    "metrics NaN, expected number 0"
)


@dataclass(frozen=True)
class RankPlan:
    """Everything a worker needs to rank one piece of a catalogue (picklable).

    Attributes
    ----------
    colmap : ColumnMap
    resolved : dict
        field -> column, from :meth:`ColumnMap.resolve`.
    relations : list of Relation
    sensitivity : ThresholdLookup
    population : PopulationModel
    n_nodes : int
    dz : ptaconstrain.cosmo.DistanceRedshift
    metric : str
    """

    colmap: object
    resolved: dict
    relations: list
    sensitivity: object
    population: object
    n_nodes: int
    dz: object
    metric: str


def chunk_metrics(gal, sens, population, n_nodes, rejections, thresholds=None):
    """Per-galaxy arrays of one chunk with the ranking metrics added.

    Parameters
    ----------
    gal : dict of ndarray
        From :func:`~ptaconstrain.catalogue.rows.prepare_chunk`.
    sens : ThresholdLookup
    population : PopulationModel
    n_nodes : int
    rejections : Rejections
        Galaxies without a sensitivity at their position are counted in its notes.
    thresholds : ndarray (1, n_f), optional
        One threshold row shared by every galaxy (a sky partition inside one
        pixel of the threshold grid); looked up per galaxy otherwise.

    Returns
    -------
    dict of ndarray / Quantity
    """
    if thresholds is None:
        thr, sky_index = sens.thresholds(gal["ra"], gal["dec"])
    else:
        thr, sky_index = thresholds, None
    met = galaxy_metrics(
        gal["log_mass"],
        gal["log_mass_sigma"],
        gal["distance"] * u.Mpc,
        gal["redshift"],
        sens.frequency,
        thr,
        population,
        n_nodes=n_nodes,
        sky_index=sky_index,
    )
    rejections.note(NO_SENSITIVITY_NOTE, np.count_nonzero(np.isnan(met["f_best"].value)))
    return {**gal, **met}


def rank_piece(table, plan, start_row, rejections, thresholds=None):
    """Prepare one piece of a catalogue and compute its metrics (no sorting, no de-duplication).

    Parameters
    ----------
    table : astropy.table.Table
    plan : RankPlan
    start_row : int
        0-based catalogue row of the piece's first row.
    rejections : Rejections
    thresholds : ndarray (1, n_f), optional
        See :func:`chunk_metrics`.

    Returns
    -------
    dict of ndarray / Quantity
        The usable rows (possibly none: every key is there all the same).
    """
    gal = prepare_chunk(
        table, plan.colmap, plan.resolved, plan.relations, start_row, plan.dz, rejections
    )
    return chunk_metrics(
        gal, plan.sensitivity, plan.population, plan.n_nodes, rejections, thresholds
    )
