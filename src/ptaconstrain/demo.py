"""The demo as a library function: the whole tool on the shipped, invented data.

:func:`run_demo` computes and writes everything ``ptaconstrain demo`` shows:
five fictional galaxies against a synthetic 95% upper limit (exclusions) and a
synthetic future noise budget (forecasts), one probability map from a host's
mass and distance errors, the invented pulsar array at each host's position,
the ranking of the fictional catalogue, one host with eccentric companions
beside circular ones, and one array forecast with the background as noise.  It needs no network.

Each part is a function of its own (:func:`array_part`, :func:`ranking_part`), so
tests and notebooks can run one of them.
"""

from pathlib import Path

__all__ = [
    "run_demo",
    "array_part",
    "ranking_part",
    "demo_array",
    "draw_in_parallel",
    "PARALLEL_MIN_CORES",
    "HOSTS_FILE",
    "LIMIT_FILE",
    "FORECAST_FILE",
    "ARRAY_FILE",
    "CATALOGUE_FILE",
]

HOSTS_FILE = "demo_hosts.ecsv"
LIMIT_FILE = "synthetic_h0_limit.ecsv"
FORECAST_FILE = "synthetic_future_psd.ecsv"
ARRAY_FILE = "demo_array.ecsv"
CATALOGUE_FILE = "demo_catalogue.ecsv"


def run_demo(out, overwrite=False, progress=None):
    """Run the demo and write its tables and figures into ``out``.

    Parameters
    ----------
    out : path-like
        Output directory; created if needed, and must be empty unless
        ``overwrite``.
    overwrite : bool
        Write into a non-empty ``out``, replacing files of the same name.
    progress : callable, optional
        Called as ``progress(label, done, total)`` while the hosts' maps are
        computed (e.g. to drive a progress bar).

    Returns
    -------
    list of str
        The summary lines, ending with what was written where.

    Raises
    ------
    InputError
        If ``out`` is a non-empty directory and ``overwrite`` is false.

    Examples
    --------
    >>> import tempfile, warnings
    >>> from pathlib import Path
    >>> with tempfile.TemporaryDirectory() as tmp, warnings.catch_warnings():
    ...     warnings.simplefilter("ignore")  # the demo's notes (assumed errors, sky)
    ...     lines = run_demo(Path(tmp) / "demo")
    ...     figures = sorted(p.name for p in (Path(tmp) / "demo").glob("*.png"))
    >>> "Velmora_Central_probability.png" in figures, "ranking_sky.png" in figures
    (True, True)
    """
    from ._files import output_set
    from .errors import InputError

    out = Path(out)
    if out.is_dir() and any(out.iterdir()) and not overwrite:
        raise InputError(
            f"out: {out} is not empty; choose another directory or allow overwriting (--overwrite)"
        )
    # every file of the demo is published together, or none is
    with output_set(out, "demo", overwrite):
        return _demo_outputs(out, overwrite, progress)


def _demo_outputs(out, overwrite, progress):
    from astropy.table import QTable

    from .binary.host import hosts_from_table
    from .data import path as data_file
    from .report.provenance import safe_name
    from .sensitivity.curve import load_curve

    hosts = hosts_from_table(QTable.read(data_file(HOSTS_FILE)))
    limit_path = data_file(LIMIT_FILE)
    forecast_path = data_file(FORECAST_FILE)
    limit, forecast = load_curve(limit_path), load_curve(forecast_path)
    lines = [
        f"ptaconstrain demo: {len(hosts)} INVENTED galaxies, synthetic curves; output in {out}/"
    ]
    figures = []  # drawn at the end, in parallel where that helps (draw_in_parallel)
    results = []
    for i, host in enumerate(hosts):
        results.append(
            _host_outputs(
                host,
                limit,
                forecast,
                limit_path,
                forecast_path,
                out,
                overwrite,
                figures,
                example=i == 0,
            )
        )
        if progress is not None:
            progress("exclusion maps", i + 1, len(hosts))
    lines += [line for _, _, text in results for line in text]
    first = hosts[0]
    lines.append(
        f"figure of {first.name} as an example ({safe_name(first.name)}_exclusion.png); "
        "demo_overview.png compares every host's exclusion and forecast, whose tables "
        "are all written; draw any host with: ptaconstrain exclude --mass "
        f"{first.mass.to_value('solMass'):.3g} --distance "
        f"{first.distance.to_value('Mpc'):.3g} --curve {Path(LIMIT_FILE).stem} --out DIR"
    )
    lines += _summary_outputs(results, out, overwrite, figures)
    lines += _probability_outputs(hosts[0], limit, limit_path, out, overwrite, figures)
    lines += array_part(out, hosts, overwrite, progress, figures)
    lines += ranking_part(out, limit, overwrite)
    # maps computed once: the eccentric and background figures reuse the circular
    # limit map of the first host and the array forecasts at the hosts' positions
    text, at_host = _array_exclusions(out, hosts, overwrite, figures)
    lines += text
    lines += _eccentric_outputs(hosts[0], results[0][0], limit, limit_path, out, overwrite, figures)
    lines += _background_outputs(hosts, at_host, out, overwrite, figures)
    draw_in_parallel(figures)
    return lines


