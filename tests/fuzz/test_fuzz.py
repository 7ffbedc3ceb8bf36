"""Fuzz: hostile numbers, strings and files against every command.

Every case must keep the promise (fuzz/promise.py): success, or one line
``Error: ...`` with a non-zero exit, no traceback and nothing in --out.
The hypothesis parts are derandomised with a fixed number of examples, so
the suite's size and time are the same on every run (about 40 s on the
two-core development machine; see README "What is validated").
"""

import errno

import pytest
from fuzz.crafted import CATALOGUE_CSV, cases, write
from fuzz.promise import ARRAY, CURVE, assert_promise, left_in, run
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

FUZZ = settings(
    max_examples=4,
    deadline=None,
    derandomize=True,
    database=None,
    suppress_health_check=list(HealthCheck),
)

#: number texts a careless or hostile user may type
HOSTILE_NUMBERS = st.sampled_from(
    [
        "nan",
        "inf",
        "-inf",
        "1e300",
        "-1e300",
        "1e-300",
        "0",
        "-0",
        "-1",
        "abc",
        "",
        " ",
        "1e",
        "0x10",
        "1e10000",
        "\u22125",
        "1,2",
        "1;2",
        "5 parsec",
        "5 kg",
        "1e9 yr",
        "99999999999999999999",
        "--",
        "None",
    ]
) | st.floats(allow_nan=True, allow_infinity=True).map(repr)

#: option -> base command it is given to (small, fast settings)
EXCLUDE = [
    "exclude",
    "--mass",
    "2e10",
    "--distance",
    "100",
    "--curve",
    CURVE,
    "--grid",
    "12",
    "--format",
    "png",
]
NUMBER_OPTIONS = {
    "--mass": EXCLUDE,
    "--distance": EXCLUDE,
    "--snr": EXCLUDE,
    "--span": EXCLUDE,
    "--mass-err": EXCLUDE,
    "--distance-err": EXCLUDE,
    "--redshift": EXCLUDE,
    "--ra": EXCLUDE,
    "--dec": EXCLUDE,
    "--sigma": EXCLUDE,
    "--samples": EXCLUDE,
    "--grid": EXCLUDE,
    "--credibility": EXCLUDE,
    "--period-range": EXCLUDE,
    "--mass-ratio-range": EXCLUDE,
}


def _with(base, option, value):
    args = list(base)
    if option in args:
        args[args.index(option) + 1] = value
    else:
        args += [option, value]
    if option in ("--mass-err", "--distance-err", "--credibility"):
        args += ["--samples", "200", "--seed", "1"]
        if option == "--credibility":
            args += ["--mass-err", "0.2"]
    return args


@pytest.mark.parametrize("option", sorted(NUMBER_OPTIONS))
@FUZZ
@given(value=HOSTILE_NUMBERS)
def test_hostile_numbers_on_the_command_line(tmp_path_factory, option, value):
    out = tmp_path_factory.mktemp("out") / "res"
    r = run(_with(NUMBER_OPTIONS[option], option, value) + ["--out", out])
    assert_promise(r, out)


RANK = ["rank", None, "--curve", CURVE, "--top", "2"]
RANK_OPTIONS = (
    "--q-index",
    "--rate",
    "--q-min",
    "--snr",
    "--span",
    "--chunk-size",
    "--top",
    "--nodes",
)


@pytest.fixture(scope="module")
def catalogue(tmp_path_factory):
    path = tmp_path_factory.mktemp("cat") / "cat.csv"
    path.write_text(CATALOGUE_CSV)
    return str(path)


@pytest.mark.parametrize("option", RANK_OPTIONS)
@FUZZ
@given(value=HOSTILE_NUMBERS)
def test_hostile_numbers_for_rank(tmp_path_factory, catalogue, option, value):
    out = tmp_path_factory.mktemp("out") / "res"
    args = list(RANK)
    args[1] = catalogue
    r = run(args + [option, value, "--out", out])
    assert_promise(r, out)


