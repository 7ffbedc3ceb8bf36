"""The summary table of many hosts: one row per host, its tightest bounds."""

import numpy as np
from astropy import units as u

__all__ = ["summary_table", "batch_summary_lines", "write_summary_latex"]


def summary_table(bounds, meta=None, files=None, rows=None, mass_source=None):
    """One row per host: its inputs and its tightest bound (and credible versions).

    Columns: ``name``, ``mass`` [solMass] (at the adopted distance), ``distance``
    [Mpc], ``redshift``, ``ra``/``dec`` [deg], ``tightest_q`` and
    ``tightest_period`` [yr] (the best-fit host's smallest ``max_mass_ratio``
    where the binary does not chirp), ``min_companion_mass`` [solMass] (the
    lightest companion excluded or detectable at some period), one
    ``tightest_q_<c>`` / ``tightest_period_<c>`` pair per credibility c (NaN for
    hosts without errors), ``sampled`` (True when the host's errors were
    sampled), and, when given, ``row`` (1-based table row), ``mass_source`` and
    ``file`` (the stem of the host's own table and figures).

    Parameters
    ----------
    bounds : HostBounds
    meta : dict, optional
        Provenance for the table meta.
    files : sequence of str, optional
    rows : sequence of int, optional
        0-based rows of the input table.
    mass_source : sequence of str, optional

    Returns
    -------
    astropy.table.QTable
    """
    from astropy.table import QTable

    from ..analysis.probability import ProbabilityMap

    maps = bounds.maps
    hosts = [m.host for m in maps]
    verb = "excluded" if bounds.is_limit else "detectable"
    t = QTable()
    t["name"] = [h.name for h in hosts]
    if rows is not None:
        t["row"] = np.asarray(rows, dtype=np.int64) + 1
        t["row"].info.description = "1-based data row of the hosts table"
    t["mass"] = u.Quantity([h.mass for h in hosts]).to(u.Msun)
    if mass_source is not None:
        t["mass_source"] = np.asarray(mass_source, dtype=str)
    t["distance"] = u.Quantity([h.distance for h in hosts]).to(u.Mpc)
    t["redshift"] = [h.redshift for h in hosts]
    t["ra"] = [np.nan if h.coord is None else h.coord.icrs.ra.deg for h in hosts] * u.deg
    t["dec"] = [np.nan if h.coord is None else h.coord.icrs.dec.deg for h in hosts] * u.deg
    period, q = bounds.tightest()
    t["tightest_q"] = q
    t["tightest_period"] = period
    m2 = [m.smallest_excluded_companion_mass for m in maps]
    t["min_companion_mass"] = u.Quantity([np.nan * u.Msun if m is None else m for m in m2]).to(
        u.Msun
    )
    descriptions = {
        "mass": "total black-hole mass at the adopted distance",
        "distance": "luminosity distance",
        "tightest_q": f"smallest max_mass_ratio of the best-fit host: q above it {verb} "
        "(NaN: none)",
        "tightest_period": "orbital period (observer frame) of tightest_q",
        "min_companion_mass": f"lightest companion {verb} at some period",
    }
    for c in bounds.credibility:
        cp, cq = bounds.credible(c)
        t[f"tightest_q_{c:g}"] = cq
        t[f"tightest_period_{c:g}"] = cp
        descriptions[f"tightest_q_{c:g}"] = (
            f"smallest mass ratio {verb} with probability >= {c:g} over the host's mass "
            "and distance errors (NaN: host without errors, or none)"
        )
    t["sampled"] = [isinstance(r, ProbabilityMap) for r in bounds.results]
    t["sampled"].info.description = "the host's mass/distance errors were sampled"
    if files is not None:
        t["file"] = list(files)
        t["file"].info.description = "stem of the host's own table and figures"
    for name, text in descriptions.items():
        t[name].info.description = text
    first = maps[0]
    t.meta["statement"] = (
        "EXCLUSION from an upper limit"
        if bounds.is_limit
        else "FORECAST from a noise budget (detectable, not excluded)"
    )
    t.meta["sensitivity"] = first.label
    from ..cosmo import cosmology_name

    t.meta["cosmology"] = cosmology_name(hosts[0].cosmology)
    t["redshift"].info.description = f"redshift ({t.meta['cosmology']})"
    t.meta["probability_seed"] = str(bounds.seed)
    t.meta["probability_credibility"] = ", ".join(f"{c:g}" for c in bounds.credibility)
    if meta:
        t.meta.update(meta)
    return t


