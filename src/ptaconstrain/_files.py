"""File helpers: atomic writes that never replace a user's file unasked, checksums,
reading tables and TOML files (one suffix -> format map, one-line errors).

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
           "read_toml", "TABLE_FORMATS", "table_format", "read_table", "first_line"]


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
    existing = [str(p) for p in paths if os.path.lexists(p)]  # a dangling link counts too
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
        os.chmod(tmp, 0o666 & ~_umask())  # mkstemp makes 0600; outputs are for sharing
        if overwrite:
            os.replace(tmp, path)
        else:
            _publish_new(tmp, path)
    finally:
        if tmp.exists():
            tmp.unlink()


def _publish_new(tmp, path):
    """Give ``tmp`` the name ``path`` only if no file of that name exists, atomically.

    A hard link fails if the name exists, so two runs racing for the same name
    cannot both succeed (checking first and renaming after can).  Where the file
    system has no hard links, the check-then-rename fallback is used.
    """
    try:
        os.link(tmp, path)
    except FileExistsError:
        raise OutputExistsError(f"{path} appeared while writing: not replaced") from None
    except OSError:  # no hard links here (some network or FUSE file systems)
        if os.path.lexists(path):
            raise OutputExistsError(f"{path} appeared while writing: not replaced") from None
        os.replace(tmp, path)


def _umask():
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_table(table, path, overwrite=False):
    """Write an astropy table atomically; the format follows the suffix.

    ``.csv`` is written as CSV, ``.fits`` as FITS, anything else as ECSV.

    Parameters
    ----------
    table : astropy.table.Table
    path : path-like
    overwrite : bool
    """
    path = Path(path)
    fmt = table_format(path)
    fmt = fmt if fmt in ("ascii.ecsv", "fits", "ascii.csv") else "ascii.ecsv"
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


#: file suffix -> astropy table format, for every table the package reads or writes
TABLE_FORMATS = {
    ".ecsv": "ascii.ecsv",
    ".csv": "ascii.csv",
    ".txt": "ascii.csv",
    ".fits": "fits",
    ".fit": "fits",
    ".fits.gz": "fits",
    ".vot": "votable",
    ".votable": "votable",
    ".xml": "votable",
}


def table_format(path):
    """astropy format name of a table file from its suffix, or None if unknown.

    Parameters
    ----------
    path : path-like

    Returns
    -------
    str or None

    Examples
    --------
    >>> table_format("galaxies.fits.gz"), table_format("limit.ECSV")
    ('fits', 'ascii.ecsv')
    """
    path = Path(path)
    suffix = path.suffix.lower()
    if suffix == ".gz":
        suffix = "".join(path.suffixes[-2:]).lower()
    return TABLE_FORMATS.get(suffix)


def first_line(err):
    """The first line of an exception's message (its type name if it has none)."""
    text = str(err).strip()
    return text.splitlines()[0] if text else type(err).__name__


def read_table(path, what, error=None, format=None, hint="", **kwargs):
    """Read a table file, in one line on failure, with astropy's warnings kept.

    astropy's warnings while reading (an unrecognised unit string, say) are
    re-issued as :class:`~ptaconstrain.errors.PtaconstrainWarning` naming the
    file, so the command line shows them as one ``Note:`` line each; nothing is
    silenced.

    Parameters
    ----------
    path : path-like
    what : str
        What the file is, for messages (e.g. "pulsar list").
    error : type, optional
        The :class:`~ptaconstrain.errors.InputError` subclass to raise.
    format : str, optional
        astropy format; default from the suffix (:func:`table_format`), else
        astropy's own guess.
    hint : str
        The fix to name when the file cannot be read (e.g. "write it as ECSV").
    **kwargs
        Passed to ``Table.read``.

    Returns
    -------
    astropy.table.Table

    Raises
    ------
    InputError (or ``error``)
        For a missing or unreadable file.
    """
    import warnings

    from astropy.table import Table
    from astropy.utils.exceptions import AstropyWarning

    from .errors import InputError, PtaconstrainWarning

    error = error or InputError
    path = Path(path)
    if not path.is_file():
        raise error(f"{what} {path} not found: check the path")
    fmt = format or table_format(path)
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", AstropyWarning)
            table = Table.read(path, format=fmt, **kwargs) if fmt else Table.read(path, **kwargs)
    except Exception as err:  # astropy raises many types for a malformed file
        raise error(f"{path.name} is not a readable {what} ({first_line(err)})"
                    f"{': ' + hint if hint else ''}") from err
    for w in caught:
        if issubclass(w.category, AstropyWarning):
            warnings.warn(f"{path.name}: {first_line(w.message)}", PtaconstrainWarning,
                          stacklevel=2)
        else:
            warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    return table
