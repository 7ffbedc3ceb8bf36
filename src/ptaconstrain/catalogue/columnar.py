"""Columnar catalogues: Parquet files, directories of Parquet, HATS catalogues.

Needs the optional extra ``ptaconstrain[scale]`` (pyarrow; lsdb for HATS),
imported inside the functions here so that the base install never loads them.

* A Parquet file, or a directory of Parquet files (read as one dataset by
  ``pyarrow.dataset``), is streamed in record batches of about ``chunk_size``
  rows: row group by row group, never whole.
* A HATS catalogue (a directory with ``hats.properties`` or ``properties`` and
  a ``dataset/`` of HEALPix-partitioned Parquet, or a collection with
  ``collection.properties``) is opened with :func:`lsdb.open_catalog`; its
  partitions are read one at a time, in the catalogue's pixel order.

Every piece becomes an :class:`astropy.table.Table` (:func:`arrow_to_table`):
numbers stay numbers, text stays text, nulls become masked entries, so the
same column mapping and row policy (:mod:`~ptaconstrain.catalogue.rows`) apply
unchanged.  Units: Parquet written by astropy (``Table.write(..., format="parquet")``)
keeps each column's unit in the file's metadata (key ``table_meta_yaml``, the
ECSV header); those units are read (:func:`parquet_units`) and honoured under
the same rule as an ECSV file's.  Other Parquet carries no units; declare them
in the column mapping (``[units]``) when they are not the fields' defaults.
Missing values: a null, or, for a masked column astropy wrote (a value column
``X`` beside a boolean ``X.mask``, :data:`MASK_SUFFIX`), a true mask entry.
"""

from pathlib import Path

import numpy as np

from .._files import first_line
from .columns import CatalogError

__all__ = [
    "columnar_kind",
    "require_scale",
    "arrow_to_table",
    "parquet_units",
    "frame_to_table",
    "ParquetSource",
    "HatsSource",
    "open_columnar",
    "with_masks",
    "MASK_SUFFIX",
]

#: astropy writes a masked column X to Parquet as X plus a boolean column X.mask
MASK_SUFFIX = ".mask"

_PARQUET_SUFFIXES = (".parquet", ".parq", ".pq")
_HATS_MARKERS = ("hats.properties", "properties", "collection.properties")


def require_scale(what, modules=("pyarrow",)):
    """Import the scale extra's ``modules``, or raise one line saying how to install it.

    Parameters
    ----------
    what : str
        What needs them (named in the message), e.g. "reading Parquet".
    modules : sequence of str

    Raises
    ------
    CatalogError
        When one of them is not installed.
    """
    import importlib

    for name in modules:
        try:
            importlib.import_module(name)
        except ImportError as err:
            raise CatalogError(
                f"{what} needs the optional package {name}: install the scale extra, "
                "pip install 'ptaconstrain[scale]'"
            ) from err


def columnar_kind(path):
    """'hats', 'parquet' or None: how a path is read (no file is opened).

    Parameters
    ----------
    path : path-like

    Returns
    -------
    str or None
    """
    path = Path(path)
    if path.is_dir():
        if any((path / m).is_file() for m in _HATS_MARKERS) and (
            (path / "dataset").is_dir() or (path / "collection.properties").is_file()
        ):
            return "hats"
        if any(p.suffix.lower() in _PARQUET_SUFFIXES for p in path.rglob("*")):
            return "parquet"
        return None
    if path.suffix.lower() in _PARQUET_SUFFIXES:
        return "parquet"
    return None


