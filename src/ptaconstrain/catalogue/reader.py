"""Reading a galaxy catalogue: whole files, streamed CSV and Parquet, HATS, in-memory tables.

A catalogue is anything astropy.table reads (ECSV, CSV, FITS, VOTable), a
Parquet file or directory of Parquet files, a HATS catalogue
(:mod:`~ptaconstrain.catalogue.columnar`, with the ``scale`` extra) or an
in-memory Table.  Parquet is streamed by row group and HATS by partition.
CSV (and ``.txt``) files are streamed in chunks with astropy's fast reader, so
a catalogue larger than memory can be ranked; ECSV and VOTable are read whole
and FITS memory-mapped, then handed out chunk by chunk.  What the columns mean
is :mod:`ptaconstrain.catalogue.columns`; what makes a row usable is
:mod:`ptaconstrain.catalogue.rows`.
"""

from pathlib import Path

from .._files import first_line, table_format
from .columnar import columnar_kind, open_columnar
from .columns import CatalogError

__all__ = ["CatalogReader", "count_data_rows"]


def count_data_rows(path):
    """Number of data rows of a CSV file with one header line.

    Counts line ends in blocks of 4 MiB; a last line without a final newline
    is a row, blank lines at the end of the file are not.

    Parameters
    ----------
    path : path-like

    Returns
    -------
    int
    """
    path = Path(path)
    size = path.stat().st_size
    with open(path, "rb") as fh:
        ends = sum(block.count(b"\n") for block in iter(lambda: fh.read(1 << 22), b""))
        fh.seek(max(size - (1 << 16), 0))
        tail = fh.read()
    body = tail.rstrip(b"\r\n\t ")
    if not body and size <= (1 << 16):
        return 0
    lines = ends - tail[len(body) :].count(b"\n") + 1  # the last line, with or without "\n"
    return max(lines - 1, 0)


class CatalogReader:
    """Chunked access to a catalogue file or an in-memory table.

    Parameters
    ----------
    source : str, path-like or astropy.table.Table
    format : str, optional
        astropy format name; by default from the suffix (:data:`ptaconstrain._files.TABLE_FORMATS`;
        ``"csv"`` is streamed).

    Attributes
    ----------
    n_rows : int
        Number of data rows (for CSV, counted from the line ends).
    colnames : list of str
    name : str
        File name, or "<table>".
    path : pathlib.Path or None
    kind : str
        "table", "csv", "parquet" or "hats".

    Raises
    ------
    CatalogError
        For a missing or unreadable file.

    Examples
    --------
    >>> from ptaconstrain.data import path
    >>> reader = CatalogReader(path("demo_catalogue.ecsv"))   # invented galaxies
    >>> reader.n_rows, "distance" in reader.colnames
    (400, True)
    >>> [first for first, chunk in reader.chunks(chunk_size=150)]
    [0, 150, 300]
    """

    def __init__(self, source, format=None):
        from astropy.table import Table

        self.path = None
        self._table = self._columnar = None
        self.kind = "table"
        if isinstance(source, Table):
            self._table = source
            self.name = "<table>"
        elif format in (None, "parquet", "hats") and (format or columnar_kind(source)) in (
            "parquet",
            "hats",
        ):
            path = Path(source)
            if not path.exists():
                raise CatalogError(f"catalogue {path} not found: check the path")
            self.path, self.name = path, path.name
            self.kind = format or columnar_kind(path)
            self._columnar = open_columnar(path, self.kind)
            self.colnames, self.n_rows = self._columnar.colnames, self._columnar.n_rows
        else:
            path = Path(source)
            if not path.is_file():
                raise CatalogError(f"catalogue {path} not found: check the path")
            self.path, self.name = path, path.name
            fmt = format or table_format(path)
            if fmt == "ascii.csv":
                self.kind = "csv"
                self._open_csv(path)
            else:
                self._table = _read_whole(path, fmt)
        if self._table is not None:
            self.colnames = list(self._table.colnames)
            self.n_rows = len(self._table)

    @property
    def streamed(self):
        """True when the rows are read from a file chunk by chunk (CSV, Parquet, HATS)."""
        return self._table is None

    def _open_csv(self, path):
        try:
            with _open_text(path) as fh:
                head = _parse_csv(fh.readline() + fh.readline())
        except CatalogError:
            raise
        except UnicodeDecodeError as err:
            raise CatalogError(
                f"{path.name} is not UTF-8 text ({first_line(err)}): save it as UTF-8 CSV"
            ) from err
        except Exception as err:  # astropy raises many types for a malformed file
            raise CatalogError(
                f"{path.name} is not a readable CSV table ({first_line(err)}): fix the "
                "file or convert it to ECSV"
            ) from err
        self.colnames = list(head.colnames)
        self.n_rows = count_data_rows(path)
        self._bytes = path.stat().st_size

    def chunks(self, chunk_size=100_000):
        """Yield (first_row, Table) pieces of at most about ``chunk_size`` rows.

        Parameters
        ----------
        chunk_size : int

        Yields
        ------
        (int, astropy.table.Table)
            The 0-based index of the piece's first row, and the piece.
        """
        chunk_size = max(int(chunk_size), 1)
        if self._columnar is not None:
            yield from self._columnar.chunks(chunk_size)
            return
        if not self.streamed:
            for start in range(0, self.n_rows, chunk_size):
                yield start, self._table[start : start + chunk_size]
            return
        per_row = self._bytes / max(self.n_rows, 1)
        nchars = int(max(per_row * chunk_size, 1 << 16))
        try:
            start = 0
            for piece in _csv_pieces(self.path, nchars):
                yield start, piece
                start += len(piece)
        except (CatalogError, GeneratorExit):
            raise
        except UnicodeDecodeError as err:
            raise CatalogError(
                f"{self.name} is not UTF-8 text ({first_line(err)}): save it as UTF-8 CSV"
            ) from err
        except Exception as err:  # astropy raises many types for a malformed row
            raise CatalogError(
                f"{self.name}: cannot read rows ({first_line(err)}): fix the file"
            ) from err

    def __repr__(self):
        how = f"streamed {self.kind}" if self.streamed else "in memory"
        return f"CatalogReader({self.name!r}, {self.n_rows} rows, {how})"


