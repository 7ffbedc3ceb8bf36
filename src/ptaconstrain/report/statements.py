"""What a figure or table depends on, in words: exclusion or forecast, confidence or
S/N and span, and the sky the sensitivity refers to.

Every figure states these in its title (one place for the wording, so that every
figure says the same thing the same way).
"""

import re

from astropy import units as u

__all__ = ["figure_statement", "sky_text", "probability_footer"]

_POSITION = re.compile(r"ra=\s*([-+\d.eE]+)\s*deg\s+dec=\s*([-+\d.eE]+)\s*deg")


def sky_text(curve):
    """The sky a curve refers to: 'RA 150.30°, Dec +21.80°', 'sky-averaged' or
    "mean of the map's pixels".

    Parameters
    ----------
    curve : StrainCurve

    Returns
    -------
    str

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> sky_text(SimpleNamespace(meta={"sky": "ra=150.3000deg dec=21.8000deg"}))
    'RA 150.30°, Dec +21.80°'
    >>> sky_text(SimpleNamespace(meta={}))
    'sky-averaged'
    """
    meta = curve.meta
    note = str(meta.get("sky_note", "")).lower()
    if "mean of the map" in note:
        return "mean of the map's pixels"
    sky = str(meta.get("sky", "averaged")).strip()
    match = _POSITION.fullmatch(sky)
    if match:
        ra, dec = (float(g) for g in match.groups())
        return f"RA {ra:.2f}°, Dec {dec:+.2f}°"
    if sky.lower() in ("", "averaged", "sky-averaged", "sky averaged", "none"):
        return "sky-averaged"
    return sky


def figure_statement(result):
    """One line: exclusion or forecast, the confidence (or S/N and span), the sky.

    Parameters
    ----------
    result : ExclusionMap

    Returns
    -------
    str, e.g. ``'exclusion, 95% upper limit; sky-averaged'`` or
    ``'forecast, not an exclusion: S/N ≥ 5 over 20 yr; at RA 150.30°, Dec +21.80°'``
    """
    if result.is_limit:
        kind = f"exclusion, {result.label}"
    else:
        kind = (f"forecast, not an exclusion: S/N ≥ {result.snr:g} over "
                f"{result.span.to_value(u.yr):.3g} yr")
    sky = sky_text(result.curve)
    where = f"at {sky}" if sky.startswith("RA ") else (
        sky if sky == "sky-averaged" else f"sky: {sky}")
    return f"{kind}; {where}"


def probability_footer(prob_map):
    """One line under probability contours: what the probabilities are over.

    Returns
    -------
    str
    """
    what = "the limit's own confidence" if prob_map.is_limit else "the S/N threshold"
    return (f"Contours: probability over the host's mass and distance errors "
            f"({prob_map.n_samples} samples), on top of {what}")
