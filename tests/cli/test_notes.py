"""Notes for assumed confidence, sky and span, for ignored options, and the unit hint."""

import pytest
from click.testing import CliRunner

from ptaconstrain.cli import main

LIMIT_HZ = "# f h0\n2e-9 1e-14\n1e-8 5e-15\n1e-7 3e-14\n"
LIMIT_NHZ = "# f h0\n2 1e-14\n10 5e-15\n100 3e-14\n"


def _run(tmp_path, text, *extra, kind="h0_limit"):
    path = tmp_path / "curve.txt"
    path.write_text(text)
    return CliRunner().invoke(
        main,
        [
            "exclude",
            "--mass",
            "2e10",
            "--distance",
            "100",
            "--curve",
            str(path),
            "--kind",
            kind,
            "--format",
            "none",
            "--out",
            str(tmp_path / "out"),
            *extra,
        ],
    )


def _notes(res):
    return [line for line in res.output.splitlines() if line.startswith("Note: ")]


def test_text_limit_notes_the_assumed_confidence_sky_and_span(tmp_path):
    res = _run(tmp_path, LIMIT_HZ)
    assert res.exit_code == 0, res.output
    notes = "\n".join(_notes(res))
    assert "95% upper limit is assumed; give --confidence" in notes
    assert "taken as sky-averaged" in notes
    assert "15.8 yr (1 / lowest frequency) is assumed" in notes
    assert "(95% upper limit)" in res.output


def test_confidence_option_sets_the_label_and_silences_its_note(tmp_path):
    res = _run(tmp_path, LIMIT_HZ, "--confidence", "0.9")
    assert res.exit_code == 0, res.output
    assert "(90% upper limit)" in res.output
    assert not any("confidence" in n for n in _notes(res))


@pytest.mark.parametrize(
    "extra, word", [(("--snr", "7"), "--snr is ignored"), (("--seed", "3"), "--seed is ignored")]
)
def test_ignored_options_are_noted(tmp_path, extra, word):
    res = _run(tmp_path, LIMIT_HZ, *extra)
    assert res.exit_code == 0 and any(word in n for n in _notes(res))


def test_confidence_for_a_noise_budget_is_noted_as_ignored(tmp_path):
    psd = "# f psd\n2e-9 1e-10\n1e-8 5e-12\n1e-7 3e-11\n"
    res = _run(tmp_path, psd, "--confidence", "0.9", kind="strain_psd")
    assert res.exit_code == 0
    assert any(
        "noise budget (a forecast), so the confidence 0.9 is ignored" in n for n in _notes(res)
    )


def test_a_curve_in_nhz_gets_a_unit_hint_not_period_advice(tmp_path):
    res = _run(tmp_path, LIMIT_NHZ)
    assert res.exit_code == 2
    line = res.output.strip().splitlines()
    assert len(line) == 1 and "look like nHz" in line[0] and "multiply it by 1e-9" in line[0]
    assert "--period-range" not in line[0]
