"""File helpers: atomic writes that never replace a user's file unasked, checksums.

Every file the project writes goes through :func:`atomic_write`: the content
is written to a temporary file beside the target and renamed into place only
when complete, so a failure leaves no partial output behind.
"""

import contextlib
import hashlib
import os
import tempfile
from pathlib import Path

__all__ = ["OutputExistsError", "check_new", "atomic_write", "write_table", "sha256",
           "read_toml"]


class OutputExistsError(FileExistsError):
    """An output file already exists and overwriting was not asked for."""


def check_new(paths, overwrite=False):
    """Raise if any of ``paths`` exists and ``overwrite`` is false.

    Called before any computation writes, so that a refusal leaves nothing
    half-written.

    Parameters
    ----------
    paths : iterable of path-like
    overwrite : bool
    """
    if overwrite:
        return
    existing = [str(p) for p in paths if Path(p).exists()]
    if existing:
        more = f" (and {len(existing) - 1} more)" if len(existing) > 1 else ""
        raise OutputExistsError(
            f"{existing[0]}{more} already exists: choose another --out or pass --overwrite"
        )


@contextlib.contextmanager
def atomic_write(path, overwrite=False):
    """Context manager yielding a temporary path that becomes ``path`` on success.

    Parameters
    ----------
    path : path-like
        Final location; its directory is created if needed.
    overwrite : bool
        Replace an existing file (otherwise :class:`OutputExistsError`).

    Yields
    ------
    pathlib.Path
        Temporary file in the same directory, with the same suffix.
    """
    path = Path(path)
    check_new([path], overwrite)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.stem}-", suffix=path.suffix, dir=path.parent)
    os.close(fd)
    tmp = Path(tmp)
    try:
        yield tmp
        if not overwrite and path.exists():
            raise OutputExistsError(f"{path} appeared while writing: not replaced")
        os.chmod(tmp, 0o666 & ~_umask())  # mkstemp makes 0600; outputs are for sharing
        os.replace(tmp, path)
    finally:
        if tmp.exists():
            tmp.unlink()


def _umask():
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_table(table, path, overwrite=False):
    """Write an astropy table atomically; the format follows the suffix.

    ``.ecsv`` is written as ECSV, ``.fits`` as FITS, anything else as CSV.

    Parameters
    ----------
    table : astropy.table.Table
    path : path-like
    overwrite : bool
    """
    path = Path(path)
    fmt = {".ecsv": "ascii.ecsv", ".fits": "fits", ".csv": "ascii.csv"}.get(
        path.suffix.lower(), "ascii.ecsv"
    )
    with atomic_write(path, overwrite) as tmp:
        table.write(tmp, format=fmt, overwrite=True)


def sha256(path):
    """SHA-256 hex digest of a file's bytes (for provenance)."""
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def read_toml(path, what, error=None):
    """Read a TOML file, refusing a missing or malformed one in one line.

    Parameters
    ----------
    path : path-like
    what : str
        What the file is, for the message (e.g. "relations file").
    error : type, optional
        The :class:`~ptaconstrain.errors.InputError` subclass to raise
        (default InputError).

    Returns
    -------
    dict

    Raises
    ------
    InputError (or ``error``)
        Naming the file, the problem and the fix.
    """
    import tomllib

    from .errors import InputError

    error = error or InputError
    path = Path(path)
    if not path.is_file():
        raise error(f"{what} {path} not found: check the path")
    try:
        with open(path, "rb") as fh:
            return tomllib.load(fh)
    except tomllib.TOMLDecodeError as err:
        first = (str(err).strip().splitlines() or ["syntax error"])[0]
        raise error(f"{path.name} is not valid TOML ({first}): fix the {what}") from err
    except (OSError, UnicodeDecodeError) as err:
        raise error(f"{what} {path}: cannot read it ({err}); check the file") from err
