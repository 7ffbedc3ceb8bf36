"""Name hashing and de-duplication across chunks."""

import numpy as np

from ptaconstrain.catalogue import NameSet, duplicate_mask, name_bytes, name_hashes
from ptaconstrain.catalogue import names as names_module


def _first_occurrence_brute(names):
    # brute force: a Python set walked in row order (the definition of "repeat")
    seen, out = set(), []
    for n in names:
        out.append(n in seen)
        seen.add(n)
    return np.array(out)


def test_duplicates_match_a_python_set_across_chunks():
    rng = np.random.default_rng(3)
    names = np.char.add("G", rng.integers(0, 3000, 10_000).astype(str))
    names[::97] = "Galaxie-Œ"  # non-ASCII names are kept as UTF-8 bytes
    s = NameSet()
    got = np.concatenate([s.add(names[i : i + 777]) for i in range(0, names.size, 777)])
    assert np.array_equal(got, _first_occurrence_brute(names.tolist()))
    assert len(s) == len(set(names.tolist()))
    assert np.array_equal(duplicate_mask(names), got)


def test_hash_collisions_are_resolved_by_exact_comparison(monkeypatch):
    # every name gets the same hash: the answer must still be exact
    monkeypatch.setattr(
        names_module, "name_hashes", lambda n: np.zeros(np.asarray(n).size, dtype=np.uint64)
    )
    names = ["a", "b", "a", "c", "b", "d"]
    s = NameSet()
    got = np.concatenate([s.add(names[:2]), s.add(names[2:4]), s.add(names[4:])])
    assert got.tolist() == _first_occurrence_brute(names).tolist()


def test_hash_depends_on_the_text_only():
    # the same name in arrays of different widths and as bytes hashes alike
    a = name_hashes(np.array(["Fict 486"], dtype="U8"))
    b = name_hashes(np.array(["Fict 486", "a much longer name"]))[:1]
    c = name_hashes(name_bytes(["Fict 486"]))
    assert a[0] == b[0] == c[0]
    assert name_hashes(["Fict 486"])[0] != name_hashes(["Fict 487"])[0]


def test_utf8_bytes_keep_code_point_order():
    # UTF-8 preserves code-point order (RFC 3629, section 1)
    names = np.array(["b", "Œ", "a", "z", "é"])
    assert np.array_equal(np.argsort(name_bytes(names)), np.argsort(names))


def test_name_bytes_is_utf8_for_any_layout():
    # reference: numpy's own UTF-8 encoder (np.char.encode), element by element
    names = np.array([["Velmora 4486", "Osric 87"], ["Œuf", ""]])
    for arr in (names, names.T, names[:, 1], names[:1].T, names.ravel()[::2], names[0, 0]):
        got = name_bytes(arr)
        assert got.shape == np.shape(arr)
        assert np.array_equal(got, np.char.encode(arr, "utf-8"))