@pytest.mark.parametrize("option", ["--nside", "--frequency", "--snr"])
@FUZZ
@given(value=HOSTILE_NUMBERS | st.sampled_from(["8192", "4096", "3", "1e9 Hz", "8 nHz"]))
def test_hostile_numbers_for_threshold_map(tmp_path_factory, option, value):
    out = tmp_path_factory.mktemp("out") / "maps"
    base = ["threshold-map", "--array", ARRAY, "--nside", "4", "--frequency", "8 nHz"]
    r = run(_with(base, option, value) + ["--out", out])
    assert_promise(r, out)


@pytest.mark.parametrize("option", ["--ra", "--dec", "--snr"])
@FUZZ
@given(value=HOSTILE_NUMBERS)
def test_hostile_numbers_for_curve(tmp_path_factory, option, value):
    out = tmp_path_factory.mktemp("out") / "curve.ecsv"
    base = ["curve", "--array", ARRAY, "--ra", "10", "--dec", "10"]
    r = run(_with(base, option, value) + ["--out", out])
    assert_promise(r, out)


#: strings: names with every kind of character, very long ones, option syntax
HOSTILE_TEXT = st.text(min_size=0, max_size=400) | st.sampled_from(
    [
        "x" * 300,
        "../../etc/passwd",
        "a/b",
        "\0",
        "\n",
        "Fictus 1.2+3",
        ".",
        "..",
        "-",
        "--out",
        "Fictus J1234.5+6789",
        "\u202e evil",
        "CON",
        "a" * 121,
    ]
)


@FUZZ
@given(name=HOSTILE_TEXT)
def test_hostile_host_names(tmp_path_factory, name):
    out = tmp_path_factory.mktemp("out") / "res"
    r = run(EXCLUDE + ["--name", name, "--out", out])
    if assert_promise(r, out):  # every accepted name stays inside --out
        assert all("/" not in p for p in left_in(out))


@pytest.mark.parametrize("option", ["--column", "--relation", "--format", "--metric"])
@FUZZ
@given(value=HOSTILE_TEXT)
def test_hostile_strings_for_rank(tmp_path_factory, catalogue, option, value):
    out = tmp_path_factory.mktemp("out") / "res"
    args = list(RANK)
    args[1] = catalogue
    r = run(args + [option, value, "--out", out])
    assert_promise(r, out)


# ------------------------------------------------------------------ crafted files
def _command(kind, path, catalogue, out):
    base = {
        "curve": [
            "exclude",
            "--mass",
            "2e10",
            "--distance",
            "100",
            "--curve",
            path,
            "--grid",
            "12",
            "--format",
            "png",
        ],
        "array": [
            "exclude",
            "--mass",
            "2e10",
            "--distance",
            "100",
            "--ra",
            "10",
            "--dec",
            "10",
            "--array",
            path,
            "--grid",
            "12",
            "--format",
            "png",
        ],
        "limit_map": [
            "exclude",
            "--mass",
            "2e10",
            "--distance",
            "100",
            "--ra",
            "10",
            "--dec",
            "10",
            "--limit-map",
            path,
            "--grid",
            "12",
            "--format",
            "png",
        ],
        "catalogue": ["rank", path, "--curve", CURVE],
        "columns": ["rank", catalogue, "--curve", CURVE, "--columns", path],
        "relations": ["rank", catalogue, "--curve", CURVE, "--relation", path],
    }[kind]
    return base + ["--out", out]


@pytest.mark.parametrize("name, kind", cases())
def test_crafted_files(tmp_path, catalogue, name, kind):
    path = write(tmp_path, name, kind)
    out = tmp_path / "out"
    assert_promise(run(_command(kind, path, catalogue, out)), out)


@pytest.mark.parametrize("kind", ["curve", "array", "catalogue"])
@FUZZ
@given(data=st.binary(max_size=3000))
def test_random_small_files(tmp_path_factory, catalogue, kind, data):
    tmp = tmp_path_factory.mktemp("f")
    path = tmp / ("f.csv" if kind == "catalogue" else "f.ecsv")
    path.write_bytes(data)
    out = tmp / "out"
    assert_promise(run(_command(kind, path, catalogue, out)), out)


