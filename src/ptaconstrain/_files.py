"""File helpers: atomic writes that never replace a user's file unasked, checksums,
reading tables and TOML files (one suffix -> format map, one-line errors).

Every file the project writes goes through :func:`atomic_write`: the content
is written to a temporary file and given its name only when complete, so a
failure leaves no partial file behind.  A command that writes several files
opens an :func:`output_set` first: every file is then staged in a private
directory and the whole set is published only when all of it was written, so
a failure (a full disk included) leaves neither a partial set nor a touched
earlier one.
"""

import contextlib
import contextvars
import hashlib
import os
import shutil
import tempfile
from pathlib import Path

__all__ = [
    "OutputExistsError",
    "OutputBusyError",
    "check_new",
    "atomic_write",
    "output_set",
    "OutputSet",
    "write_table",
    "sha256",
    "read_toml",
    "TABLE_FORMATS",
    "table_format",
    "read_table",
    "first_line",
    "check_header",
    "MAX_YAML_HEADER_BYTES",
    "MAX_YAML_NODES",
    "MAX_FITS_HEADER_CARDS",
    "MAX_CONFIG_BYTES",
]

#: largest YAML header of an ECSV file read (bytes); astropy writes a few kB
MAX_YAML_HEADER_BYTES = 1_000_000
#: largest number of YAML nodes a header may expand to (aliases counted as copies)
MAX_YAML_NODES = 100_000
#: most cards in one FITS header (999 columns of 8 keywords each fit)
MAX_FITS_HEADER_CARDS = 20_000
#: largest TOML configuration file read (bytes)
MAX_CONFIG_BYTES = 1_000_000


class OutputExistsError(FileExistsError):
    """An output file already exists and overwriting was not asked for."""


class OutputBusyError(OutputExistsError):
    """Another run is writing the same output set into the same directory."""


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
    active = _set_for(path)
    if active is not None:
        with active.stage(path) as tmp:
            yield tmp
        return
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


_ACTIVE_SETS = contextvars.ContextVar("ptaconstrain_output_sets", default=())


def _set_for(path):
    """The open output set whose directory holds ``path``, or None."""
    parent = os.path.realpath(Path(path).parent)
    for active in _ACTIVE_SETS.get():
        if active.real_dir == parent:
            return active
    return None


class OutputSet:
    """The files one command writes into one directory, published all or none.

    Made by :func:`output_set`; while it is open, :func:`atomic_write` (and so
    every table, figure and map writer of the package) stages each file of the
    directory in a private temporary directory inside it.

    Attributes
    ----------
    directory : pathlib.Path
        Where the files are published.
    product : str
        Name of the set (e.g. ``"ranking"`` or a host's file stem); its lock,
        staging directory and record of files are named after it.
    scratch : pathlib.Path
        A private directory for temporary files of the command (removed at the end).
    """

    def __init__(self, directory, product, overwrite, staging, earlier=(), record=False):
        self._earlier = set(earlier)
        self._record = record
        self.directory = Path(directory)
        self.real_dir = os.path.realpath(self.directory)
        self.product = product
        self.overwrite = overwrite
        self._staging = Path(staging)
        self._files = self._staging / "files"
        self.scratch = self._staging / "scratch"
        self._files.mkdir()
        self.scratch.mkdir()

    @property
    def record(self):
        """Path of the hidden file listing the files of the published set."""
        return self.directory / f".{self.product}.files"

    @contextlib.contextmanager
    def stage(self, path):
        """Yield a temporary path that becomes ``path``'s staged copy on success."""
        path = Path(path)
        staged = self._files / path.name
        if os.path.lexists(staged):
            raise OutputExistsError(f"{path}: written twice by one command (a name collision)")
        fd, tmp = tempfile.mkstemp(prefix=".part-", suffix=path.suffix, dir=self._files)
        os.close(fd)
        tmp = Path(tmp)
        try:
            try:
                yield tmp
            except OSError as err:  # name the output, not the hidden staging file
                if err.filename and str(err.filename).startswith(str(self._staging)):
                    raise OSError(err.errno, err.strerror, str(path)) from err
                raise
            os.chmod(tmp, 0o666 & ~_umask())
            _link_new(tmp, staged)  # exclusive: two writers of one name cannot both succeed
        finally:
            if os.path.lexists(tmp):
                tmp.unlink()

    def staged_names(self):
        """Names of the files staged so far (by this process or its forked workers)."""
        return sorted(p.name for p in self._files.iterdir() if not p.name.startswith(".part-"))

    @contextlib.contextmanager
    def stage_directory(self, path):
        """Yield a new (not yet existing) path where a directory of outputs is built.

        On success the directory becomes ``path``'s staged copy and is published
        with the rest of the set (a directory is moved into place, not linked).
        """
        path = Path(path)
        staged = self._files / path.name
        if os.path.lexists(staged):
            raise OutputExistsError(f"{path}: written twice by one command (a name collision)")
        holder = Path(tempfile.mkdtemp(prefix=".part-", dir=self._files))
        try:
            yield holder / path.name
            os.rename(holder / path.name, staged)
        finally:
            shutil.rmtree(holder, ignore_errors=True)

    def publish(self):
        """Give every staged file its name, all or none (called when the command succeeded)."""
        names = self.staged_names()
        published = list(names)
        if self._record:
            (self._files / self.record.name).write_text("".join(f"{n}\n" for n in names))
            names.append(self.record.name)
        earlier = {
            n
            for n in _recorded_names(self.record) | self._earlier | set(names)
            if os.path.lexists(self.directory / n)
        }
        if earlier and not self.overwrite:
            first = sorted(earlier - {self.record.name}) or [self.record.name]
            raise OutputExistsError(
                f"{self.directory / first[0]} already exists (an earlier "
                "set): choose another --out or pass --overwrite"
            )
        old = self._staging / "old"
        old.mkdir()
        moved, linked = [], []
        try:
            for name in sorted(earlier):  # the whole earlier set leaves, so none of it survives
                if os.path.lexists(self.directory / name):
                    os.rename(self.directory / name, old / name)
                    moved.append(name)
            for name in names:
                _link_new(self._files / name, self.directory / name)
                linked.append(name)
        except OSError as err:
            for name in linked:
                if (self.directory / name).is_dir() and not (self.directory / name).is_symlink():
                    os.rename(self.directory / name, self._files / name)  # a staged directory
                else:
                    (self.directory / name).unlink()
            for name in moved:
                with contextlib.suppress(OSError):
                    os.link(old / name, self.directory / name)
            if isinstance(err, FileExistsError):
                raise OutputExistsError(
                    f"{err.filename or self.directory} appeared while writing: nothing was replaced"
                ) from None
            raise
        return [self.directory / n for n in published]


