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
    """A file-name-safe version of a host name, distinct for distinct names.

    Spaces become ``_``; any other character that cannot stay in a file name
    (``+``, ``/``, ...) also becomes ``_``, and then a short stable suffix
    derived from the original name (6 hex digits of its BLAKE2 hash) is added,
    so that names differing only in such characters keep distinct files.  Dots
    are kept: the whole name survives.

    Examples
    --------
    >>> safe_name("NGC 1"), safe_name("Fictus J1234.5+6789")
    ('NGC_1', 'Fictus_J1234.5_6789_04703a')
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
