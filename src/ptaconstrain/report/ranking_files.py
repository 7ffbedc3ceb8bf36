"""The files of a catalogue ranking: table, rejected rows, sky and cumulative figures.

:func:`rank_to_files` is what ``ptaconstrain rank`` (and the demo) call: it ranks
with :func:`ptaconstrain.catalogue.rank_catalog`, streaming the ranked rows to
disk, and writes every output, refusing existing files before anything is
written unless ``overwrite``:

* ``ranking.fits``: the whole table in rank order, written block by block
  (:func:`write_fits_blocks`; FITS costs a few microseconds per row, ECSV ~66);
* ``ranking_top.ecsv``: the best ``top`` rows, readable as text;
* ``ranking.ecsv``: the whole table as ECSV, only on request (``full_ecsv``;
  held in memory while written);
* ``ranking_rejected.ecsv`` and the figures.

With ``engine="dask"`` (a Parquet or HATS catalogue ranked on a Dask cluster,
:func:`ptaconstrain.catalogue.dask_engine.rank_catalog_dask`) the whole table is
``ranking.parquet/``, a directory of Parquet files (one per partition, each
in rank order; the ``rank`` column orders them all), instead of ``ranking.fits``;
the figures of a ranking of more than 200,000 rows are drawn from a bounded
sample of it.
"""

import json
import warnings

import numpy as np

from ..catalogue.dask_engine import PARQUET_DIR

__all__ = [
    "rank_to_files",
    "ranking_output_paths",
    "top_figure_stems",
    "top_figures",
    "write_fits_blocks",
    "fits_meta",
    "TABLE_FILE",
    "TOP_FILE",
    "FULL_ECSV_FILE",
    "REJECTED_FILE",
    "PARQUET_DIR",
]

TABLE_FILE = "ranking.fits"
TOP_FILE = "ranking_top.ecsv"
FULL_ECSV_FILE = "ranking.ecsv"
REJECTED_FILE = "ranking_rejected.ecsv"
_FITS_BLOCK = 2880


def ranking_output_paths(out_dir, formats=("png",), full_ecsv=False, engine="memory"):
    """The files ``rank`` always writes into ``out_dir`` (tables, rejected rows, figures)."""
    from pathlib import Path

    from .rankplots import FIGURE_STEMS

    out_dir = Path(out_dir)
    whole = PARQUET_DIR if engine == "dask" else TABLE_FILE
    paths = [out_dir / whole, out_dir / TOP_FILE, out_dir / REJECTED_FILE]
    if full_ecsv:
        paths.append(out_dir / FULL_ECSV_FILE)
    paths += [out_dir / f"{stem}.{fmt}" for stem in FIGURE_STEMS for fmt in formats]
    return paths


def fits_meta(meta):
    """Table meta a FITS header can hold: nested values (dicts, lists) as JSON text.

    Text is made ASCII (other characters as backslash escapes), as FITS
    headers hold ASCII only.

    Parameters
    ----------
    meta : dict

    Returns
    -------
    dict
    """
    out = {}
    for k, v in meta.items():
        if isinstance(v, (dict, list, tuple)):
            v = json.dumps(v, default=str)
        if isinstance(v, str):  # FITS headers hold ASCII only
            v = v.encode("ascii", "backslashreplace").decode("ascii")
        out[k] = v
    return out


def _hdu(table):
    from astropy.io.fits.convenience import table_to_hdu
    from astropy.io.fits.verify import VerifyWarning

    with warnings.catch_warnings():
        # keys longer than 8 characters become HIERARCH cards: expected, not news
        warnings.simplefilter("ignore", VerifyWarning)
        return table_to_hdu(table)


