"""Bounds on companions of one host: the q x P map (exclusion), host uncertainties
(sampling), exclusion probabilities with credible bounds (probability), and the
region codes a map's cells hold (regions).

probability imports exclusion and sampling; neither of those imports probability.
"""

from .batch import HostBounds, bound_hosts, has_errors
from .epochs import EpochForecast, forecast_over_time
from .exclusion import (
    ExclusionMap,
    band_periods,
    default_mass_ratios,
    default_periods,
    exclusion_map,
    sensitivity_for,
    warn_sky_averaged,
)
from .probability import DEFAULT_CREDIBILITY, ProbabilityMap, exclusion_probability
from .readouts import (
    angular_diameter_distance,
    angular_separation,
    curve_at_inclination,
    default_merger_times,
    merger_time,
    merger_time_lines,
)
from .regions import ABOVE_ISCO, ALLOWED, CHIRPING, EXCLUDED, REGION_NAMES, UNCONSTRAINED
from .sampling import (
    HostSamples,
    distance_sigma,
    orientation_factor,
    resample_host,
    sample_host,
)

__all__ = [
    "HostBounds",
    "bound_hosts",
    "has_errors",
    "angular_diameter_distance",
    "angular_separation",
    "curve_at_inclination",
    "default_merger_times",
    "merger_time",
    "merger_time_lines",
    "ALLOWED",
    "EXCLUDED",
    "UNCONSTRAINED",
    "ABOVE_ISCO",
    "CHIRPING",
    "REGION_NAMES",
    "ExclusionMap",
    "exclusion_map",
    "default_periods",
    "default_mass_ratios",
    "band_periods",
    "sensitivity_for",
    "warn_sky_averaged",
    "HostSamples",
    "sample_host",
    "resample_host",
    "orientation_factor",
    "distance_sigma",
    "ProbabilityMap",
    "exclusion_probability",
    "DEFAULT_CREDIBILITY",
    "EpochForecast",
    "forecast_over_time",
]
