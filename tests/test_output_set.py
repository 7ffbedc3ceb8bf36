"""Output sets: every file of a command is published, or none; an earlier set is
replaced whole or left untouched."""

import errno
import os

import pytest

from ptaconstrain._files import (
    OutputBusyError,
    OutputExistsError,
    atomic_write,
    output_set,
)


def _write(path, text):
    with atomic_write(path, overwrite=True) as tmp:
        tmp.write_text(text)


def _visible(directory):
    return sorted(p.name for p in directory.iterdir()) if directory.exists() else []


def test_nothing_is_published_before_the_whole_set_is_written(tmp_path):
    out = tmp_path / "out"
    with output_set(out, "prod"):
        _write(out / "a.txt", "a")
        assert not (out / "a.txt").exists()  # staged, not yet published
        _write(out / "b.txt", "b")
    assert _visible(out) == ["a.txt", "b.txt"]
    assert (out / "a.txt").read_text() == "a"


def test_a_failure_leaves_no_new_file_and_no_new_directory(tmp_path):
    out = tmp_path / "new"
    with pytest.raises(RuntimeError):
        with output_set(out, "prod"):
            _write(out / "a.txt", "a")
            raise RuntimeError("late failure")
    assert not out.exists()


def test_a_full_disk_leaves_the_earlier_set_untouched(tmp_path):
    out = tmp_path / "out"
    with output_set(out, "prod"):
        _write(out / "a.txt", "old a")
        _write(out / "b.txt", "old b")
    with pytest.raises(OSError) as err:
        with output_set(out, "prod", overwrite=True):
            _write(out / "a.txt", "new a")
            with atomic_write(out / "b.txt", overwrite=True):
                raise OSError(errno.ENOSPC, "No space left on device", str(out / ".x"))
    assert err.value.errno == errno.ENOSPC
    assert _visible(out) == ["a.txt", "b.txt"]
    assert (out / "a.txt").read_text() == "old a"


def test_the_error_names_the_output_not_the_staging_file(tmp_path):
    out = tmp_path / "out"
    with pytest.raises(OSError) as err:
        with output_set(out, "prod"):
            with atomic_write(out / "t.fits") as tmp:
                raise OSError(errno.ENOSPC, "No space left on device", str(tmp))
    assert err.value.filename == str(out / "t.fits")


def test_overwrite_removes_every_file_of_the_earlier_set(tmp_path):
    # an earlier run made a PDF this run does not make: it must not survive beside
    # the new files (the record lists the earlier set)
    out = tmp_path / "out"
    with output_set(out, "prod", record=True):
        for name in ("t.ecsv", "t.png", "t.pdf"):
            _write(out / name, "old")
    with output_set(out, "prod", overwrite=True, record=True):
        _write(out / "t.ecsv", "new")
        _write(out / "t.png", "new")
    assert _visible(out) == [".prod.files", "t.ecsv", "t.png"]
    assert (out / ".prod.files").read_text().split() == ["t.ecsv", "t.png"]


def test_names_given_as_earlier_are_replaced_without_a_record(tmp_path):
    out = tmp_path / "out"
    (out).mkdir()
    (out / "t.pdf").write_text("old")
    (out / "other.txt").write_text("not ours")
    with output_set(out, "prod", overwrite=True, earlier=["t.pdf", "t.svg"]):
        _write(out / "t.png", "new")
    assert _visible(out) == ["other.txt", "t.png"]


def test_without_overwrite_an_existing_file_refuses_the_whole_set(tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    (out / "b.txt").write_text("theirs")
    with pytest.raises(OutputExistsError):
        with output_set(out, "prod"):
            with atomic_write(out / "a.txt") as tmp:
                tmp.write_text("a")
            (out / "b.txt").unlink()
            with atomic_write(out / "b.txt") as tmp:
                tmp.write_text("b")
            (out / "b.txt").write_text("appeared meanwhile")  # another run was faster
    assert _visible(out) == ["b.txt"]  # a.txt was not left behind
    assert (out / "b.txt").read_text() == "appeared meanwhile"


def test_a_second_run_of_the_same_product_is_refused_before_writing(tmp_path):
    import threading

    out = tmp_path / "out"
    seen = {}

    def second(product):
        try:
            with output_set(out, product):
                _write(out / f"{product}.txt", "second")
            seen[product] = "ok"
        except OutputBusyError as err:
            seen[product] = str(err)

    with output_set(out, "prod"):
        _write(out / "a.txt", "first")
        for product in ("prod", "other"):  # a thread starts outside this set
            t = threading.Thread(target=second, args=(product,))
            t.start()
            t.join()
    assert "another run is writing prod" in seen["prod"]
    assert seen["other"] == "ok"  # another product may be written beside it
    assert _visible(out) == ["a.txt", "other.txt"]  # the locks are gone after the runs


def test_a_second_run_in_another_process_is_refused(tmp_path):
    import subprocess
    import sys

    out = tmp_path / "out"
    code = (
        "import sys; from ptaconstrain._files import output_set\n"
        "try:\n"
        "    with output_set(sys.argv[1], 'prod'):\n"
        "        pass\n"
        "except OSError as e:\n"
        "    print(type(e).__name__); sys.exit(3)\n"
    )
    with output_set(out, "prod"):
        r = subprocess.run(
            [sys.executable, "-c", code, str(out)],
            capture_output=True,
            text=True,
            env={**os.environ},
        )
    assert r.returncode == 3 and r.stdout.strip() == "OutputBusyError", r.stderr


def test_stale_staging_of_the_same_product_is_swept(tmp_path):
    out = tmp_path / "out"
    stale = out / ".prod.staging-dead"
    stale.mkdir(parents=True)
    (stale / "junk").write_text("left by a killed run")
    other = out / ".else.staging-live"
    other.mkdir()
    with output_set(out, "prod"):
        _write(out / "a.txt", "a")
    assert _visible(out) == [".else.staging-live", "a.txt"]


def test_a_nested_set_for_the_same_directory_joins_the_outer_one(tmp_path):
    out = tmp_path / "out"
    with output_set(out, "outer") as outer:
        with output_set(out, "inner") as inner:
            assert inner is outer
            _write(out / "a.txt", "a")
        assert not (out / "a.txt").exists()
    assert _visible(out) == ["a.txt"]


def test_a_name_written_twice_in_one_set_is_a_collision(tmp_path):
    out = tmp_path / "out"
    with pytest.raises(OutputExistsError, match="written twice"):
        with output_set(out, "prod"):
            _write(out / "a.txt", "a")
            _write(out / "a.txt", "b")
    assert not out.exists()
