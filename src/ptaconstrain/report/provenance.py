"""Provenance metadata recorded in every table the project writes."""

import datetime as _dt
import platform

__all__ = ["provenance", "safe_name"]


def provenance(inputs=None, files=None):
    """A dict of what produced a result: package version, time, inputs, file checksums.

    Parameters
    ----------
    inputs : dict, optional
        Input values as strings (with units).
    files : dict, optional
        Role -> path of input files; each is recorded with its SHA-256.

    Returns
    -------
    dict (JSON/YAML-serialisable, for astropy table meta).

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     curve_file = Path(tmp) / "limit.ecsv"
    ...     _ = curve_file.write_text("an invented curve")
    ...     record = provenance({"mass": "2e10 solMass"}, {"curve": curve_file})
    >>> sorted(record)
    ['created', 'files', 'inputs', 'python', 'software']
    >>> record["files"]["curve"]["sha256"][:12]
    '8df2a293b39f'
    """
    from .._files import sha256
    from .._version import __version__

    out = {
        "software": f"ptaconstrain {__version__}",
        "created": _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "python": platform.python_version(),
    }
    if inputs:
        out["inputs"] = {str(k): str(v) for k, v in inputs.items()}
    if files:
        out["files"] = {
            role: {"path": str(path), "sha256": sha256(path)} for role, path in files.items()
        }
    return out


def safe_name(name):
    """A file-name-safe version of a host name ('Host A 1' -> 'Host_A_1').

    Parameters
    ----------
    name : str

    Returns
    -------
    str
        Letters, digits, '-', '_' and '.' kept, anything else '_'; "host" if nothing is left.

    Examples
    --------
    >>> safe_name("Invented galaxy 1/2")
    'Invented_galaxy_1_2'
    """
    keep = "".join(c if c.isalnum() or c in "-_." else "_" for c in str(name).strip())
    return keep.strip("._") or "host"
