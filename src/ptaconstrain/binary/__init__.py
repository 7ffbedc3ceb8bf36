"""The binary and its host: every binary formula once (waveform), and the host galaxy (Host).

Imports nothing from :mod:`ptaconstrain.sensitivity`; :mod:`ptaconstrain.analysis`
combines the two.
"""

from .eccentric import (
    decay_rates,
    enhancement_factor,
    harmonic_amplitude_ratio,
    harmonic_numbers,
    harmonic_power,
    merger_time,
    merger_time_factor,
    pericentre_isco_factor,
    pericentre_isco_frequency,
)
from .host import Host, hosts_from_table
from .mass_samples import MassSamples, MassSamplesError, load_mass_samples
from .waveform import (
    chirp_mass,
    coalescence_time,
    frequency_derivative,
    gravitational_radius,
    gw_frequency,
    hardening_radius,
    is_chirping,
    isco_frequency,
    mass_ratio_from_eta,
    orbital_period,
    period_at_separation,
    separation,
    strain_amplitude,
    strain_prefactor,
    symmetric_mass_ratio,
)

__all__ = [
    "Host",
    "hosts_from_table",
    "MassSamples",
    "MassSamplesError",
    "load_mass_samples",
    "symmetric_mass_ratio",
    "mass_ratio_from_eta",
    "chirp_mass",
    "strain_amplitude",
    "strain_prefactor",
    "gw_frequency",
    "orbital_period",
    "separation",
    "isco_frequency",
    "frequency_derivative",
    "coalescence_time",
    "is_chirping",
    "hardening_radius",
    "period_at_separation",
    "gravitational_radius",
    "harmonic_power",
    "enhancement_factor",
    "harmonic_amplitude_ratio",
    "harmonic_numbers",
    "decay_rates",
    "merger_time",
    "merger_time_factor",
    "pericentre_isco_frequency",
    "pericentre_isco_factor",
]