def _link_new(src, dst):
    """Give ``src``'s file the name ``dst`` too, failing if ``dst`` exists (atomic).

    Where the file system has no hard links, the check-then-rename fallback
    moves ``src`` instead.
    """
    try:
        os.link(src, dst)
    except FileExistsError:
        raise
    except OSError as err:
        import errno

        if err.errno not in (errno.EPERM, errno.ENOTSUP, errno.EOPNOTSUPP, errno.ENOSYS):
            raise
        if os.path.lexists(dst):
            raise FileExistsError(errno.EEXIST, "file exists", str(dst)) from None
        os.replace(src, dst)


def _recorded_names(record):
    """Names listed in an earlier set's record (none if there is no record)."""
    try:
        text = Path(record).read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError):
        return set()
    names = {line.strip() for line in text.splitlines()}
    # only plain names of this directory: a tampered record cannot reach elsewhere
    names = {n for n in names if n and "/" not in n and "\\" not in n and n not in (".", "..")}
    return names | {Path(record).name}


def _lock(path, product):
    """Take the exclusive lock of ``path`` (a file in the output directory), or refuse."""
    import fcntl

    while True:
        fd = os.open(path, os.O_RDWR | os.O_CREAT, 0o666 & ~_umask())
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            os.close(fd)
            raise OutputBusyError(
                f"{Path(path).parent}: another run is writing {product} "
                "there now; wait for it or choose another --out"
            ) from None
        mine = os.fstat(fd)
        try:
            now = os.stat(path)
        except FileNotFoundError:
            now = None
        if now is not None and (now.st_dev, now.st_ino) == (mine.st_dev, mine.st_ino):
            return fd
        os.close(fd)  # the previous holder removed it meanwhile: take the new one