def write_fits_blocks(blocks, path, n_rows, meta=None, overwrite=False):
    """Write a table given as consecutive blocks into one FITS binary table, atomically.

    The header is astropy's for the first block (units, column descriptions,
    ``meta`` via :func:`fits_meta`) with NAXIS2 set to ``n_rows``; each block's
    rows are converted by astropy and appended, so no more than one block is
    in memory.  ``Table.read`` reads the file as it reads one astropy wrote.

    Parameters
    ----------
    blocks : iterable of astropy.table.Table
        Same columns and column widths in every block.
    path : path-like
    n_rows : int
        Total number of rows of all blocks.
    meta : dict, optional
    overwrite : bool
    """
    from astropy.io import fits

    from .._files import atomic_write

    blocks = iter(blocks)
    first = next(blocks)
    head = first[:0].copy()
    head.meta.clear()
    head.meta.update(fits_meta(meta or {}))
    header = _hdu(head).header
    header["NAXIS2"] = int(n_rows)
    width, written = int(header["NAXIS1"]), 0
    layout = _record_dtype(header)
    with atomic_write(path, overwrite) as tmp, open(tmp, "wb") as fh:
        fh.write(fits.PrimaryHDU().header.tostring().encode("ascii"))
        fh.write(header.tostring().encode("ascii"))
        for block in _chain(first, blocks):
            data = _block_bytes(block, layout, width)
            fh.write(data)
            written += len(block)
        if written != n_rows:
            raise ValueError(f"write_fits_blocks: {written} rows written, {n_rows} announced")
        fh.write(b"\0" * (-(width * written) % _FITS_BLOCK))


#: FITS binary-table TFORM letter -> numpy big-endian type (FITS standard 4.0, table 18)
_TFORM = {
    "L": "u1",
    "B": "u1",
    "I": ">i2",
    "J": ">i4",
    "K": ">i8",
    "E": ">f4",
    "D": ">f8",
    "A": "S",
}


def _record_dtype(header):
    """The row layout of a binary-table header as a numpy dtype, or None.

    None when a column needs astropy's conversion (scaled or offset integers,
    arrays of values, variable-length columns), so that such tables take the
    general path.
    """
    import re

    names, formats = [], []
    for i in range(1, int(header["TFIELDS"]) + 1):
        if any(f"{key}{i}" in header for key in ("TZERO", "TSCAL", "TDIM")):
            return None
        m = re.fullmatch(r"(\d*)([A-Z])", str(header[f"TFORM{i}"]).strip())
        if m is None or m.group(2) not in _TFORM:
            return None
        count = int(m.group(1) or 1)
        code = _TFORM[m.group(2)]
        if code == "S":
            code = f"S{count}"
        elif count != 1:
            return None
        names.append(header[f"TTYPE{i}"])
        formats.append(code)
    dtype = np.dtype({"names": names, "formats": formats})
    return dtype if dtype.itemsize == int(header["NAXIS1"]) else None


def _block_bytes(block, layout, width):
    """One block's rows as the bytes of a FITS binary table (big-endian records).

    Logical columns become b"T" / b"F", text columns NUL-padded bytes, as astropy
    writes them; tables without such a simple layout (masked or scaled columns,
    arrays in cells) are converted by astropy.
    """
    import io

    if (
        layout is not None
        and list(layout.names) == list(block.colnames)
        and not any(getattr(block[k], "mask", np.False_).any() for k in layout.names)
    ):
        rec = np.empty(len(block), dtype=layout)
        for key in layout.names:
            col = block[key]
            values = np.asarray(getattr(col, "value", col))
            want = layout[key]
            if want.kind == "S":
                if values.dtype.kind == "U":
                    values = np.char.encode(values, "ascii")  # as astropy encodes text
                if values.dtype.kind != "S" or values.dtype.itemsize > want.itemsize:
                    raise ValueError("write_fits_blocks: blocks differ in row layout")
            elif values.dtype == bool:
                values = np.where(values, np.uint8(ord("T")), np.uint8(ord("F")))
            elif (
                values.dtype.kind != want.kind
                or values.dtype.itemsize != want.itemsize
                or values.ndim != 1
            ):
                raise ValueError("write_fits_blocks: blocks differ in row layout")
            rec[key] = values
        return rec.tobytes()
    block = block.copy(copy_data=False)
    block.meta.clear()
    hdu = _hdu(block)
    if int(hdu.header["NAXIS1"]) != width:
        raise ValueError("write_fits_blocks: blocks differ in row layout")
    buf = io.BytesIO()
    hdu.writeto(buf)
    size = width * len(block)  # the data are the file's last padded blocks
    start = buf.getbuffer().nbytes - (size + (-size % _FITS_BLOCK))
    return bytes(buf.getbuffer()[start : start + size])


