"""Provenance: the version and, in a git checkout, the exact source revision."""

import importlib
import shutil
import subprocess

import pytest
from packaging.version import Version

import ptaconstrain

prov = importlib.import_module("ptaconstrain.report.provenance")  # the module, not the function

GIT = shutil.which("git")


def test_the_version_is_a_pep440_version():
    # PEP 440 as implemented by the packaging library (pip's own version parser)
    assert str(Version(ptaconstrain.__version__))


def test_provenance_names_the_version_and_hashes_files(tmp_path):
    import hashlib

    f = tmp_path / "in.txt"
    f.write_bytes(b"abc")
    meta = prov.provenance({"mass": "1e10 solMass"}, files={"curve": f})
    assert meta["software"] == f"ptaconstrain {ptaconstrain.__version__}"
    # hashlib is the reference SHA-256
    assert meta["files"]["curve"]["sha256"] == hashlib.sha256(b"abc").hexdigest()
    assert "shipped" not in meta["files"]["curve"]


def _git(root, *args):
    subprocess.run(
        ["git", "-C", str(root), *args],
        check=True,
        capture_output=True,
        env={
            "GIT_AUTHOR_NAME": "t",
            "GIT_AUTHOR_EMAIL": "t@example.invalid",
            "GIT_COMMITTER_NAME": "t",
            "GIT_COMMITTER_EMAIL": "t@example.invalid",
            "HOME": str(root),
            "PATH": "/usr/bin:/bin",
        },
    )


@pytest.fixture
def checkout(tmp_path):
    """A minimal source checkout: <root>/src/ptaconstrain in a git repository."""
    if GIT is None:
        pytest.skip("git is not installed")
    root = tmp_path / "repo"
    pkg = root / "src" / "ptaconstrain"
    pkg.mkdir(parents=True)
    (root / "pyproject.toml").write_text("[project]\nname = 'x'\n")
    (pkg / "mod.py").write_text("x = 1\n")
    _git(root, "init", "-q")
    _git(root, "add", "-A")
    _git(root, "commit", "-q", "-m", "one")
    _git(root, "tag", "v9.8.7")
    return root, pkg


def _revision(pkg):
    prov.source_revision.cache_clear()
    try:
        return prov.source_revision(pkg)
    finally:
        prov.source_revision.cache_clear()


def test_a_checkout_records_git_describe_and_the_commit(checkout):
    root, pkg = checkout
    commit = subprocess.run(
        ["git", "-C", str(root), "rev-parse", "HEAD"], check=True, capture_output=True, text=True
    ).stdout.strip()
    text = _revision(pkg)
    assert text == f"v9.8.7-0-g{commit[:7]} (commit {commit})"
    (pkg / "mod.py").write_text("x = 2\n")  # an uncommitted change to a tracked file
    assert _revision(pkg).endswith(f"(commit {commit}, +dirty)")


def test_an_installed_copy_runs_no_git(tmp_path, monkeypatch):
    pkg = tmp_path / "lib" / "python3" / "site-packages" / "ptaconstrain"
    pkg.mkdir(parents=True)
    monkeypatch.setattr(prov.subprocess, "run", pytest.fail)  # any git call fails the test
    assert _revision(pkg) is None


def test_git_that_cannot_answer_is_recorded_not_raised(checkout, monkeypatch):
    root, pkg = checkout

    def hang(*args, **kwargs):
        raise subprocess.TimeoutExpired(args[0], prov.GIT_TIMEOUT)

    monkeypatch.setattr(prov.subprocess, "run", hang)
    assert _revision(pkg).startswith("unknown (git failed")


def test_fits_cards_fit_in_fits_strings_and_keep_the_dirty_mark():
    meta = {
        "software": "ptaconstrain 1.2.3",
        "created": "2026-01-01T00:00:00Z",
        "source_revision": "v1.2.3-4-gabcdef0 (commit " + "a" * 40 + ", +dirty)",
    }
    cards = prov.fits_cards(meta)
    assert cards["SRCREV"] == "v1.2.3-4-gabcdef0+dirty"
    # astropy.io.fits is the reference: each card must fit one 80-character header line
    from astropy.io import fits

    for key, value in cards.items():
        assert len(fits.Card(key, value).image) == 80
