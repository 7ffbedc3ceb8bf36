"""The regions an exclusion plane distinguishes, as small integer codes.

Every cell of an :class:`~ptaconstrain.analysis.exclusion.ExclusionMap` holds one of
these codes; tables and figures name them with :data:`REGION_NAMES`.  They live in
a module of their own so that the report layer can draw them without importing the
analysis itself.
"""

__all__ = ["ALLOWED", "EXCLUDED", "UNCONSTRAINED", "ABOVE_ISCO", "CHIRPING", "REGION_NAMES"]

ALLOWED = 0
EXCLUDED = 1  # "detectable" for a noise budget
UNCONSTRAINED = 2  # outside the curve's frequency range
ABOVE_ISCO = 3  # no circular binary of this total mass
CHIRPING = 4  # f drifts by more than 1/T over the span T

REGION_NAMES = {
    ALLOWED: "allowed",
    EXCLUDED: "excluded",
    UNCONSTRAINED: "not constrained",
    ABOVE_ISCO: "above ISCO",
    CHIRPING: "chirping within the span",
}