def _chain(first, rest):
    yield first
    yield from rest


def top_figure_stems(ranking, out_dir, n):
    """Stems of the per-galaxy figures of the ``n`` best targets, named as ``exclude`` names them.

    ``<safe name>_exclusion`` for an upper limit, ``<safe name>_forecast`` for a
    noise budget; two names that become the same file name get ``_rank<N>``.

    Returns
    -------
    list of (table row, pathlib.Path)
    """
    from pathlib import Path

    from .provenance import safe_name

    kind = "exclusion" if ranking.is_limit else "forecast"
    out, seen = [], set()
    for row in ranking.table[: int(n)]:  # at most 50 galaxies, not the catalogue
        stem = safe_name(row["name"])
        if stem in seen:
            stem = f"{stem}_rank{int(row['rank'])}"
        seen.add(stem)
        out.append((row, Path(out_dir) / f"{stem}_{kind}"))
    return out


def top_figures(ranking, sensitivity, stems, formats=("png",), overwrite=False, snr=5.0, span=None):
    """Exclusion (or forecast) figures of the best targets, at their median mass.

    Parameters
    ----------
    ranking : Ranking
    sensitivity : StrainCurve or PositionalSensitivity
    stems : list of (row, path)
        From :func:`top_figure_stems`.

    Returns
    -------
    list of pathlib.Path written
    """
    from ..analysis.exclusion import exclusion_map
    from ..binary.host import Host
    from .figures import exclusion_figure, save_figure

    written = []
    for row, stem in stems:
        host = Host(
            str(row["name"]),
            row["mass"],
            row["distance"],
            redshift=float(row["redshift"]),
            ra=float(row["ra"].value),
            dec=float(row["dec"].value),
        )
        result = exclusion_map(host, sensitivity, snr=snr, span=span)
        written += save_figure(exclusion_figure(result), stem, formats, overwrite)
    return written


def rank_to_files(
    catalog,
    sensitivity,
    out_dir,
    *,
    files=None,
    options=None,
    formats=("png",),
    top=20,
    exclusion_figures=0,
    overwrite=False,
    progress=None,
    full_ecsv=False,
    engine="memory",
    workers=2,
    scheduler=None,
    stage=None,
    **kwargs,
):
    """Rank a catalogue, then write the tables, the rejected rows and the figures.

    Nothing is written unless every output can be (existing files are refused
    before anything is written, unless ``overwrite``).

    Parameters
    ----------
    catalog : path-like, Table or CatalogReader
    sensitivity : StrainCurve or PositionalSensitivity
    out_dir : path-like
    files : dict, optional
        Role -> input path, recorded with checksums in the provenance.
    options : dict, optional
        Settings recorded in the provenance.
    formats : sequence of str
    top : int
        Rows of ``ranking_top.ecsv``, targets listed and labelled.
    full_ecsv : bool
        Also write the whole table as ``ranking.ecsv`` (slow and held in memory:
        for catalogues of up to ~10^5 rows).
    exclusion_figures : int
        Also draw the exclusion (forecast) figure of this many best targets.
    overwrite : bool
    progress : callable, optional
        See :func:`ptaconstrain.catalogue.rank_catalog` (memory engine).
    engine : {"memory", "dask"}
        "dask" ranks a Parquet or HATS catalogue on a Dask cluster and writes
        ``ranking.parquet/`` instead of ``ranking.fits``.
    workers, scheduler : int, str
        The Dask cluster: a local one of ``workers`` processes, or the one at
        ``scheduler`` (see :func:`ptaconstrain.catalogue.dask_engine.rank_catalog_dask`).
    stage : callable, optional
        Called with a short text as each stage of the Dask engine starts.
    **kwargs
        Passed to :func:`ptaconstrain.catalogue.rank_catalog`.

    Returns
    -------
    (Ranking, list of pathlib.Path)
    """
    from .._files import check_new, output_set

    if engine not in ("memory", "dask"):
        raise ValueError(f"rank_to_files: engine must be 'memory' or 'dask', not {engine!r}")
    if engine == "dask" and full_ecsv:
        from ..errors import InputError

        raise InputError(
            "full_ecsv: the Dask engine writes the whole ranking as "
            f"{PARQUET_DIR}; drop --full-ecsv"
        )
    paths = ranking_output_paths(out_dir, formats, full_ecsv, engine)
    check_new(paths, overwrite)
    how = {"engine": engine, "workers": workers, "scheduler": scheduler, "stage": stage}
    # every file is staged and published with the rest, or none is (see output_set)
    # (a record lists them when the per-galaxy figures make the names vary)
    with output_set(out_dir, "ranking", overwrite, record=exclusion_figures > 0) as oset:
        return _rank_and_write(
            catalog,
            sensitivity,
            out_dir,
            paths,
            oset,
            files,
            options,
            formats,
            top,
            exclusion_figures,
            overwrite,
            progress,
            full_ecsv,
            how,
            kwargs,
        )


