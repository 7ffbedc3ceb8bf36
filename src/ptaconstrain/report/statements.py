"""What a figure or table depends on, in words: exclusion or forecast, confidence or
S/N and span, and the sky the sensitivity refers to.

Every figure states these in its title (one place for the wording, so that every
figure says the same thing the same way).
"""

import re

from astropy import units as u

__all__ = ["figure_statement", "sky_text", "probability_footer", "host_line", "derived_meta"]

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
        kind = (
            f"forecast, not an exclusion: S/N ≥ {result.snr:g} over "
            f"{result.span.to_value(u.yr):.3g} yr"
        )
        inc = result.curve.meta.get("inclination")
        kind += (
            f" at inclination {inc.replace(' deg', '°')} (polarisation-averaged)"
            if inc
            else " (orientation-averaged)"
        )
    background = str(result.curve.meta.get("background", "none"))
    if background != "none":  # 'A = 2.4e-15, gamma = 4.333 (...)': the noise it adds
        kind += f"; background {background.split(' (')[0].replace('gamma', 'γ')} as noise"
    sky = sky_text(result.curve)
    where = (
        f"at {sky}" if sky.startswith("RA ") else (sky if sky == "sky-averaged" else f"sky: {sky}")
    )
    return f"{kind}; {where}"


def probability_footer(prob_map):
    """One line under probability contours: what the probabilities are over.

    Returns
    -------
    str
    """
    what = "the limit's own confidence" if prob_map.is_limit else "the S/N threshold"
    return (
        f"Contours: probability over the host's mass and distance errors "
        f"({prob_map.n_samples} samples), on top of {what}"
    )


def derived_meta(host):
    """What was derived for ``host``, for table meta: z, D_L, the cosmology, a rescaled mass.

    Returns
    -------
    dict of str
    """
    from ..cosmo import cosmology_name

    out = {
        "luminosity_distance": f"{host.distance.to_value(u.Mpc):.6g} Mpc",
        "redshift": f"{host.redshift:.6g}",
        "cosmology": cosmology_name(host.cosmology),
    }
    if host.mass_distance is not None:
        out["mass_rescaled"] = (
            f"{host.mass_quoted.to_value(u.Msun):.6g} solMass at "
            f"{host.mass_distance.to_value(u.Mpc):.6g} Mpc -> "
            f"{host.mass.to_value(u.Msun):.6g} solMass at {host.distance.to_value(u.Mpc):.6g} "
            "Mpc (dynamical masses scale linearly with distance)"
        )
    return out


def host_line(host, distance_from_redshift=False):
    """One console line echoing the host as used: M (rescaled?), D_L, z and the cosmology.

    Parameters
    ----------
    host : Host
    distance_from_redshift : bool
        The distance was derived from the redshift (say so).

    Returns
    -------
    str, e.g. ``'A: M = 2.1e+10 solMass (rescaled from 2e+10 solMass at 100 Mpc), D_L =
    105 Mpc, z = 0.0233 (Planck18)'``
    """
    from ..cosmo import cosmology_name

    mass = f"M = {host.mass.to_value(u.Msun):.4g} solMass"
    if host.mass_distance is not None:
        mass += (
            f" (rescaled from {host.mass_quoted.to_value(u.Msun):.4g} solMass at "
            f"{host.mass_distance.to_value(u.Mpc):.4g} Mpc)"
        )
    d = f"D_L = {host.distance.to_value(u.Mpc):.4g} Mpc"
    z = f"z = {host.redshift:.4g}"
    dz = f"{d} from {z}" if distance_from_redshift else f"{d}, {z}"
    return f"{host.name}: {mass}, {dz} ({cosmology_name(host.cosmology)})"
