"""Sensitivity of a pulsar timing array to continuous waves.

Two kinds, never mixed up: an *upper limit* (``h0_limit``; a binary above it
is excluded) and a *noise budget* (``strain_psd``, ``characteristic_strain``
or a pulsar list; with an S/N threshold it says what would be detectable).

Modules
-------
curve         :class:`StrainCurve`, reading and writing curves
antenna       antenna patterns and the S/N algebra of a circular binary
timing        pulsar noise model and the timing-model fit (post-fit weights)
positional    the :class:`PositionalSensitivity` protocol, :class:`HealpixThresholds`
pulsar_array  :class:`PulsarArray`: S/N, curves and sky maps of a list of pulsars
pulsar_list   the pulsar-list file format (:func:`load_array`)
limit_map     HEALPix maps: :class:`LimitMap` (upper limits), threshold maps written
"""

# Submodules import only downward (curve <- antenna, timing, positional <- pulsar_array
# <- pulsar_list; limit_map), so the order below does not matter.
from .antenna import (
    PULSAR_TERM_FACTOR,
    SKY_MEAN_PATTERN,
    antenna_pattern,
    orientation_averaged_snr_squared,
    pattern_power,
    snr_squared,
)
from .background import (
    GAMMA_BINARIES,
    Background,
    correlated_snr_squared,
    hellings_downs,
    parse_background,
)
from .combined import CombinedLimit, tightest_limit
from .curve import (
    CurveError,
    StrainCurve,
    detection_threshold_h0,
    load_curve,
    noise_psd_for_threshold,
    save_curve,
)
from .limit_map import LimitMap, LimitMapError, load_limit_map, write_threshold_maps
from .positional import HealpixThresholds, PositionalSensitivity, check_nside
from .pulsar_array import MAP_BLOCK_BYTES, PARALLEL_MIN_PULSARS, ArrayError, PulsarArray
from .pulsar_list import array_from_table, load_array
from .timing import (
    approximate_weights,
    post_fit_weights,
    red_noise_basis,
    red_noise_psd,
    single_blas_thread,
    timing_design_matrix,
    white_noise_psd,
)

__all__ = [
    "GAMMA_BINARIES",
    "Background",
    "correlated_snr_squared",
    "hellings_downs",
    "parse_background",
    # curves
    "StrainCurve",
    "CombinedLimit",
    "tightest_limit",
    "load_curve",
    "save_curve",
    "detection_threshold_h0",
    "noise_psd_for_threshold",
    # position-dependent sensitivity
    "PositionalSensitivity",
    "HealpixThresholds",
    "check_nside",
    "PulsarArray",
    "PARALLEL_MIN_PULSARS",
    "MAP_BLOCK_BYTES",
    "load_array",
    "array_from_table",
    "LimitMap",
    "load_limit_map",
    "write_threshold_maps",
    # antenna patterns and S/N
    "antenna_pattern",
    "pattern_power",
    "snr_squared",
    "orientation_averaged_snr_squared",
    "SKY_MEAN_PATTERN",
    "PULSAR_TERM_FACTOR",
    # noise and timing fit
    "white_noise_psd",
    "red_noise_psd",
    "red_noise_basis",
    "timing_design_matrix",
    "post_fit_weights",
    "approximate_weights",
    "single_blas_thread",
    # errors
    "CurveError",
    "ArrayError",
    "LimitMapError",
]
