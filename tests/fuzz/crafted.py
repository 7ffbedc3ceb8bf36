"""A table of crafted bad files for every file kind the commands read (test input only).

Each maker returns the bytes of one file (or None for "a directory").  The
kinds are the files a user hands the commands: a curve (ECSV), a pulsar list
(ECSV), a catalogue (CSV), a HEALPix limit map (FITS), a column map and a
relations file (TOML).
"""

from ptaconstrain.data import path as data_file

_SHIPPED = {
    "curve": "synthetic_h0_limit.ecsv",
    "array": "demo_array.ecsv",
    "limit_map": "synthetic_h0_limit_map.fits",
}

CATALOGUE_CSV = (
    "name,ra,dec,distance,mass\nFictus A,10,10,100,2e9\nFictus B,200,-30,150,5e9\n"
    "Fictus C,300,45,80,1e10\n"
)
COLUMNS_TOML = '[columns]\nmass = "mass"\n'
RELATIONS_TOML = (
    '[[relation]]\nname = "invented"\npredictor = "velocity_dispersion"\n'
    'alpha = 8.3\nbeta = 5.6\npivot = 200.0\nunit = "km/s"\nscatter_dex = 0.3\n'
    'citation = "invented for tests"\n'
)


def valid(kind):
    """The bytes of a valid file of ``kind``."""
    if kind in _SHIPPED:
        return data_file(_SHIPPED[kind]).read_bytes()
    return {"catalogue": CATALOGUE_CSV, "columns": COLUMNS_TOML, "relations": RELATIONS_TOML}[
        kind
    ].encode("utf-8")


def _text(kind):
    return valid(kind).decode("utf-8")


def alias_bomb(kind):
    """An ECSV header whose nested YAML aliases stand for 10^9 nodes (a few kB)."""
    bomb = ["# - bomb:", "#     a: &a [lol, lol, lol, lol, lol, lol, lol, lol, lol, lol]"]
    prev = "a"
    for name in "bcdefghi":
        bomb.append(f"#     {name}: &{name} [{', '.join(['*' + prev] * 10)}]")
        prev = name
    text = _text(kind)
    marker = "# meta: !!omap\n"
    return text.replace(marker, marker + "\n".join(bomb) + "\n", 1).encode()


def enormous_ecsv_header(kind):
    """An ECSV file whose header holds 2 MB of metadata."""
    text = _text(kind)
    marker = "# meta: !!omap\n"
    filler = "".join(f"# - {{pad{i}: {'x' * 60}}}\n" for i in range(30_000))
    return text.replace(marker, marker + filler, 1).encode()


def enormous_fits_header(kind):
    """A FITS file whose primary header holds 30,000 cards."""
    cards = [f"{'SIMPLE':8}= {'T':>20}", f"{'BITPIX':8}= {8:>20}", f"{'NAXIS':8}= {0:>20}"]
    cards += [f"COMMENT padding card {i}" for i in range(30_000)] + ["END"]
    raw = b"".join(c.ljust(80).encode("ascii") for c in cards)
    return raw + b" " * (-len(raw) % 2880)


def _ecsv_cell(kind, value):
    """The first data row's second value replaced by ``value``."""
    lines = _text(kind).splitlines(keepends=True)
    body = [i for i, ln in enumerate(lines) if not ln.startswith("#")]
    row = body[1]
    parts = lines[row].rstrip("\n").split(" ")
    parts[1] = value
    lines[row] = " ".join(parts) + "\n"
    return "".join(lines).encode()


def _csv_cell(value):
    return CATALOGUE_CSV.replace(",100,", f",{value},", 1).encode()


def _cell(kind, value):
    if kind == "catalogue":
        return _csv_cell(value)
    return _ecsv_cell(kind, value)


#: name -> (kinds it applies to, maker(kind) -> bytes or None)
CRAFTED = {
    "empty": (("curve", "array", "catalogue", "limit_map", "columns", "relations"), lambda k: b""),
    "truncated": (
        ("curve", "array", "catalogue", "limit_map", "columns", "relations"),
        lambda k: valid(k)[: len(valid(k)) * 3 // 5],
    ),
    "binary": (
        ("curve", "array", "catalogue", "limit_map", "columns", "relations"),
        lambda k: bytes(range(256)) * 40,
    ),
    "utf-16": (
        ("curve", "array", "catalogue", "columns", "relations"),
        lambda k: valid(k).decode("utf-8").encode("utf-16"),
    ),
    "latin-1": (
        ("curve", "array", "catalogue", "columns", "relations"),
        lambda k: valid(k).decode("utf-8").replace("e", "\u00e9", 3).encode("latin-1"),
    ),
    "byte-order mark": (
        ("curve", "array", "catalogue", "columns", "relations"),
        lambda k: b"\xef\xbb\xbf" + valid(k),
    ),
    "NUL bytes": (
        ("curve", "array", "catalogue", "columns", "relations"),
        lambda k: valid(k).replace(b"\n", b"\n\0", 5),
    ),
    "YAML alias bomb": (("curve", "array"), alias_bomb),
    "enormous ECSV header": (("curve", "array"), enormous_ecsv_header),
    "enormous FITS header": (("limit_map", "curve", "catalogue"), enormous_fits_header),
    "NaN cell": (("curve", "array", "catalogue"), lambda k: _cell(k, "nan")),
    "1e300 cell": (("curve", "array", "catalogue"), lambda k: _cell(k, "1e300")),
    "-1e300 cell": (("curve", "array", "catalogue"), lambda k: _cell(k, "-1e300")),
    "text cell": (("curve", "array", "catalogue"), lambda k: _cell(k, "abc")),
    "a directory": (
        ("curve", "array", "catalogue", "limit_map", "columns", "relations"),
        lambda k: None,
    ),
    "deeply nested TOML": (
        ("columns", "relations"),
        lambda k: ("x = " + "[" * 5000 + "]" * 5000 + "\n").encode(),
    ),
    "huge TOML": (("columns", "relations"), lambda k: valid(k) + b"# " + b"x" * 2_000_000 + b"\n"),
    "wrong shape": (
        ("columns", "relations"),
        lambda k: b'columns = "mass"\n' if k == "columns" else b"relation = 3\n",
    ),
    "one line": (("curve", "array", "catalogue"), lambda k: b"name\n"),
}


def cases():
    """(case name, kind) pairs of the table."""
    return [(name, kind) for name, (kinds, _) in CRAFTED.items() for kind in kinds]


def write(tmp_path, name, kind):
    """Write the crafted file; returns its path."""
    suffix = {
        "curve": ".ecsv",
        "array": ".ecsv",
        "catalogue": ".csv",
        "limit_map": ".fits",
        "columns": ".toml",
        "relations": ".toml",
    }[kind]
    if name == "enormous FITS header":
        suffix = ".fits"
    path = tmp_path / f"crafted{suffix}"
    data = CRAFTED[name][1](kind)
    if data is None:
        path.mkdir()
    else:
        path.write_bytes(data)
    return path
