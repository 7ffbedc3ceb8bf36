"""Provenance metadata recorded in every table the project writes.

Each record names the package version (from git tags, :mod:`ptaconstrain._version`)
and, when the package runs from a git checkout rather than an installed wheel, the
exact source revision (:func:`source_revision`), so an output can be traced to the
code that wrote it even between releases or with local edits.
"""

import datetime as _dt
import functools
import platform
import subprocess
from pathlib import Path

__all__ = ["provenance", "fits_cards", "safe_name", "source_revision"]

#: seconds allowed for each git call; provenance must never hang a run
GIT_TIMEOUT = 3.0


def provenance(inputs=None, files=None):
    """A dict of what produced a result: package version, time, inputs, file checksums.

    Parameters
    ----------
    inputs : dict, optional
        Input values as strings (with units).
    files : dict, optional
        Role -> path of input files; each is recorded with its SHA-256 (a directory,
        such as a partitioned catalogue, with ``"directory"`` instead), and a file
        shipped with the package also with its shipped name (``ptaconstrain data``).

    Returns
    -------
    dict
        JSON/YAML-serialisable, for astropy table meta: ``software`` (name and
        version), ``source_revision`` (the git revision, only when running from a
        checkout),
        ``created`` (UTC), ``python``, and ``inputs`` and ``files`` when given.

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     curve_file = Path(tmp) / "limit.ecsv"
    ...     _ = curve_file.write_text("an invented curve")
    ...     record = provenance({"mass": "2e10 solMass"}, {"curve": curve_file})
    >>> {"software", "created", "python", "inputs", "files"} <= set(record)
    True
    >>> record["files"]["curve"]["sha256"][:12]
    '8df2a293b39f'
    """
    from pathlib import Path

    from .._files import sha256
    from .._version import __version__
    from ..data import shipped_name

    out = {"software": f"ptaconstrain {__version__}"}
    revision = source_revision()
    if revision is not None:
        out["source_revision"] = revision
    out["created"] = _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
    out["python"] = platform.python_version()
    if inputs:
        out["inputs"] = {str(k): str(v) for k, v in inputs.items()}
    if files:
        out["files"] = {}
        for role, path in files.items():
            entry = {
                "path": str(path),
                "sha256": "directory" if Path(path).is_dir() else sha256(path),
            }
            name = shipped_name(path)
            if name is not None:
                entry["shipped"] = name
            out["files"][role] = entry
    return out


def fits_cards(meta):
    """The version part of a provenance record as FITS header keywords.

    FITS string values hold at most 68 characters, so the source revision is given as
    ``git describe`` text (abbreviated commit, ``+dirty``) rather than the full hash.

    Parameters
    ----------
    meta : dict
        A record from :func:`provenance`.

    Returns
    -------
    dict
        ``SOFTWARE``, ``CREATED`` and, from a checkout, ``SRCREV``.
    """
    cards = {"SOFTWARE": meta["software"][:68], "CREATED": meta["created"]}
    revision = meta.get("source_revision")
    if revision is not None:
        describe = revision.split(" (commit ")[0]
        cards["SRCREV"] = (describe + ("+dirty" if "+dirty" in revision else ""))[:68]
    return cards


@functools.cache
def source_revision(package_dir=None):
    """The git revision of the checkout the package runs from, or None.

    Only a source layout ``<root>/src/ptaconstrain`` with ``<root>/.git`` and
    ``<root>/pyproject.toml`` counts as a checkout; for an installed wheel nothing
    is run.  git is called when the first provenance record is written (never on
    import), with a timeout of :data:`GIT_TIMEOUT` seconds per call, and the answer
    is kept for the process.

    Parameters
    ----------
    package_dir : path-like, optional
        The package directory; default: the running package's.

    Returns
    -------
    str or None
        ``git describe`` text and the full commit hash, e.g.
        ``"v0.1.0-7-g1a2b3c4 (commit 1a2b3c4..., +dirty)"``; ``+dirty`` marks
        uncommitted changes to tracked files.  None outside a checkout;
        ``"unknown (...)"`` when git cannot answer.
    """
    pkg = Path(__file__).resolve().parent.parent if package_dir is None else Path(package_dir)
    root = pkg.parent.parent
    if (
        pkg.parent.name != "src"
        or not (root / ".git").exists()
        or not (root / "pyproject.toml").is_file()
    ):
        return None
    try:
        commit = _git(root, "rev-parse", "HEAD")
        describe = _git(root, "describe", "--tags", "--always", "--long", "--dirty=+dirty")
    except (OSError, subprocess.SubprocessError) as err:
        return f"unknown (git failed in {root}: {type(err).__name__})"
    dirty = describe.endswith("+dirty")
    return f"{describe.removesuffix('+dirty')} (commit {commit}{', +dirty' if dirty else ''})"


def _git(root, *args):
    res = subprocess.run(
        ["git", "-C", str(root), *args],
        capture_output=True,
        text=True,
        timeout=GIT_TIMEOUT,
        check=True,
        stdin=subprocess.DEVNULL,
    )
    return res.stdout.strip()


def safe_name(name):
    """A file-name-safe version of a host name, distinct for distinct names.

    Spaces become ``_``; any other character that cannot stay in a file name
    (``+``, ``/``, ...) also becomes ``_``, and then a short stable suffix
    derived from the original name (6 hex digits of its BLAKE2 hash) is added,
    so that names differing only in such characters keep distinct files.  Dots
    are kept: the whole name survives.

    Parameters
    ----------
    name : str

    Returns
    -------
    str
        "host" for an empty name.

    Examples
    --------
    >>> safe_name("Host A 1"), safe_name("Fictus J1234.5+6789")
    ('Host_A_1', 'Fictus_J1234.5_6789_04703a')
    """
    import hashlib

    text = str(name).strip()
    if not text:
        return "host"
    keep = "".join(c if c.isalnum() or c in "-_." else "_" for c in text)
    out = keep.strip("._") or "host"
    if out != text.replace(" ", "_"):  # lost more than its spaces: keep it distinct
        out += "_" + hashlib.blake2s(text.encode("utf-8"), digest_size=3).hexdigest()
    return out