def _read_whole(path, format):
    from .._files import read_table

    kw = {"memmap": True} if format == "fits" and not path.name.lower().endswith(".gz") else {}
    return read_table(
        path, "table", CatalogError, format=format, hint="use ECSV, CSV, FITS or VOTable", **kw
    )


def _open_text(path):
    """A CSV file as UTF-8 text (a byte-order mark is dropped); other encodings refused.

    UTF-16 (Excel's "Unicode text") is recognised by its byte-order mark and
    refused with the fix; bytes that are not UTF-8 fail when read
    (:class:`UnicodeDecodeError`, turned into one line by the callers).
    """
    path = Path(path)
    with open(path, "rb") as fh:
        start = fh.read(4)
    if start[:2] in (b"\xff\xfe", b"\xfe\xff"):
        raise CatalogError(
            f"{path.name} is UTF-16 text: save it as UTF-8 CSV (with or without a byte-order mark)"
        )
    return open(path, encoding="utf-8-sig", newline="")


def _parse_csv(text):
    """One CSV text (header line + rows) as a Table: astropy's fast reader for ASCII,
    its Python reader where the text holds other characters (accents, non-ASCII names)."""
    from astropy.io import ascii

    if text.isascii():
        return ascii.read(text, format="csv", guess=False)
    return ascii.read(text, format="csv", guess=False, fast_reader=False)


def _csv_pieces(path, nchars):
    """Tables of consecutive rows of a UTF-8 CSV file, about ``nchars`` characters each.

    Like astropy's chunk generator (each piece is the header line plus whole
    rows, parsed on its own), but the file is read as UTF-8 text.
    """
    with _open_text(path) as fh:
        header = fh.readline()
        rest = ""
        while True:
            chunk = fh.read(nchars)
            last = chunk.rfind("\n")
            if chunk and last < 0:  # no line end in this chunk: read on
                rest += chunk
                continue
            if not chunk:
                body, rest = rest, ""
            else:
                body, rest = rest + chunk[: last + 1], chunk[last + 1 :]
            if body.strip():
                yield _parse_csv(header + body)
            if not chunk:
                return