_JOBS = []


def _run_job(i):
    _JOBS[i]()


#: Fewest cores on which the demo draws its figures in worker processes.  On the
#: 2-core machines it was measured on, two drawing processes share one core's
#: caches: 8 figures took 0.84 s wall but 1.58 s CPU against 1.30 s in turn (best
#: of 4, in process), and the whole demo 0.3-0.4 s more CPU for 0.3 s less wall.
PARALLEL_MIN_CORES = 4


def draw_in_parallel(jobs, processes=2, min_cores=PARALLEL_MIN_CORES):
    """Run figure-drawing jobs, in forked worker processes where that helps.

    Drawing is pure Python and single-threaded, so on a machine with at least
    ``min_cores`` cores the figures are shared between up to ``processes``
    workers.  The workers are forked (they inherit the jobs and the loaded
    modules, so nothing is pickled or imported again); with fewer cores, where
    fork is unavailable, or with one job, the jobs run here in turn.

    Parameters
    ----------
    jobs : list of callable
        Each draws and writes one figure; their return values are ignored.
    processes : int
        Largest number of worker processes.
    min_cores : int
        Fewest cores (``os.cpu_count()``) for worker processes; default
        :data:`PARALLEL_MIN_CORES`.

    Returns
    -------
    None
        Returns when every job has run.

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     jobs = [lambda n=n: (Path(tmp) / f"figure{n}.txt").write_text("drawn")
    ...             for n in range(3)]
    ...     draw_in_parallel(jobs)
    ...     sorted(p.name for p in Path(tmp).iterdir())
    ['figure0.txt', 'figure1.txt', 'figure2.txt']
    """
    import multiprocessing
    import os

    cores = os.cpu_count() or 1
    n = min(processes, len(jobs), cores)
    if n < 2 or cores < min_cores or "fork" not in multiprocessing.get_all_start_methods():
        for job in jobs:
            job()
        return
    import gc

    _JOBS[:] = jobs
    # objects made so far stay out of the workers' garbage collections, so the
    # workers do not touch (and copy) the parent's memory pages just to scan them
    gc.freeze()
    try:
        with multiprocessing.get_context("fork").Pool(n) as pool:
            pool.map(_run_job, range(len(jobs)), chunksize=1)
    finally:
        gc.unfreeze()
        _JOBS.clear()


def _figure_job(draw, stem, overwrite, *args, **kwargs):
    """A job that draws ``draw(*args, **kwargs)`` and saves it as ``stem``.png."""
    from functools import partial

    return partial(_save_drawn, draw, stem, overwrite, args, kwargs)


def _save_drawn(draw, stem, overwrite, args, kwargs):
    from .report.figures import save_figure

    save_figure(draw(*args, **kwargs), stem, ("png",), overwrite)