def _rank_and_write(
    catalog,
    sensitivity,
    out_dir,
    paths,
    oset,
    files,
    options,
    formats,
    top,
    exclusion_figures,
    overwrite,
    progress,
    full_ecsv,
    engine,
    kwargs,
):
    import contextlib

    import numpy as np
    from astropy.table import vstack

    from .._files import check_new, write_table
    from ..catalogue import rank_catalog
    from .rankplots import ranking_figures

    top_rows = max(int(top), int(exclusion_figures), 1)
    with contextlib.ExitStack() as stack:
        if engine["engine"] == "dask":  # the Parquet directory is staged with the set
            from ..catalogue.dask_engine import rank_catalog_dask

            staged = stack.enter_context(oset.stage_directory(paths[0]))
            ranking = rank_catalog_dask(
                getattr(catalog, "path", catalog),
                sensitivity,
                out_dir,
                files=files,
                inputs=options,
                top_rows=top_rows,
                workers=engine["workers"],
                scheduler=engine["scheduler"],
                progress=engine["stage"],
                parquet_path=staged,
                work_dir=oset.scratch,
                **kwargs,
            )
        else:
            ranking = rank_catalog(
                catalog,
                sensitivity,
                progress=progress,
                files=files,
                inputs=options,
                stream_dir=oset.scratch,
                top_rows=top_rows,
                **kwargs,
            )
        try:
            stems = top_figure_stems(ranking, out_dir, exclusion_figures)
            check_new([f"{stem}.{fmt}" for _, stem in stems for fmt in formats], overwrite)
            meta = ranking.table.meta
            if engine["engine"] == "memory":
                write_fits_blocks(ranking.blocks(), paths[0], ranking.n_ranked, meta, overwrite)
            write_table(ranking.table[: int(top)], paths[1], overwrite)
            rejected = ranking.rejections.table()
            rejected.meta.update(
                {
                    "catalogue": ranking.meta["catalogue"],
                    "on_bad": ranking.meta["on_bad"],
                    "provenance": meta["provenance"],
                }
            )
            write_table(rejected, paths[2], overwrite)
            written = paths[:3]
            if full_ecsv:
                full = vstack(list(ranking.blocks()), metadata_conflicts="silent")
                for key in ("name", "mass_source"):
                    full[key] = np.char.decode(np.asarray(full[key]), "utf-8")
                full.meta.clear()
                full.meta.update(meta)
                write_table(full, paths[3], overwrite)
                written.append(paths[3])
            written += ranking_figures(ranking, out_dir, formats, top, overwrite)
            written += top_figures(
                ranking,
                sensitivity,
                stems,
                formats,
                overwrite,
                snr=kwargs.get("snr", 5.0),
                span=kwargs.get("span"),
            )
        finally:
            ranking.close()
    return ranking, written