def parquet_units(schema):
    """Column units stored by astropy in a Parquet schema's metadata (name -> unit text).

    astropy writes the table's ECSV-style header as YAML under the metadata key
    ``table_meta_yaml``; columns without a unit, and files written by other
    tools, give nothing.

    Parameters
    ----------
    schema : pyarrow.Schema

    Returns
    -------
    dict

    Examples
    --------
    >>> import tempfile
    >>> import astropy.units as u
    >>> import pyarrow.parquet as pq
    >>> from astropy.table import QTable
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     QTable({"d": [1.0, 2.0] * u.kpc, "n": ["a", "b"]}).write(f"{tmp}/t.parquet")
    ...     parquet_units(pq.read_schema(f"{tmp}/t.parquet"))
    {'d': 'kpc'}
    """
    text = (getattr(schema, "metadata", None) or {}).get(b"table_meta_yaml")
    if not text:
        return {}
    from astropy.table.meta import get_header_from_yaml

    fix = "rewrite the file (e.g. with astropy) or drop that metadata"
    try:
        header = get_header_from_yaml(text.decode("utf-8").splitlines())
    except Exception as err:  # astropy raises its own YAML errors
        raise CatalogError(
            f"the Parquet metadata 'table_meta_yaml' cannot be read ({first_line(err)}): {fix}"
        ) from err
    columns = header.get("datatype", []) if isinstance(header, dict) else None
    if not isinstance(columns, list) or not all(
        isinstance(c, dict) and "name" in c for c in columns
    ):
        raise CatalogError(
            f"the Parquet metadata 'table_meta_yaml' is not an astropy table header: {fix}"
        )
    return {str(c["name"]): str(c["unit"]) for c in columns if c.get("unit")}


def with_masks(columns, available):
    """``columns`` and, after them, astropy's ``<name>.mask`` of each one in ``available``.

    Parameters
    ----------
    columns : list of str
        Columns to read.
    available : list of str
        Every column of the source.

    Returns
    -------
    list of str

    Examples
    --------
    >>> with_masks(["mass", "ra"], ["ra", "mass", "mass.mask"])
    ['mass', 'ra', 'mass.mask']
    """
    have = set(available)
    return list(columns) + [c + MASK_SUFFIX for c in columns if c + MASK_SUFFIX in have]


def arrow_to_table(data, units=None):
    """A pyarrow Table or RecordBatch as an astropy Table (nulls masked, units kept).

    Numeric and boolean columns become float/int/bool arrays (an integer column
    with nulls becomes float with masked entries), text becomes str; any other
    type (lists, structs, dates) is kept as objects, which the row policy refuses
    as not numeric where a number is needed.  A boolean ``X.mask`` beside a
    column ``X`` (astropy's layout of a masked column) masks ``X`` where true and
    is not a column of its own.

    Parameters
    ----------
    data : pyarrow.Table or pyarrow.RecordBatch
    units : dict, optional
        name -> unit of the columns (default: :func:`parquet_units` of the data's schema).

    Returns
    -------
    astropy.table.Table
    """
    import pyarrow as pa
    from astropy.table import MaskedColumn, Table

    units = parquet_units(data.schema) if units is None else units
    names = data.schema.names
    flags = {
        name[: -len(MASK_SUFFIX)]: col
        for name, col in zip(names, data.columns, strict=True)
        if name.endswith(MASK_SUFFIX)
        and name[: -len(MASK_SUFFIX)] in names
        and pa.types.is_boolean(col.type)
    }
    out = Table()
    for name, col in zip(names, data.columns, strict=True):
        if name.endswith(MASK_SUFFIX) and name[: -len(MASK_SUFFIX)] in flags:
            continue  # the mask of another column
        if isinstance(col, pa.ChunkedArray):
            col = col.combine_chunks()
        mask = np.asarray(col.is_null(), dtype=bool)
        if name in flags:
            mask |= np.asarray(flags[name].fill_null(False).to_numpy(zero_copy_only=False))
        kind = col.type
        if pa.types.is_dictionary(kind):
            col, kind = col.dictionary_decode(), kind.value_type
        if pa.types.is_floating(kind) or pa.types.is_integer(kind) or pa.types.is_boolean(kind):
            values = col.to_numpy(zero_copy_only=False)
            if mask.any() and values.dtype.kind in "iub":
                values = col.cast(pa.float64()).to_numpy(zero_copy_only=False)
        elif pa.types.is_string(kind) or pa.types.is_large_string(kind):
            values = np.asarray(col.fill_null("").to_numpy(zero_copy_only=False), dtype=str)
        else:
            values = col.to_numpy(zero_copy_only=False)
        out[name] = MaskedColumn(values, mask=mask) if mask.any() else values
        if name in units:  # as astropy's own reader: an unknown unit stays unrecognised
            out[name].unit = units[name]
    return out