@contextlib.contextmanager
def output_set(directory, product, overwrite=False, earlier=(), record=False):
    """Stage every file a command writes into ``directory``; publish all of them or none.

    While the context is open, each :func:`atomic_write` into ``directory``
    (tables, figures, maps) goes to a private staging directory
    ``.<product>.staging-XXXX`` inside it.  When the block succeeds the staged
    files get their names by hard link, which never replaces a file that
    appeared meanwhile (with ``record``, a hidden file ``.<product>.files``
    lists them, for a set whose names vary from run to run).  On any
    failure (a full disk included) the staging directory is removed: nothing
    new remains and nothing old was touched.

    - A lock file ``.<product>.lock`` in ``directory`` is held throughout: a
      second run of the same product into the same directory is refused
      before it writes anything (:class:`OutputBusyError`).
    - Stale staging directories of the same product (left by a killed run)
      are removed at the start.
    - With ``overwrite`` the whole earlier set of the product (the files its
      record lists, and any file of the new set's names) is replaced, so no
      file of an earlier run survives beside the new ones; without it, any of
      them existing is refused (:class:`OutputExistsError`).

    An output set opened inside another one for the same directory joins it.

    Parameters
    ----------
    directory : path-like
        The output directory (created if needed; removed again on failure if
        it was created here and stayed empty).
    product : str
        Name of the set, file-name safe (e.g. ``"ranking"``).
    overwrite : bool
    earlier : iterable of str
        Names that belong to the product's earlier set even if no record lists
        them (e.g. every figure format of a host's stem).
    record : bool
        Also publish the record ``.<product>.files`` of the set's names (an
        earlier record is always honoured).

    Yields
    ------
    OutputSet
        Its :meth:`~OutputSet.publish` runs when the block ends without error.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> d = pathlib.Path(tempfile.mkdtemp())
    >>> with output_set(d, "example", record=True) as s:
    ...     with atomic_write(d / "a.txt") as tmp:
    ...         _ = tmp.write_text("a")
    ...     (d / "a.txt").exists()
    False
    >>> sorted(p.name for p in d.iterdir())
    ['.example.files', 'a.txt']
    """
    directory = Path(directory)
    for active in _ACTIVE_SETS.get():
        if active.real_dir == os.path.realpath(directory):
            yield active
            return
    created = not os.path.lexists(directory)
    directory.mkdir(parents=True, exist_ok=True)
    lock_path = directory / f".{product}.lock"
    fd = None
    try:
        fd = _lock(lock_path, product)
        for stale in directory.glob(f".{product}.staging-*"):
            shutil.rmtree(stale, ignore_errors=True)
        staging = tempfile.mkdtemp(prefix=f".{product}.staging-", dir=directory)
        try:
            oset = OutputSet(directory, product, overwrite, staging, earlier, record)
            token = _ACTIVE_SETS.set(_ACTIVE_SETS.get() + (oset,))
            try:
                yield oset
            finally:
                _ACTIVE_SETS.reset(token)
            oset.publish()
        finally:
            shutil.rmtree(staging, ignore_errors=True)
    finally:
        if fd is not None:
            with contextlib.suppress(OSError):
                os.unlink(lock_path)
            os.close(fd)
        if created:
            with contextlib.suppress(OSError):
                directory.rmdir()  # only if it stayed empty


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
    from astropy.table import QTable, Table

    path = Path(path)
    fmt = table_format(path)
    fmt = fmt if fmt in ("ascii.ecsv", "fits", "ascii.csv") else "ascii.ecsv"
    if isinstance(table, QTable) and fmt != "fits":
        # Quantity columns as plain columns with units: the same ECSV column lines (a
        # QTable reads them back as Quantity), without a serialised-class block per
        # column in the header, whose YAML cost ~20% of the writing time (measured)
        table = Table(table, copy=False)
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
    if path.stat().st_size > MAX_CONFIG_BYTES:
        raise error(
            f"{path.name} is larger than {MAX_CONFIG_BYTES // 1000} kB, too large for "
            f"a {what}: check that it is the right file"
        )
    try:
        with open(path, "rb") as fh:
            return tomllib.load(fh)
    except tomllib.TOMLDecodeError as err:
        first = (str(err).strip().splitlines() or ["syntax error"])[0]
        raise error(f"{path.name} is not valid TOML ({first}): fix the {what}") from err
    except (OSError, UnicodeDecodeError) as err:
        raise error(f"{what} {path}: cannot read it ({err}); check the file") from err
    except RecursionError as err:
        raise error(f"{path.name} is nested too deeply to be a {what}: check the file") from err


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
    check_header(path, what, error, fmt)
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", AstropyWarning)
            table = Table.read(path, format=fmt, **kwargs) if fmt else Table.read(path, **kwargs)
    except Exception as err:  # astropy raises many types for a malformed file
        raise error(
            f"{path.name} is not a readable {what} ({first_line(err)}){': ' + hint if hint else ''}"
        ) from err
    for w in caught:
        if issubclass(w.category, AstropyWarning):
            warnings.warn(
                f"{path.name}: {first_line(w.message)}", PtaconstrainWarning, stacklevel=2
            )
        else:
            warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    return table


