"""Every command publishes its whole output set or nothing (a full disk included)."""

import errno

import pytest
from click.testing import CliRunner

from ptaconstrain.cli import main
from ptaconstrain.data import path as data_file

CATALOGUE = str(data_file("demo_catalogue.ecsv"))
ARRAY = str(data_file("demo_array.ecsv"))


def run(args):
    return CliRunner().invoke(main, [str(a) for a in args])


def exclude_args(curve_file, out, *extra):
    return [
        "exclude",
        "--mass",
        "2e10",
        "--distance",
        "100",
        "--curve",
        curve_file,
        "--out",
        out,
        "--grid",
        "30x30",
        "--name",
        "Test Host",
        *extra,
    ]


def listing(directory):
    """Every entry, hidden ones included (a staging directory must not survive)."""
    return sorted(p.name for p in directory.iterdir()) if directory.exists() else []


@pytest.fixture
def full_disk(monkeypatch):
    """Make the Nth file write of matplotlib (PDF here) fail with ENOSPC."""
    from matplotlib.figure import Figure

    real = Figure.savefig

    def savefig(self, fname, *args, **kwargs):
        if kwargs.get("format") in full_disk.formats:
            raise OSError(errno.ENOSPC, "No space left on device", str(fname))
        return real(self, fname, *args, **kwargs)

    full_disk.formats = {"pdf"}
    monkeypatch.setattr(Figure, "savefig", savefig)
    return full_disk


def test_exclude_on_a_full_disk_leaves_no_partial_set(tmp_path, curve_file, full_disk):
    out = tmp_path / "res"
    r = run(exclude_args(curve_file, out, "--format", "png,pdf"))
    assert r.exit_code == 1
    assert r.output.strip().splitlines() == [
        f"Error: {out / 'Test_Host_exclusion.pdf'}: no space left on device"
    ]
    assert listing(out) == []


def test_exclude_on_a_full_disk_leaves_the_earlier_set_untouched(tmp_path, curve_file, full_disk):
    out = tmp_path / "res"
    full_disk.formats = set()  # the disk fills between the two runs
    assert run(exclude_args(curve_file, out, "--format", "png")).exit_code == 0
    before = {n: (out / n).read_bytes() for n in listing(out)}
    full_disk.formats = {"png"}
    r = run(exclude_args(curve_file, out, "--format", "png", "--overwrite", "--grid", "20"))
    assert r.exit_code == 1 and "no space left" in r.output
    assert {n: (out / n).read_bytes() for n in listing(out)} == before


def test_overwrite_with_fewer_formats_removes_the_earlier_figure(tmp_path, curve_file):
    out = tmp_path / "res"
    assert run(exclude_args(curve_file, out, "--format", "png,pdf")).exit_code == 0
    r = run(exclude_args(curve_file, out, "--format", "png", "--overwrite"))
    assert r.exit_code == 0, r.output
    assert listing(out) == ["Test_Host_exclusion.ecsv", "Test_Host_exclusion.png"]


def test_rank_on_a_full_disk_leaves_no_partial_set(tmp_path, curve_file, full_disk):
    out = tmp_path / "ranked"
    r = run(["rank", CATALOGUE, "--curve", curve_file, "--out", out, "--format", "png,pdf"])
    assert r.exit_code == 1 and "no space left on device" in r.output
    assert len(r.output.strip().splitlines()) == 1
    assert listing(out) == []


def test_rank_overwrite_removes_the_earlier_per_galaxy_figures(tmp_path, curve_file):
    out = tmp_path / "ranked"
    r = run(["rank", CATALOGUE, "--curve", curve_file, "--out", out, "--exclusion-figures", "2"])
    assert r.exit_code == 0, r.output
    assert len(list(out.glob("*_exclusion.png"))) == 2
    r = run(["rank", CATALOGUE, "--curve", curve_file, "--out", out, "--overwrite"])
    assert r.exit_code == 0, r.output
    assert not list(out.glob("*_exclusion.png")) and not list(out.glob(".*"))


def test_demo_on_a_full_disk_leaves_no_partial_set(tmp_path, full_disk):
    full_disk.formats = {"png"}  # the demo draws PNG figures (in worker processes)
    out = tmp_path / "demo"
    r = run(["demo", "--out", out])
    assert r.exit_code == 1 and "no space left on device" in r.output
    assert listing(out) == []


def test_threshold_map_on_a_full_disk_leaves_no_partial_set(tmp_path, full_disk):
    full_disk.formats = {"png"}  # the FITS map is written first, then the figures
    out = tmp_path / "maps"
    r = run(
        ["threshold-map", "--array", ARRAY, "--frequency", "8 nHz", "--nside", "4", "--out", out]
    )
    assert r.exit_code == 1 and "no space left on device" in r.output
    assert listing(out) == []


def test_threshold_map_overwrite_removes_figures_of_other_frequencies(tmp_path):
    out = tmp_path / "maps"
    base = ["threshold-map", "--array", ARRAY, "--nside", "4", "--out", out]
    assert run(base + ["--frequency", "8 nHz", "--frequency", "20 nHz"]).exit_code == 0
    r = run(base + ["--frequency", "10 nHz", "--overwrite"])
    assert r.exit_code == 0, r.output
    assert listing(out) == ["h0_threshold_map.fits", "h0_threshold_map_10nHz.png"]


def test_curve_into_an_existing_directory_leaves_only_the_curve(tmp_path):
    out = tmp_path / "c.ecsv"
    r = run(["curve", "--array", ARRAY, "--out", out])
    assert r.exit_code == 0, r.output
    assert listing(tmp_path) == ["c.ecsv"]