def _host_outputs(
    host, limit, forecast, limit_path, forecast_path, out, overwrite, figures, example=False
):
    """Tables of one host for both curves; its exclusion figure if it is the ``example``.

    The forecast's bound is drawn for every host in demo_overview.png (and a
    forecast figure of the whole map by :func:`_background_outputs`), so the
    example host's forecast map is a table only.
    """
    from ._files import check_new, write_table
    from .analysis.exclusion import exclusion_map
    from .report.figures import exclusion_figure
    from .report.provenance import provenance, safe_name
    from .report.tables import exclusion_table, summary_lines

    text = []
    maps = []
    for curve, path, tag in (
        (limit, limit_path, "exclusion"),
        (forecast, forecast_path, "forecast"),
    ):
        result = exclusion_map(host, curve)
        stem = out / f"{safe_name(host.name)}_{tag}"
        meta = provenance(host.describe(), files={"curve": path})
        meta["demo"] = "INVENTED data: fictional host, synthetic curve"
        write_table(exclusion_table(result, meta), f"{stem}.ecsv", overwrite)
        if example and tag == "exclusion":
            check_new([f"{stem}.png"], overwrite)
            figures.append(_figure_job(exclusion_figure, stem, overwrite, result))
        text += summary_lines(result)[:1]
        maps.append(result)
    return maps[0], maps[1], text


def _summary_outputs(results, out, overwrite, figures):
    import numpy as np
    from astropy import units as u
    from astropy.table import QTable

    from ._files import check_new, write_table
    from .report.overview import overview_figure

    t = QTable()
    lim = [r[0] for r in results]
    fc = [r[1] for r in results]
    t["name"] = [r.host.name for r in lim]
    t["mass"] = u.Quantity([r.host.mass for r in lim]).to(u.Msun)
    t["distance"] = u.Quantity([r.host.distance for r in lim]).to(u.Mpc)
    for tag, maps in (("limit", lim), ("forecast", fc)):
        best = [r.tightest() for r in maps]
        t[f"best_q_{tag}"] = [b[1] if b else np.nan for b in best]
        t[f"best_period_{tag}"] = u.Quantity([b[0] if b else np.nan * u.yr for b in best])
        masses = [r.smallest_excluded_companion_mass for r in maps]
        t[f"min_companion_{tag}"] = u.Quantity(
            [np.nan * u.Msun if m is None else m for m in masses]
        ).to(u.Msun)
    t["best_q_limit"].info.description = "smallest max_mass_ratio excluded by the 95% limit"
    t["best_q_forecast"].info.description = "smallest max_mass_ratio detectable (forecast)"
    t.meta["demo"] = "INVENTED data: fictional hosts, synthetic curves"
    write_table(t, out / "demo_summary.ecsv", overwrite)
    check_new([out / "demo_overview.png"], overwrite)
    figures.append(_figure_job(overview_figure, out / "demo_overview", overwrite, lim, fc))
    return [
        f"summary table {out / 'demo_summary.ecsv'}; overview figure {out / 'demo_overview.png'}"
    ]


def _probability_outputs(host, limit, limit_path, out, overwrite, figures, seed=2026):
    """Probability map of one host from its mass and distance errors."""
    from ._files import check_new, write_table
    from .analysis.probability import exclusion_probability
    from .report.figures import exclusion_figure
    from .report.provenance import provenance, safe_name
    from .report.tables import credible_summary_lines, exclusion_table

    prob = exclusion_probability(host, limit, samples=100_000, seed=seed)
    stem = out / f"{safe_name(host.name)}_probability"
    meta = provenance(host.describe(), files={"curve": limit_path})
    meta["demo"] = "INVENTED data: fictional host, synthetic curve"
    write_table(exclusion_table(prob.deterministic, meta, prob_map=prob), f"{stem}.ecsv", overwrite)
    check_new([f"{stem}.png"], overwrite)
    figures.append(
        _figure_job(exclusion_figure, stem, overwrite, prob.deterministic, prob_map=prob)
    )
    best = prob.deterministic.tightest()
    cred = prob.tightest(0.95)
    lines = [
        f"{host.name} with its errors ({host.describe().get('mass_err_dex')} dex in mass, "
        f"{host.describe().get('distance_err')} in distance, mass scaled with distance):"
    ]
    if best is not None and cred is not None:
        lines.append(
            f"  best-fit bound q > {best[1]:.3g} at P = {best[0].to_value('yr'):.3g} yr"
            f"; 95% credible bound q > {cred[1]:.3g} at P = "
            f"{cred[0].to_value('yr'):.3g} yr ({stem}.png)"
        )
    else:
        lines += credible_summary_lines(prob)
    return lines