def frame_to_table(frame, units=None):
    """A pandas DataFrame (e.g. a Dask or LSDB partition) as an astropy Table.

    The index is dropped; columns go through :func:`arrow_to_table`, so a partition
    is read exactly as the same rows in a Parquet file would be.  ``units``
    (name -> unit) are those of the catalogue's schema (a frame keeps none).
    """
    import pyarrow as pa

    frame = frame.reset_index(drop=True)
    return arrow_to_table(pa.Table.from_pandas(frame, preserve_index=False), units or {})


class ParquetSource:
    """A Parquet file or directory of Parquet files, streamed in record batches.

    Parameters
    ----------
    path : path-like

    Attributes
    ----------
    colnames : list of str
    units : dict
        Column units stored by astropy in the metadata (:func:`parquet_units`).
    n_rows : int
        From the files' metadata.
    """

    def __init__(self, path):
        require_scale("reading Parquet")
        import pyarrow.dataset as ds

        self.path = Path(path)
        try:
            self._dataset = ds.dataset(str(self.path), format="parquet")
            self.colnames = list(self._dataset.schema.names)
            self.units = parquet_units(self._dataset.schema)
            self.n_rows = int(self._dataset.count_rows())
        except (OSError, ValueError) as err:  # pyarrow's ArrowInvalid is a ValueError
            raise CatalogError(
                f"{self.path.name} is not a readable Parquet dataset "
                f"({first_line(err)}): fix or rewrite the file"
            ) from err

    def chunks(self, chunk_size=100_000, columns=None):
        """Yield (first_row, Table) pieces of at most ``chunk_size`` rows."""
        start = 0
        try:
            for batch in self._dataset.to_batches(columns=columns, batch_size=int(chunk_size)):
                if batch.num_rows:
                    yield start, arrow_to_table(batch, self.units)
                    start += batch.num_rows
        except (OSError, ValueError) as err:
            raise CatalogError(
                f"{self.path.name}: cannot read rows ({first_line(err)}): fix or rewrite the file"
            ) from err


class HatsSource:
    """A HATS catalogue opened with lsdb, read one HEALPix partition at a time.

    Parameters
    ----------
    path : path-like

    Attributes
    ----------
    colnames : list of str
    units : dict
        Column units stored by astropy in the metadata (:func:`parquet_units`).
    n_rows : int
        From the catalogue's properties.
    catalog : lsdb.Catalog
    """

    def __init__(self, path):
        require_scale("reading a HATS catalogue", ("pyarrow", "lsdb"))
        import lsdb

        self.path = Path(path)
        try:
            self.catalog = lsdb.open_catalog(self.path)
        except Exception as err:  # lsdb/hats raise many types for a damaged catalogue
            raise CatalogError(
                f"{self.path.name} is not a readable HATS catalogue "
                f"({first_line(err)}): check the directory"
            ) from err
        self.colnames = [str(c) for c in self.catalog.columns]
        self.units = parquet_units(getattr(self.catalog.hc_structure, "schema", None))
        total = self.catalog.hc_structure.catalog_info.total_rows
        self.n_rows = int(total) if total is not None else 0

    def chunks(self, chunk_size=100_000, columns=None):
        """Yield (first_row, Table) pieces: each partition in pixel order, in slices."""
        chunk_size = max(int(chunk_size), 1)
        start = 0
        for part in self.catalog.to_delayed():
            frame = part.compute(scheduler="synchronous")
            if columns is not None:
                frame = frame[list(columns)]
            for a in range(0, len(frame), chunk_size):
                piece = frame_to_table(frame.iloc[a : a + chunk_size], self.units)
                yield start, piece
                start += len(piece)


def open_columnar(path, kind=None):
    """A :class:`ParquetSource` or :class:`HatsSource` for ``path`` (kind by default from it)."""
    kind = kind or columnar_kind(path)
    if kind == "hats":
        return HatsSource(path)
    if kind == "parquet":
        return ParquetSource(path)
    raise CatalogError(
        f"{Path(path).name} is neither Parquet nor a HATS catalogue: give a "
        ".parquet file, a directory of them, or a HATS catalogue directory"
    )
