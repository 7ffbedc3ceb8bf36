"""Figures are plain matplotlib Figures: no pyplot, drawable into a caller's Axes."""

import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from astropy import units as u
from curves_for_tests import power_law_limit

import ptaconstrain
from ptaconstrain._files import OutputExistsError
from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.analysis.regions import EXCLUDED
from ptaconstrain.binary.host import Host
from ptaconstrain.report.figures import exclusion_figure, save_figure


@pytest.fixture(scope="module")
def result():
    return exclusion_map(
        Host("Figure host", 2e10, 100),
        power_law_limit(),
        mass_ratio=np.geomspace(1e-3, 1, 40),
        period=np.geomspace(0.3, 30, 50) * u.yr,
    )


@pytest.mark.slow
def test_a_figure_is_made_and_saved_without_pyplot(tmp_path):
    src = str(Path(ptaconstrain.__file__).resolve().parent.parent)
    tests = str(Path(__file__).resolve().parent.parent)
    code = f"""
import sys
import numpy as np
from astropy import units as u
from curves_for_tests import power_law_limit
from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.binary.host import Host
from ptaconstrain.report.figures import exclusion_figure, save_figure
from ptaconstrain.report.overview import overview_figure
r = exclusion_map(Host("h", 2e10, 100), power_law_limit(), mass_ratio=[0.01, 0.1, 1],
                  period=[1, 3, 10] * u.yr)
save_figure(exclusion_figure(r), {str(tmp_path / "one")!r}, ("png", "pdf"))
save_figure(overview_figure([r]), {str(tmp_path / "all")!r}, ("png",))
print("matplotlib.pyplot" in sys.modules)
"""
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([src, tests]))
    r = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, env=env, timeout=120
    )
    assert r.returncode == 0, r.stderr
    assert r.stdout.strip() == "False"
    # PNG signature (ISO/IEC 15948 section 5.2) and PDF header (ISO 32000-1 section 7.5.2)
    assert (tmp_path / "one.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert (tmp_path / "one.pdf").read_bytes()[:5] == b"%PDF-"
    assert (tmp_path / "all.png").stat().st_size > 1000


def test_exclusion_figure_draws_into_a_given_axes(result):
    from matplotlib.figure import Figure

    fig = Figure()
    left, right = fig.subplots(1, 2)
    assert exclusion_figure(result, ax=right) is fig
    assert right.get_xscale() == "log" and right.get_yscale() == "log"
    assert right.collections and not left.collections and not left.lines
    assert right.get_title().startswith("Figure host")
    assert (result.region == EXCLUDED).any()  # the map has something to show


def test_save_figure_keeps_the_figure_and_refuses_to_overwrite(tmp_path, result):
    fig = exclusion_figure(result)
    first = save_figure(fig, tmp_path / "map", ("png",))
    assert first == [tmp_path / "map.png"]
    before = first[0].read_bytes()
    with pytest.raises(OutputExistsError):
        save_figure(fig, tmp_path / "map", ("png",))
    assert first[0].read_bytes() == before
    # the figure was not closed: it can still be saved elsewhere, and replaced when asked
    assert save_figure(fig, tmp_path / "again", ("svg",)) == [tmp_path / "again.svg"]
    assert save_figure(fig, tmp_path / "map", ("png",), overwrite=True) == first


def test_sky_map_image_pixels_show_the_healpix_value_at_their_sky_position():
    # reference: matplotlib's own inverse Mollweide transform (outside the package) maps
    # each image pixel centre to (lon, lat); healpy.ang2pix gives the pixel whose value it
    # must show, in the colour matplotlib's LogNorm + cividis give that value
    import healpy as hp
    from matplotlib.cm import ScalarMappable
    from matplotlib.colors import LogNorm

    from ptaconstrain.report.skyplot import sky_map_figure

    nside = 8
    code = (np.arange(hp.nside2npix(nside)) * 97) % 256  # neighbours differ in colour
    values = 10.0 ** (code / 255.0)  # log-spaced in [1, 10]: one colour per code
    fig = sky_map_figure(values)
    ax = fig.axes[0]
    rgba = np.asarray(ax.images[0].get_array())
    ny, nx = rgba.shape[:2]
    rng = np.random.default_rng(3)
    i, j = rng.integers(0, ny, 4000), rng.integers(0, nx, 4000)
    u_ax, v_ax = (j + 0.5) / nx, (i + 0.5) / ny
    # axes fraction -> projected coordinates -> (lon, lat) with matplotlib's transforms
    proj = ax.transAffine.inverted().transform(np.column_stack([u_ax, v_ax]))
    lonlat = ax.transProjection.inverted().transform(proj)
    inside = np.hypot(proj[:, 0] / (2 * np.sqrt(2)), proj[:, 1] / np.sqrt(2)) < 1 - 1e-9
    assert inside.sum() > 2500
    ra = np.mod(180.0 - np.degrees(lonlat[inside, 0]), 360.0)
    pix = hp.ang2pix(nside, ra, np.degrees(lonlat[inside, 1]), lonlat=True)
    expected = ScalarMappable(LogNorm(1.0, 10.0), "cividis").to_rgba(values[pix], bytes=True)
    assert np.array_equal(rgba[i[inside], j[inside]], expected)
    assert (rgba[i[~inside], j[~inside], 3] == 0).all()  # outside the sky: transparent


def test_host_labels_near_the_equator_leave_the_ra_labels_visible():
    # the RA tick labels run along the equator; a host just south of it (the invented demo's
    # "Ilvane Elliptical" at Dec -4 deg hid "12h") is labelled below its star. Reference:
    # the rendered extents of matplotlib's own text artists
    from types import SimpleNamespace

    from astropy import units as u
    from astropy.coordinates import SkyCoord
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.text import Annotation

    from ptaconstrain.report.skyplot import sky_map_figure

    hosts = [
        SimpleNamespace(name="Invented South", coord=SkyCoord(190 * u.deg, -4 * u.deg)),
        SimpleNamespace(name="Invented North", coord=SkyCoord(40 * u.deg, 35 * u.deg)),
    ]
    fig = sky_map_figure(np.ones(12 * 4**2), hosts=hosts)
    renderer = FigureCanvasAgg(fig).get_renderer()
    ax = fig.axes[0]
    ticks = [t.get_window_extent(renderer) for t in ax.get_xticklabels() if t.get_text()]
    notes = {
        a.get_text(): a.get_window_extent(renderer) for a in ax.texts if isinstance(a, Annotation)
    }
    assert set(notes) == {"Invented South", "Invented North"} and len(ticks) == 12
    for box in notes.values():
        assert not any(box.overlaps(t) for t in ticks)
    star = ax.transData.transform((np.radians(180 - 190), np.radians(-4)))
    assert notes["Invented South"].y1 < star[1]  # below its star


def test_a_huge_ranking_sky_map_draws_a_bounded_even_sample(monkeypatch):
    # the best rows are all drawn, the rest thinned evenly; the title says so
    import numpy as np
    from astropy.table import Table

    from ptaconstrain.report import rankplots

    monkeypatch.setattr(rankplots, "MAX_SKY_POINTS", 1000)
    n = 25_000
    rng = np.random.default_rng(3)
    t = Table(
        {
            "rank": np.arange(1, n + 1),
            "ra": rng.uniform(0, 360, n),
            "dec": rng.uniform(-90, 90, n),
            "h0_ratio": np.linspace(10, 0.1, n),
        }
    )
    fig = rankplots.sky_figure(t, "h0_ratio", "excluded", "95% upper limit")
    drawn = sum(len(c.get_offsets()) for c in fig.axes[0].collections)
    # 100 best + ceil((25000 - 100) / 900) = 28 -> 0..24899 step 28 -> 890 more
    assert drawn == 100 + len(range(100, n, 28))
    assert "one in 28 of the rest" in fig.axes[0].get_title()
    assert str(n) in fig.axes[0].get_title()


def _overrun(fig):
    """Inches by which any axes (ticks, labels, title, legend) or figure text overruns
    the figure's edges once drawn (negative: the smallest margin left)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    canvas = FigureCanvasAgg(fig)
    canvas.draw()
    renderer = canvas.get_renderer()
    boxes = [ax.get_tightbbox(renderer) for ax in fig.axes]
    boxes += [t.get_window_extent(renderer) for t in fig.texts if t.get_text()]
    width, height = canvas.get_width_height()
    return max(max(-b.x0, -b.y0, b.x1 - width, b.y1 - height) for b in boxes) / fig.dpi


def test_fixed_layouts_keep_every_text_inside_the_figure():
    # the layouts are fixed (no layout engine): a three-line title (an eccentric orbit's
    # statement) grows the figure instead of being cut off, alone and with a figure title
    from curves_for_tests import bucket_limit

    from ptaconstrain.report.comparison import comparison_figure

    host = Host("Figure host", 2e10, 80)
    q = np.geomspace(1e-4, 1, 30)
    circular = exclusion_map(host, bucket_limit(), q)
    eccentric = exclusion_map(host, bucket_limit(), q, eccentricity=0.5)
    single = exclusion_figure(eccentric)
    assert single.axes[0].get_title().count("\n") == 2
    assert -0.3 < _overrun(single) < 0
    pair = comparison_figure(eccentric, circular, "e = 0", "eccentric against circular")
    assert -0.3 < _overrun(pair) < 0
    # the reference's bound is drawn over the map, as a line of its own in the legend
    texts = [t.get_text() for t in pair.axes[0].get_legend().texts]
    assert "e = 0: max allowed q" in texts


@pytest.mark.parametrize("scale", [1e-5, 3e-3, 1.0, 2e4])
def test_cumulative_ranking_figure_fits_labels_of_any_width(scale):
    # its margins come from the widest y tick label, measured once (no tight_layout)
    from astropy.table import Table

    from ptaconstrain.report.rankplots import cumulative_figure

    n = np.geomspace(1.0, 1e-3, 300) * scale
    table = Table({"rank": np.arange(1, 301), "expected_number": n})
    for rate in (None, "1e-10 / yr"):
        fig = cumulative_figure(table, "excluded", "95% upper limit", top=20, rate=rate)
        assert -0.3 < _overrun(fig) < 0