def _array_exclusions(out, hosts, overwrite, figures):
    """Forecasts from the demo pulsar array at each host's position vs the sky average.

    Every host gets its table and the overview figure compares all hosts; the
    first host with a sky position is drawn by :func:`_background_outputs`, with
    its quiet-sky bound from here over the map with a background.  Returns the
    summary lines and the maps at the hosts' positions (in the order of ``hosts``).
    """
    import numpy as np

    from ._files import check_new, write_table
    from .analysis.exclusion import exclusion_map
    from .report.overview import overview_figure
    from .report.provenance import provenance, safe_name
    from .report.tables import exclusion_table

    arr = demo_array()
    sky_avg = arr.sky_averaged_curve()
    at_host, averaged, lines = [], [], []
    for host in hosts:
        here = exclusion_map(host, arr)  # asks the array for the curve at host.coord
        avg = exclusion_map(host, sky_avg)
        stem = out / f"{safe_name(host.name)}_array_forecast"
        meta = provenance(host.describe())
        meta["demo"] = "INVENTED data: fictional host and pulsar array"
        meta["array"] = "demo_array (shipped with ptaconstrain, INVENTED)"
        write_table(exclusion_table(here, meta), f"{stem}.ecsv", overwrite)
        at_host.append(here)
        averaged.append(avg)
    ratios = []
    for here, avg in zip(at_host, averaged, strict=True):
        b_here, b_avg = here.tightest(), avg.tightest()
        ratios.append(b_here[1] / b_avg[1] if b_here and b_avg else np.nan)
    order = np.argsort(ratios)
    lines.append("pulsar-array forecast (S/N >= 5) at each host's position vs sky-averaged:")
    for i in order:
        b_here, b_avg = at_host[i].tightest(), averaged[i].tightest()
        if not (b_here and b_avg):
            continue
        where = (
            "well-covered direction"
            if ratios[i] < 0.9
            else "poorly covered direction"
            if ratios[i] > 1.1
            else "near the sky average"
        )
        lines.append(
            f"  {hosts[i].name}: q > {b_here[1]:.3g} detectable at its position, "
            f"q > {b_avg[1]:.3g} sky-averaged ({ratios[i]:.2f} x; {where})"
        )
    check_new([out / "demo_array_overview.png"], overwrite)
    figures.append(
        _figure_job(
            overview_figure,
            out / "demo_array_overview",
            overwrite,
            at_host,
            averaged,
            title="INVENTED demo pulsar array (forecast, S/N >= 5): companions above each\n"
            "line would be detectable, at the host's position or sky-averaged",
            names=("at the host's position", "sky-averaged"),
        )
    )
    lines.append(f"  figure {out / 'demo_array_overview.png'}")
    return lines, at_host


def _eccentric_outputs(host, circular, limit, limit_path, out, overwrite, figures, e=0.5):
    """One host at eccentricity ``e`` against its circular map ``circular``, same limit."""
    from .analysis.exclusion import exclusion_map
    from .report.provenance import provenance, safe_name

    eccentric = exclusion_map(host, limit, eccentricity=e)
    stem = out / f"{safe_name(host.name)}_eccentric"
    meta = provenance({**host.describe(), "eccentricity": f"{e:g}"}, files={"curve": limit_path})
    meta["demo"] = "INVENTED data: fictional host, synthetic curve"
    title = f"{host.name} (INVENTED): e = {e:g}, against circular orbits (dashed)"
    head = (
        f"eccentric companions of {host.name} (e = {e:g}, {len(eccentric.harmonics)} "
        f"harmonics; {stem.name}.png with the e = 0 bound over it):"
    )
    return _compared(
        stem, meta, (circular, eccentric), ("e = 0", f"e = {e:g}"), title, head, overwrite, figures
    )


def _background_outputs(hosts, quiet, out, overwrite, figures, amplitude=2.4e-15):
    """The demo array's forecast for one host with the background, against a quiet sky.

    ``quiet``: the array's maps at each of ``hosts`` (no background).
    """
    from .analysis.exclusion import exclusion_map
    from .report.provenance import provenance, safe_name
    from .sensitivity.background import Background

    i = next((i for i, h in enumerate(hosts) if h.coord is not None), 0)
    host = hosts[i]
    background = Background(amplitude)
    maps = (
        quiet[i],
        exclusion_map(host, demo_array().with_background(background), warn=False),
    )
    stem = out / f"{safe_name(host.name)}_array_forecast_background"
    meta = provenance({**host.describe(), "background": background.describe()})
    meta["demo"] = "INVENTED data: fictional host and pulsar array"
    title = f"{host.name} and the demo array (INVENTED): with a background, against a quiet sky"
    head = (
        f"background as noise ({background.describe()}), demo array at {host.name} "
        f"({stem.name}.png):"
    )
    return _compared(
        stem, meta, maps, ("quiet sky", "with background"), title, head, overwrite, figures
    )