# ------------------------------------------------------------------ header limits
def check_header(path, what, error=None, format=None):
    """Refuse a table file whose header is too large (or a YAML bomb) before parsing it.

    ECSV: the YAML header may hold at most :data:`MAX_YAML_HEADER_BYTES` and
    expand to at most :data:`MAX_YAML_NODES` nodes, aliases counted as the
    copies they stand for (a few kB of nested aliases can stand for 10^9
    nodes).  FITS: each of the first HDUs' headers may hold at most
    :data:`MAX_FITS_HEADER_CARDS` cards.  Other formats are left to their readers.

    Parameters
    ----------
    path : path-like
    what : str
        What the file is, for the message.
    error : type, optional
        The InputError subclass to raise.
    format : str, optional
        astropy format name; default from the suffix, and ECSV is also
        recognised by its first line.

    Raises
    ------
    InputError (or ``error``)
    """
    from .errors import InputError

    error = error or InputError
    path = Path(path)
    fmt = format or table_format(path)
    with open(path, "rb") as fh:
        start = fh.read(80)
    if fmt == "ascii.ecsv" or start.startswith(b"# %ECSV"):
        problem = _yaml_header_problem(path)
    elif fmt == "fits" or start.startswith(b"SIMPLE  ="):
        problem = _fits_header_problem(path)
    else:
        problem = None
    if problem:
        raise error(f"{path.name}: {problem}, so the {what} is not read")


def _yaml_header_problem(path):
    lines, size = [], 0
    with open(path, "rb") as fh:
        while True:
            line = fh.readline(MAX_YAML_HEADER_BYTES + 1)
            if not line.startswith(b"#"):
                break
            size += len(line)
            if size > MAX_YAML_HEADER_BYTES:
                return (
                    f"its ECSV header is larger than {MAX_YAML_HEADER_BYTES // 1000} kB (the limit)"
                )
            lines.append(line)
    text = b"".join(lines).decode("utf-8", errors="replace")
    body = [ln[2:] if ln.startswith("# ") else ln[1:] for ln in text.splitlines()]
    body = [ln for ln in body if not ln.startswith("%ECSV")]
    import yaml

    try:
        root = yaml.compose("\n".join(body), Loader=yaml.SafeLoader)
    except yaml.YAMLError:
        return None  # malformed: astropy's reader names the problem
    if root is not None and _yaml_nodes(root, {}) > MAX_YAML_NODES:
        return (
            f"its ECSV header expands to more than {MAX_YAML_NODES:,} YAML nodes (nested aliases)"
        )
    return None


def _yaml_nodes(node, memo):
    """Nodes of a composed YAML graph with every alias expanded (memoised by node)."""
    import yaml

    key = id(node)
    if key in memo:
        return memo[key]
    memo[key] = MAX_YAML_NODES + 1  # a cycle counts as too many
    if isinstance(node, yaml.MappingNode):
        n = 1 + sum(_yaml_nodes(k, memo) + _yaml_nodes(v, memo) for k, v in node.value)
    elif isinstance(node, yaml.SequenceNode):
        n = 1 + sum(_yaml_nodes(v, memo) for v in node.value)
    else:
        n = 1
    memo[key] = n = min(n, MAX_YAML_NODES + 1)
    return n


def _fits_header_problem(path, max_hdus=4):
    """Cards of the first HDUs' headers beyond the limit, or a header without END."""
    import gzip

    opener = gzip.open if str(path).lower().endswith(".gz") else open
    card = 80
    with opener(path, "rb") as fh:
        for _ in range(max_hdus):
            cards, values = 0, {}
            while True:
                block = fh.read(2880)
                if not block:
                    return None  # truncated: astropy says so
                for i in range(0, len(block), card):
                    word = block[i : i + 8].decode("ascii", "replace").strip()
                    cards += 1
                    if word in ("BITPIX", "NAXIS", "PCOUNT", "GCOUNT") or (
                        word.startswith("NAXIS") and word[5:].isdigit()
                    ):
                        try:
                            values[word] = int(block[i + 10 : i + 80].split(b"/")[0].strip())
                        except ValueError:
                            return None  # astropy names the bad card
                    if word == "END":
                        break
                else:
                    if cards > MAX_FITS_HEADER_CARDS:
                        return (
                            f"a FITS header holds more than {MAX_FITS_HEADER_CARDS:,} "
                            "cards (the limit)"
                        )
                    continue
                break
            naxis = values.get("NAXIS", 0)
            size = 0
            if naxis:
                size = abs(values.get("BITPIX", 8)) // 8 * values.get("GCOUNT", 1)
                n = 1
                for k in range(1, naxis + 1):
                    n *= values.get(f"NAXIS{k}", 0)
                size *= n + values.get("PCOUNT", 0)
            if size:
                fh.seek(size + (-size % 2880), 1)
    return None