def batch_summary_lines(bounds, names_shown=5):
    """A few lines: how many hosts have a bound, and the tightest ones.

    Returns
    -------
    list of str
    """
    period, q = bounds.tightest()
    maps = bounds.maps
    phrase = "ruled out" if bounds.is_limit else "would be detectable"
    tag = maps[0].label if bounds.is_limit else f"{maps[0].label}, not an exclusion"
    n_bound = int(np.isfinite(q).sum())
    lines = [f"{len(maps)} hosts ({tag}): {n_bound} with some companion {phrase}"]
    order = np.argsort(np.where(np.isfinite(q), q, np.inf), kind="stable")[:names_shown]
    for i in order:
        if np.isfinite(q[i]):
            lines.append(
                f"  {maps[i].host.name}: q > {q[i]:.3g} {phrase} at P = "
                f"{period[i].to_value(u.yr):.3g} yr"
            )
    return lines


def write_summary_latex(table, path, overwrite=False):
    """Write the paper columns of a summary table as an AASTeX deluxetable.

    Columns: host, M [solMass], D_L [Mpc], z, tightest q and its period [yr], and
    the credible q at the highest credibility when any host was sampled.  Written
    with astropy's ``ascii.aastex`` writer, atomically.

    Parameters
    ----------
    table : astropy.table.QTable
        From :func:`summary_table`.
    path : path-like
    overwrite : bool
    """
    from astropy.table import Table

    from .._files import atomic_write

    verb = "excluded" if str(table.meta.get("statement", "")).startswith("EXCL") else "detectable"
    out = Table()
    out["Host"] = table["name"]
    out["$M$"] = _tex_numbers(table["mass"].to_value(u.Msun), "sci")
    out["$D_L$"] = _tex_numbers(table["distance"].to_value(u.Mpc), "%.4g")
    out["$z$"] = _tex_numbers(table["redshift"], "%.4f")
    out["$q_{\\rm min}$"] = _tex_numbers(table["tightest_q"], "%.3g")
    out["$P$"] = _tex_numbers(table["tightest_period"].to_value(u.yr), "%.3g")
    cred = sorted(c for c in table.colnames if c.startswith("tightest_q_"))
    if cred and np.isfinite(np.asarray(table[cred[-1]], dtype=float)).any():
        level = float(cred[-1].removeprefix("tightest_q_"))
        out[f"$q_{{{level * 100:g}\\%}}$"] = _tex_numbers(table[cred[-1]], "%.3g")
    units = {"$M$": "M$_\\odot$", "$D_L$": "Mpc", "$P$": "yr"}
    sens = str(table.meta.get("sensitivity", "")).replace("%", "\\%").replace(">=", "$\\geq$")
    caption = (
        f"Tightest bound per host: companions with $q > q_{{\\rm min}}$ at period $P$ "
        f"are {verb} ({sens}; cosmology {table.meta.get('cosmology', '')}); "
        "\\nodata: none."
    )
    latexdict = {"units": units, "caption": caption, "tabletype": "deluxetable*"}
    with atomic_write(path, overwrite) as tmp:
        out.write(tmp, format="ascii.aastex", latexdict=latexdict, overwrite=True)


def _tex_numbers(values, fmt):
    """Numbers as LaTeX text: ``'sci'`` gives $2.1\\times10^{10}$; NaN gives \\nodata."""
    out = []
    for v in np.asarray(values, dtype=float):
        if not np.isfinite(v):
            out.append("\\nodata")
        elif fmt == "sci":
            mant, exp = f"{v:.2e}".split("e")
            out.append(f"${mant.rstrip('0').rstrip('.')}\\times10^{{{int(exp)}}}$")
        else:
            out.append(fmt % v)
    return out