def _compared(stem, meta, maps, tags, title, head, overwrite, figures):
    """Write the second map's table, queue its figure with the first map's bound drawn over
    it, return the bound lines of both."""
    from ._files import check_new, write_table
    from .report.comparison import comparison_figure
    from .report.tables import exclusion_table

    write_table(exclusion_table(maps[1], meta), f"{stem}.ecsv", overwrite)
    check_new([f"{stem}.png"], overwrite)
    figures.append(
        _figure_job(comparison_figure, stem, overwrite, maps[1], maps[0], tags[0], title)
    )
    lines = [head]
    for tag, r in zip(tags, maps, strict=True):
        best = r.tightest()
        lines.append(
            f"  {tag}: "
            + (
                f"nothing {r.verb}"
                if best is None
                else f"q > {best[1]:.3g} {r.verb} at P = "
                f"{best[0].to_value('yr'):.3g} yr" + ("" if r.is_limit else " (forecast)")
            )
        )
    return lines


_DEMO = {}


def demo_array():
    """The shipped, invented demo array, loaded once per process (its fits are cached).

    Returns
    -------
    ptaconstrain.sensitivity.PulsarArray

    Examples
    --------
    >>> array = demo_array()
    >>> len(array), array is demo_array()  # 40 invented pulsars, loaded once
    (40, True)
    """
    if "array" not in _DEMO:
        from .data import path as data_file
        from .sensitivity.pulsar_list import load_array

        _DEMO["array"] = load_array(data_file(ARRAY_FILE))
    return _DEMO["array"]


