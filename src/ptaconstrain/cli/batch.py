"""``ptaconstrain exclude --hosts TABLE``: every host of a table in one command.

Parse, call the library (:func:`ptaconstrain.catalogue.hosts.read_hosts`,
:func:`ptaconstrain.analysis.batch.bound_hosts`), write, print.  Outputs in OUT:
each host's ``<name>_exclusion.ecsv`` (or ``_forecast``) and figures, the summary
``hosts_summary.ecsv``, the overview ``hosts_overview.<fmt>``, and with
``--on-bad skip`` ``hosts_rejected.ecsv`` listing the rows and hosts left out.
"""

import click

__all__ = ["run_batch", "SINGLE_HOST_OPTIONS"]

#: options that describe one host; with --hosts the table gives them per row
SINGLE_HOST_OPTIONS = (
    "mass",
    "distance",
    "redshift",
    "mass_distance",
    "ra",
    "dec",
    "velocity_dispersion",
    "mass_err",
    "distance_err",
    "velocity_err",
    "mass_samples_path",
    "years",
    "target_q",
)
_OPTION_NAMES = {"velocity_dispersion": "--sigma", "mass_samples_path": "--mass-samples"}


def run_batch(opts, explicit=frozenset()):
    """Library calls behind ``exclude --hosts``; returns the summary lines.

    Parameters
    ----------
    opts : dict
        The ``exclude`` command's options.
    explicit : set of str
        The options given on the command line (for notes on ignored ones).
    """
    import numpy as np
    from astropy import units as u

    from .._files import check_new, output_set
    from ..analysis.batch import bound_hosts, has_errors
    from ..analysis.exclusion import default_periods
    from ..catalogue.hosts import read_hosts
    from .notes import note_assumed_span, note_ignored_options
    from .progress import progress_bar
    from .sources import column_map, load_sensitivity

    given = [k for k in SINGLE_HOST_OPTIONS if opts.get(k) is not None]
    if given:
        name = _OPTION_NAMES.get(given[0], "--" + given[0].replace("_", "-"))
        raise click.UsageError(
            f"{name}: with --hosts every host's values come from the "
            f"table (and --years runs for one host); drop {name}"
        )
    if opts["rms_factor"] != 1.0:
        raise click.UsageError("--rms-factor applies to --years (one host) only")
    from ..cosmo import cosmology_by_name

    table = read_hosts(
        opts["hosts"],
        column_map(opts["columns_file"], opts["column_pairs"]),
        on_bad=opts["on_bad"],
        cosmology=cosmology_by_name(opts["cosmology"]),
    )
    from .._inputs import check_eccentricity

    ecc = check_eccentricity(opts["eccentricity"], "--eccentricity")
    sens = load_sensitivity(
        opts["curve_path"],
        opts["kind"],
        opts["array_path"],
        opts["limit_map_path"],
        opts["snr"],
        opts["confidence"],
        opts["background"],
    )
    note_ignored_options(explicit, sens.forecast, any(map(has_errors, table.hosts)), sens.option)
    if sens.option == "--curve":
        note_assumed_span(sens.source, opts["span"])
    nq, n_p = opts["grid"]
    lo_q, hi_q = opts["mass_ratio_range"]
    q = np.logspace(np.log10(lo_q), np.log10(hi_q), nq)
    if opts["period_range"] is not None:
        lo, hi = (p.to_value(u.yr) for p in opts["period_range"])
        period = np.logspace(np.log10(lo), np.log10(hi), n_p) * u.yr
    elif sens.option == "--curve":
        period = default_periods(sens.source, n_p)
    else:
        period = None  # each host's own curve band
    outputs = _Outputs(
        opts["out"],
        [h.name for h in table.hosts],
        table.rows,
        "forecast" if sens.forecast else "exclusion",
        opts["formats"],
        opts["overwrite"],
        skipped=opts["on_bad"] == "skip",
        style=opts["style"],
        latex="latex" in opts["table_formats"],
        merger_lines=opts["merger_lines"],
    )
    check_new(outputs.all_paths(), opts["overwrite"])  # before any work: a refusal costs nothing
    credible = opts["credibility"]
    # every file is staged and published together, or none is (a failure, a full disk)
    with (
        output_set(outputs.out, "hosts", opts["overwrite"], record=True),
        progress_bar(len(table), "hosts") as bar,
    ):
        bounds = bound_hosts(
            table.hosts,
            sens.source,
            q,
            period,
            opts["snr"],
            opts["span"],
            samples=opts["samples"],
            seed=opts["seed"],
            credibility=credible,
            curve_for=_curve_for(sens, opts["inclination"]),
            on_bad=opts["on_bad"],
            keep_samples=False,
            orientation=False if opts["inclination"] is not None else None,
            eccentricity=ecc,
            on_result=lambda i, r: outputs.host(i, r, sens),
            progress=bar.update,
        )
        outputs.summary(bounds, table, sens, opts["hosts"])
    return _lines(bounds, table, outputs)


def _curve_for(sens, inclination):
    """How to ask the sensitivity for a host's curve, at a known inclination if given."""
    if inclination is None:
        return sens.curve_for
    from ..analysis.readouts import curve_at_inclination

    return lambda host: curve_at_inclination(sens.curve_for(host), inclination)


