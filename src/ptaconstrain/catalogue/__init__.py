"""Galaxy catalogues as continuous-wave targets.

columns (fields and their mapping), reader (files, streamed CSV), rows (the
input policy per row, rejections), relations (mass scaling laws as data),
population (residence times, expected numbers), metrics (per-galaxy figures
of merit), thresholds (h0 thresholds at galaxy positions), names (hashing and
de-duplication), ranked_runs (sorted runs on disk, merged in global order),
ranking (the driver and its result).
"""

from .columns import FIELDS, CatalogError, ColumnMap, load_column_map
from .hosts import HostTable, read_hosts
from .metrics import METRICS, galaxy_metrics, most_sensitive_frequency
from .names import NameSet, duplicate_mask, name_bytes, name_hashes
from .population import MassRatioDistribution, PopulationModel, expected_number
from .ranked_runs import RankedRuns, sort_keys
from .ranking import Ranking, rank_catalog
from .reader import CatalogReader
from .relations import (
    Relation,
    RelationError,
    load_relations,
    select_relations,
    shipped_relations,
)
from .rows import Rejections, prepare_chunk
from .thresholds import ThresholdLookup

__all__ = [
    "HostTable",
    "read_hosts",
    "FIELDS",
    "CatalogError",
    "ColumnMap",
    "load_column_map",
    "CatalogReader",
    "Rejections",
    "duplicate_mask",
    "NameSet",
    "name_bytes",
    "name_hashes",
    "RankedRuns",
    "sort_keys",
    "prepare_chunk",
    "Relation",
    "RelationError",
    "load_relations",
    "select_relations",
    "shipped_relations",
    "PopulationModel",
    "MassRatioDistribution",
    "expected_number",
    "METRICS",
    "galaxy_metrics",
    "most_sensitive_frequency",
    "ThresholdLookup",
    "Ranking",
    "rank_catalog",
]
