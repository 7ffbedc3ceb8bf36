"""Configuration files of the wrong shape: one line naming the key and the type expected."""

import pytest
from astropy import units as u

from ptaconstrain._inputs import check_schema
from ptaconstrain.catalogue import load_column_map
from ptaconstrain.catalogue.relations import load_relations
from ptaconstrain.errors import InputError
from ptaconstrain.sensitivity.curve import StrainCurve

RELATION = (
    '[[relation]]\nname = "a"\npredictor = "velocity_dispersion"\nalpha = 8.3\n'
    'beta = 5.6\npivot = 200.0\nunit = "km/s"\nscatter_dex = 0.3\ncitation = "c"\n'
)


@pytest.mark.parametrize(
    "text, key, expected",
    [
        ('columns = "mass"', "'columns'", "a table"),
        ('columns = ["mass"]', "'columns'", "a table"),
        ("[columns]\nmass = 3", "'columns.mass'", "a string"),
        ('[units]\ndistance = ["Mpc"]', "'units.distance'", "a string"),
    ],
)
def test_column_maps_of_the_wrong_shape(tmp_path, text, key, expected):
    path = tmp_path / "map.toml"
    path.write_text(text)
    with pytest.raises(InputError) as err:
        load_column_map(path)
    msg = str(err.value)
    assert msg.startswith("map.toml: key ") and key in msg and f"must be {expected}" in msg
    assert "\n" not in msg


@pytest.mark.parametrize(
    "text, key, expected",
    [
        ("relation = 3", "'relation'", "a list of tables"),
        ("relation = [1, 2]", "'relation'", "a list of tables"),
        (RELATION.replace('name = "a"', 'name = ["a"]'), "'relation[1].name'", "a string"),
        (RELATION.replace("alpha = 8.3", 'alpha = "8.3"'), "'relation[1].alpha'", "a number"),
        (RELATION.replace("alpha = 8.3", "alpha = true"), "'relation[1].alpha'", "a number"),
    ],
)
def test_relations_files_of_the_wrong_shape(tmp_path, text, key, expected):
    path = tmp_path / "rel.toml"
    path.write_text(text)
    with pytest.raises(InputError) as err:
        load_relations(path)
    assert key in str(err.value) and f"must be {expected}" in str(err.value)


def test_a_well_formed_relations_file_still_loads(tmp_path):
    path = tmp_path / "rel.toml"
    path.write_text(RELATION)
    assert list(load_relations(path)) == ["a"]


@pytest.mark.parametrize(
    "meta, key",
    [
        ({"confidence": [0.9, 0.95]}, "'confidence'"),
        ({"span": {"yr": 15}}, "'span'"),
        ({"sky": 3}, "'sky'"),
    ],
)
def test_curve_meta_of_the_wrong_type(meta, key):
    with pytest.raises(InputError, match=f"curve meta: key {key} must be"):
        StrainCurve([1e-9, 1e-8] * u.Hz, [1e-14, 1e-14], "h0_limit", meta)


def test_unknown_keys_are_named_with_the_known_ones():
    with pytest.raises(InputError, match="f.toml: unknown key 'colums'; expected 'columns'"):
        check_schema({"colums": {}}, {"columns": {"*": str}}, "f.toml")