def _lines(bounds, table, outputs):
    from ..cosmo import cosmology_name
    from ..report.batch_tables import batch_summary_lines

    lines = batch_summary_lines(bounds)
    lines.append(
        f"D_L, z ({cosmology_name(table.hosts[0].cosmology)}) and the masses used "
        f"(rescaled to the adopted distance where mass_distance is given) are in "
        f"{outputs.summary_path.name}"
    )
    lines += [f"{table.name}: {line}" for line in table.rejections.summary()]
    for host, reason in bounds.failed:
        lines.append(f"{host.name}: skipped ({reason})")
    shown = ", ".join(p.name for p in outputs.shared_written)
    lines.append(
        f"wrote {len(outputs.written)} files in {outputs.out}/: {shown} and "
        f"{len(bounds)} hosts' {outputs.tag} tables" + (" and figures" if outputs.formats else "")
    )
    return lines


class _Outputs:
    """Every path the batch writes, known before the work starts; written as it goes."""

    def __init__(
        self,
        out,
        names,
        rows,
        tag,
        formats,
        overwrite,
        skipped,
        style="page",
        latex=False,
        merger_lines=False,
    ):
        from pathlib import Path

        from ..report.provenance import safe_name

        self.out, self.tag, self.formats, self.overwrite = Path(out), tag, formats, overwrite
        self.style, self.merger_lines = style, merger_lines
        self.stems, seen = [], set()
        for name, row in zip(names, rows, strict=True):
            stem = safe_name(name)
            if stem.lower() in seen:  # two names, one file name: keep them apart
                stem = f"{stem}_row{row + 1}"
            seen.add(stem.lower())
            self.stems.append(stem)
        self.summary_path = self.out / "hosts_summary.ecsv"
        self.latex_path = self.out / "hosts_summary.tex" if latex else None
        self.overview_stem = self.out / "hosts_overview"
        self.rejected_path = self.out / "hosts_rejected.ecsv" if skipped else None
        self.written, self.shared_written = [], []

    def host_paths(self, stem):
        base = self.out / f"{stem}_{self.tag}"
        return [base.with_name(f"{base.name}.ecsv")] + [
            base.with_name(f"{base.name}.{f}") for f in self.formats
        ]

    def all_paths(self):
        paths = [p for s in self.stems for p in self.host_paths(s)]
        paths += [p for p in (self.summary_path, self.latex_path) if p is not None]
        paths += [
            self.overview_stem.with_name(f"{self.overview_stem.name}.{f}") for f in self.formats
        ]
        return paths + ([self.rejected_path] if self.rejected_path else [])

    def host(self, i, result, sens):
        """Write host i's table and figures."""
        from .._files import write_table
        from ..report.figures import save_figure
        from ..report.provenance import provenance
        from .sources import provenance_files

        meta = provenance(result.host.describe(), files=provenance_files(sens.option, sens.path))
        table = result.to_table(meta)
        path = self.host_paths(self.stems[i])[0]
        write_table(table, path, self.overwrite)
        self.written.append(path)
        if self.formats:
            from ..analysis.probability import ProbabilityMap
            from ..report.figures import exclusion_figure
            from ..report.paper_style import apply_style

            prob = result if isinstance(result, ProbabilityMap) else None
            best = result.deterministic if prob is not None else result
            fig = apply_style(
                exclusion_figure(
                    best, prob_map=prob, merger_times=(True if self.merger_lines else None)
                ),
                self.style,
            )
            self.written += save_figure(fig, path.with_suffix(""), self.formats, self.overwrite)

    def summary(self, bounds, table, sens, hosts_path):
        """The summary table, the overview figure and the rejected rows."""
        from astropy.table import Table, vstack

        from .._files import write_table
        from ..report.batch_tables import summary_table
        from ..report.figures import save_figure
        from ..report.provenance import provenance
        from .sources import provenance_files

        kept = {id(m.host) for m in bounds.maps}
        index = [i for i, h in enumerate(table.hosts) if id(h) in kept]
        on_bad = "skip" if self.rejected_path is not None else "error"
        meta = provenance(
            {
                "on_bad": on_bad,
                "hosts_rejected": str(table.rejections.total),
                "hosts_failed": str(len(bounds.failed)),
            },
            files={"hosts": hosts_path, **provenance_files(sens.option, sens.path)},
        )
        summary = summary_table(
            bounds,
            meta,
            files=[f"{self.stems[i]}_{self.tag}" for i in index],
            rows=table.rows[index],
            mass_source=table.mass_source[index],
        )
        write_table(summary, self.summary_path, self.overwrite)
        self.shared_written.append(self.summary_path)
        if self.latex_path is not None:
            from ..report.batch_tables import write_summary_latex

            write_summary_latex(summary, self.latex_path, self.overwrite)
            self.shared_written.append(self.latex_path)
        if self.formats:
            from ..report.paper_style import apply_style

            self.shared_written += save_figure(
                apply_style(bounds.plot(), self.style),
                self.overview_stem,
                self.formats,
                self.overwrite,
            )
        if self.rejected_path is not None:
            rejected = table.rejections.table()
            rows = {h.name: r for h, r in zip(table.hosts, table.rows, strict=True)}
            if bounds.failed:
                failed = Table(
                    {
                        "row": [rows[h.name] + 1 for h, _ in bounds.failed],
                        "name": [h.name for h, _ in bounds.failed],
                        "value": [""] * len(bounds.failed),
                        "reason": [r for _, r in bounds.failed],
                    }
                )
                rejected = vstack([rejected, failed]) if len(rejected) else failed
            write_table(rejected, self.rejected_path, self.overwrite)
            self.shared_written.append(self.rejected_path)
        self.written += self.shared_written