def array_part(out_dir, hosts, overwrite=False, progress=None, figures=None):
    """Pulsar-array part of ``ptaconstrain demo``: sky map, figure and per-host curves.

    Loads the shipped, invented demo array, maps the h0 threshold (S/N >= 5) at
    its most sensitive sky-averaged frequency, marks ``hosts`` on the figure,
    writes each host's curve (and the sky-averaged one) and returns summary lines.

    Parameters
    ----------
    out_dir : path-like
    hosts : list of ptaconstrain.binary.host.Host
    overwrite : bool
    progress : callable, optional
        Called as ``progress(label, done, total)`` during the timing-model fits.
    figures : list, optional
        If given, the sky-map figure is appended to it as a job for
        :func:`draw_in_parallel` instead of being drawn here.

    Returns
    -------
    list of str
        Summary lines.

    Examples
    --------
    >>> import tempfile, warnings
    >>> from pathlib import Path
    >>> from ptaconstrain import Host
    >>> host = Host("Invented galaxy", 2e10, 100, ra=150, dec=20)
    >>> with tempfile.TemporaryDirectory() as tmp, warnings.catch_warnings():
    ...     warnings.simplefilter("ignore")
    ...     lines = array_part(Path(tmp), [host])
    ...     written = sorted(p.suffix for p in Path(tmp).iterdir())
    >>> written.count(".fits"), written.count(".png")   # the sky map and its figure
    (1, 1)
    """
    from pathlib import Path

    import numpy as np

    from ._files import check_new
    from .data import path as data_file
    from .report.provenance import fits_cards, provenance, safe_name
    from .report.skyplot import nhz_text, sky_map_figure, threshold_label
    from .sensitivity.curve import save_curve
    from .sensitivity.limit_map import write_threshold_maps

    snr, nside = 5.0, 32
    out = Path(out_dir)
    fits_path = out / "demo_array_h0_map.fits"
    png_stem = out / "demo_array_h0_map"
    curve_paths = {h.name: out / f"demo_array_curve_{safe_name(h.name)}.ecsv" for h in hosts}
    sky_path = out / "demo_array_curve_sky_averaged.ecsv"
    check_new([fits_path, f"{png_stem}.png", sky_path, *curve_paths.values()], overwrite)

    arr = demo_array()
    freq = arr.default_frequencies()
    done = [0]

    def step(n=1):
        done[0] += n
        if progress is not None:
            progress("demo pulsar array", done[0], len(arr))

    arr.weights(freq, callback=step)
    sky = arr.sky_averaged_curve(snr=snr, frequency=freq)
    sky.meta["demo"] = "INVENTED pulsar array (shipped demo_array)"
    h_sky = sky.h0_threshold(freq, snr=snr)
    # the frequency where a given binary (h0 ~ f^(2/3)) is easiest to detect
    i = int(np.argmin(h_sky / freq.to_value("Hz") ** (2 / 3)))
    f_best = freq[i : i + 1]
    m = arr.h0_threshold_map(f_best, nside=nside, snr=snr)
    meta = provenance(files={"array": data_file(ARRAY_FILE)})
    write_threshold_maps(
        fits_path,
        m,
        f_best,
        snr,
        arr.span,
        "pulsar list demo_array (INVENTED)",
        overwrite=overwrite,
        extra=fits_cards(meta),
    )
    job = _figure_job(
        sky_map_figure,
        png_stem,
        overwrite,
        m[0],
        pulsars=arr.sky_markers(),
        hosts=hosts,
        title=f"INVENTED demo array: h0 detectable at S/N >= {snr:g} (forecast), "
        f"f = {nhz_text(f_best[0])}",
        label=threshold_label(snr),
    )
    if figures is None:
        job()
    else:
        figures.append(job)
    sky.meta["provenance"] = meta
    save_curve(sky, sky_path, overwrite)

    lines = [
        f"pulsar array: {len(arr)} INVENTED pulsars, span {arr.span.value:.3g} yr; sky "
        f"map {fits_path.name} + {png_stem.name}.png at f = {nhz_text(f_best[0])}: sky-"
        f"averaged h0 >= {h_sky[i]:.3g} for S/N >= {snr:g} (forecast)"
    ]
    for host in hosts:
        c = arr.curve_at(host.coord, snr=snr, frequency=freq)
        c.meta["demo"] = "INVENTED pulsar array and host"
        c.meta["provenance"] = provenance(host.describe(), files={"array": data_file(ARRAY_FILE)})
        save_curve(c, curve_paths[host.name], overwrite)
        h = float(c.h0_threshold(f_best, snr=snr)[0])
        if host.coord is None:
            where = "no position: sky-averaged"
        else:
            ratio = h / h_sky[i]
            cover = (
                "a well-covered direction"
                if ratio < 0.9
                else "a poorly covered direction"
                if ratio > 1.1
                else "near the sky average"
            )
            where = f"{ratio:.2f} x the sky average ({cover})"
        lines.append(
            f"  {host.name}: h0 >= {h:.3g} at {nhz_text(f_best[0])} for S/N >= {snr:g}, "
            f"{where}; curve {curve_paths[host.name].name}"
        )
    return lines


def ranking_part(out_dir, curve, overwrite=False):
    """Rank the shipped fictional catalogue against ``curve`` (for ``ptaconstrain demo``).

    Parameters
    ----------
    out_dir : path-like
    curve : StrainCurve
        The shipped synthetic h0 limit.
    overwrite : bool

    Returns
    -------
    list of str
        Summary lines.

    Examples
    --------
    >>> import tempfile, warnings
    >>> from pathlib import Path
    >>> from ptaconstrain import data, load_curve
    >>> with tempfile.TemporaryDirectory() as tmp, warnings.catch_warnings():
    ...     warnings.simplefilter("ignore")
    ...     lines = ranking_part(Path(tmp), load_curve(data.path("synthetic_h0_limit")))
    >>> lines[0].startswith("catalogue ranking (INVENTED galaxies): ranked 400 of 400")
    True
    """
    from .data import path as data_file
    from .report.ranking_files import rank_to_files

    path = data_file(CATALOGUE_FILE)
    ranking, written = rank_to_files(
        path,
        curve,
        out_dir,
        files={"catalogue": path},
        options={"demo": "INVENTED galaxies (fictional catalogue), synthetic curve"},
        overwrite=overwrite,
        full_ecsv=True,
    )
    lines = ["catalogue ranking (INVENTED galaxies): " + ranking.summary_lines(0)[0]]
    lines += ranking.summary_lines(3)[1:]
    lines.append("  wrote " + ", ".join(p.name for p in written))
    return lines