# ------------------------------------------------------------------ a full disk
COMMANDS = {
    "exclude": EXCLUDE,
    "rank": ["rank", None, "--curve", CURVE, "--format", "png"],
    "curve": ["curve", "--array", ARRAY],
    "threshold-map": ["threshold-map", "--array", ARRAY, "--nside", "4", "--frequency", "8 nHz"],
    "demo": ["demo"],
}


@pytest.mark.parametrize("command", sorted(COMMANDS))
@pytest.mark.parametrize("nth", [1, 2])
def test_a_full_disk_leaves_no_partial_set(tmp_path, monkeypatch, catalogue, command, nth):
    # from the nth table or figure write on, every write fails with ENOSPC, as on a
    # full disk; nothing of the command may remain (a command with fewer writes succeeds)
    from astropy.table import Table
    from matplotlib.figure import Figure

    count = [0]

    def failing(real):
        def write(self, *args, **kwargs):
            count[0] += 1
            if count[0] >= nth:
                raise OSError(errno.ENOSPC, "No space left on device", str(args[0]))
            return real(self)(*args, **kwargs)

        return write

    table_write = Table.__dict__["write"]  # astropy's unified-I/O descriptor
    savefig = Figure.__dict__["savefig"]
    monkeypatch.setattr(Table, "write", failing(lambda t: table_write.__get__(t, type(t))))
    monkeypatch.setattr(Figure, "savefig", failing(lambda f: savefig.__get__(f, type(f))))
    args = list(COMMANDS[command])
    if command == "rank":
        args[1] = catalogue
    out = tmp_path / ("c.ecsv" if command == "curve" else "out")
    r = run(args + ["--out", out])
    if r.exit_code == 0:
        assert count[0] < nth, r.output  # the failing write never came
        return
    assert "no space left on device" in r.output.lower(), r.output
    assert_promise(r, out)
    assert sorted(p.name for p in tmp_path.iterdir()) == []  # no staging beside --out


#: astropy unit metadata (the ECSV header as YAML) a hostile Parquet file may carry
PARQUET_UNIT_YAML = {
    "junk unit": "datatype:\n- {name: distance, unit: furlongs per glass, datatype: float64}\n",
    "wrong kind": "datatype:\n- {name: distance, unit: kg, datatype: float64}\n",
    "not YAML": "datatype: [ {name: distance, unit: kpc\n",
    "not a header": "- 1\n- 2\n",
    "binary": "\x00\x01\x02",
}


@pytest.mark.parametrize("name", sorted(PARQUET_UNIT_YAML))
@pytest.mark.parametrize("engine", ["memory", "dask"])
def test_parquet_with_hostile_unit_metadata(tmp_path, name, engine):
    # the units astropy stores in a Parquet file (key table_meta_yaml) are read under the
    # ECSV rule: any damage is one line, for the in-memory reader and the Dask engine alike
    pa = pytest.importorskip("pyarrow", reason="the optional 'scale' extra is not installed")
    import pyarrow.parquet as pq

    table = pa.table(
        {
            "name": ["Invented A", "Invented B"],
            "ra": [10.0, 150.0],
            "dec": [-5.0, 20.0],
            "distance": [20.0, 40.0],
            "mass": [3e9, 5e9],
        }
    )
    table = table.replace_schema_metadata({b"table_meta_yaml": PARQUET_UNIT_YAML[name].encode()})
    pq.write_table(table, tmp_path / "galaxies.parquet")
    out = tmp_path / "out"
    args = ["rank", tmp_path / "galaxies.parquet", "--curve", CURVE, "--out", out]
    if engine == "dask":
        args += ["--engine", "dask", "--workers", "1"]
    assert_promise(run(args), out, allow_success=(name == "not a header"))
