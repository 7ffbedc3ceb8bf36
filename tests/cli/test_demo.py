import numpy as np
import pytest
from astropy.table import QTable
from click.testing import CliRunner

from ptaconstrain.cli import main


@pytest.mark.slow
def test_demo_runs_on_shipped_data_and_refuses_to_overwrite(tmp_path):
    out = tmp_path / "demo"
    r = CliRunner().invoke(main, ["demo", "--out", str(out)])
    assert r.exit_code == 0, r.output
    assert "INVENTED" in r.stdout
    # results go to stdout; progress bars only to a terminal's stderr, so in a pipe
    # stderr holds nothing but the notes
    assert "exclusion maps" not in r.stdout
    assert all(line.startswith("Note: ") for line in r.stderr.splitlines())
    summary = QTable.read(out / "demo_summary.ecsv")
    assert len(summary) == 5
    assert (out / "demo_overview.png").stat().st_size > 10_000
    # every host gets its tables; the first host's figures are the examples of each kind
    # (the overview figures compare all hosts)
    assert len(list(out.glob("*_exclusion.png"))) == 1
    assert len(list(out.glob("*_exclusion.ecsv"))) == 5
    assert len([p for p in out.glob("*_forecast.ecsv") if "_array_" not in p.name]) == 5
    assert len(list(out.glob("*_array_forecast.ecsv"))) == 5
    # a forecast's bound per host in demo_overview.png; its whole map as a table
    assert not [p for p in out.glob("*_forecast.png") if "_array_" not in p.name]
    # the array forecast's example is the background figure, with the quiet-sky bound over it
    assert not list(out.glob("*_array_forecast.png"))
    assert all(p.stat().st_size > 10_000 for p in out.glob("*.png"))  # every figure drawn
    # one host at e = 0.5 beside e = 0; one array forecast with and without the background
    ecc = QTable.read(out / "Velmora_Central_eccentric.ecsv")
    assert ecc.meta["eccentricity"] == "0.5" and (out / "Velmora_Central_eccentric.png").exists()
    bg = list(out.glob("*_array_forecast_background.ecsv"))
    assert len(bg) == 1 and "A = 2.4e-15" in QTable.read(bg[0]).meta["inputs"]["background"]
    assert "e = 0.5: q >" in r.stdout and "with background: q >" in r.stdout
    assert len(list(out.glob("*.png"))) == 9
    assert "ptaconstrain exclude --mass" in r.stdout  # how to draw any other host
    assert "--curve synthetic_h0_limit --out" in r.stdout  # a shipped name: runs anywhere
    # a forecast from a noise budget reaches smaller q than the present-day limit
    assert all(summary["best_q_forecast"] < summary["best_q_limit"])
    again = CliRunner().invoke(main, ["demo", "--out", str(out)])
    assert again.exit_code == 1 and "--overwrite" in again.output
    assert len(again.output.strip().splitlines()) == 1

    # issue: uncertainty-aware exclusion shown for one fictional galaxy
    assert "95% credible bound" in r.output and "best-fit bound" in r.output
    t = QTable.read(out / "Velmora_Central_probability.ecsv")
    best, cred = t["max_mass_ratio"], t["max_mass_ratio_0.95"]
    ok = np.isfinite(best) & np.isfinite(cred)
    # with mass and distance errors the 95% credible bound is looser than the best fit
    assert np.all(cred[ok] >= best[ok]) and np.any(cred[ok] > best[ok])

    # issue: pulsar-array sensitivity; hosts in well- and poorly covered directions
    assert (out / "demo_array_h0_map.fits").exists() and (out / "demo_array_h0_map.png").exists()
    assert "well-covered direction" in r.output and "poorly covered direction" in r.output
    lines = [ln for ln in r.output.splitlines() if "detectable at its position" in ln]
    ratios = [float(ln.split("(")[1].split(" x")[0]) for ln in lines]
    assert min(ratios) < 0.8 and max(ratios) > 1.5  # visibly deeper vs visibly shallower

    # issue: catalogue ranking of the shipped invented catalogue
    ranking = QTable.read(out / "ranking.ecsv")
    assert len(ranking) >= 300 and (out / "ranking_sky.png").exists()
    assert np.all(np.diff(ranking["expected_number"]) <= 0)  # sorted by the default metric


def test_run_demo_is_a_library_call_that_refuses_a_non_empty_directory(tmp_path):
    from ptaconstrain.demo import run_demo
    from ptaconstrain.errors import InputError

    (tmp_path / "mine.txt").write_text("user data")
    with pytest.raises(InputError, match="not empty"):
        run_demo(tmp_path)
    assert [p.name for p in tmp_path.iterdir()] == ["mine.txt"]


def test_draw_in_parallel_runs_every_job(tmp_path):
    from ptaconstrain.demo import draw_in_parallel

    for min_cores in (1, 10_000):  # in worker processes (where fork exists), and in turn
        paths = [tmp_path / f"{min_cores}_{i}.txt" for i in range(5)]
        draw_in_parallel([lambda p=p: p.write_text(p.name) for p in paths], min_cores=min_cores)
        assert [p.read_text() for p in paths] == [p.name for p in paths]
        with pytest.raises(ZeroDivisionError):  # a failing job is not lost in a worker
            draw_in_parallel([lambda: None, lambda: 1 / 0], min_cores=min_cores)


def test_the_demo_command_pauses_the_cycle_collector_and_restores_it(tmp_path, monkeypatch):
    # a bounded command: Python's cyclic collector would walk the imported heap again
    # and again (cli.no_cycle_collection); it is on again afterwards
    import gc

    import ptaconstrain.demo

    seen = []

    def fake_run_demo(out, overwrite=False, progress=None):
        seen.append(gc.isenabled())
        return ["ran"]

    monkeypatch.setattr(ptaconstrain.demo, "run_demo", fake_run_demo)
    r = CliRunner().invoke(main, ["demo", "--out", str(tmp_path / "d")])
    assert r.exit_code == 0 and r.stdout == "ran\n"
    assert seen == [False] and gc.isenabled()


def test_cycle_collection_resumes_without_a_backlog():
    # objects made while the collector was paused go to the oldest generation on
    # resuming, so no collection walks them all at once as it resumes; reference:
    # gc.callbacks (CPython reports every collection's start with its generation)
    import gc

    from ptaconstrain.cli import no_cycle_collection

    started = []

    def record(phase, info):
        if phase == "start":
            started.append(info["generation"])

    with no_cycle_collection():
        made = [[i] for i in range(50_000)]  # tracked containers, a backlog of 50,000
        gc.callbacks.append(record)
    try:
        after = [[i] for i in range(100)]  # a few allocations after resuming
    finally:
        gc.callbacks.remove(record)
    assert gc.isenabled() and len(made) + len(after) == 50_100
    assert started == []


def test_a_command_from_the_process_command_line_freezes_the_heap(monkeypatch):
    # the process ends after a command from its own command line: its heap is frozen
    # (no final walk over it); a command called with args (tests, notebooks) is not
    import gc
    import sys

    from ptaconstrain.cli import main

    assert gc.get_freeze_count() == 0
    with pytest.raises(SystemExit):
        main(["--version"])
    assert gc.get_freeze_count() == 0
    monkeypatch.setattr(sys, "argv", ["ptaconstrain", "--version"])
    try:
        with pytest.raises(SystemExit):
            main(prog_name="ptaconstrain")
        assert gc.get_freeze_count() > 0
    finally:
        gc.unfreeze()
