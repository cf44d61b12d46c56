"""``tidemark oxygen`` end to end through ``tidemark.cli.main``."""

from __future__ import annotations

import json

import pytest

from tidemark.cli import EXIT_BAD_INPUT, EXIT_OK, main


def run_json(capsys, *argv):
    code = main(["oxygen", *argv, "--json"])
    out = capsys.readouterr().out
    assert code == EXIT_OK
    return json.loads(out)


def test_standard_curve_values(capsys):
    # Severinghaus 1979 Eq 1 worked values; P50 ≈ 26.8 mmHg.
    data = run_json(capsys, "--po2", "26.8", "40", "100")
    sats = [p["saturation"] for p in data["points"]]
    assert sats == pytest.approx([0.499, 0.750, 0.977], abs=0.0011)
    assert data["p50_mmhg"] == pytest.approx(26.8, abs=0.1)
    assert data["estimate"] is True and "not a medical device" in data["caution"]


def test_content_with_hb(capsys):
    # Common practice: content = 1.34 x Hb x S + 0.0031 x PO2.
    data = run_json(capsys, "--po2", "100", "--hb", "12")
    point = data["points"][0]
    assert point["o2_content_ml_dl"] == pytest.approx(1.34 * 12 * point["saturation"] + 0.31, abs=1e-9)
    assert data["hb_assumed"] is False


def test_exercise_conditions_shift_right(capsys):
    # Siggaard-Andersen 1984 / Severinghaus 1979: acid, warm blood has a higher P50 (≈ 39 at pH 7.2, 39 °C).
    data = run_json(capsys, "--po2", "40", "--model", "siggaard_andersen", "--ph", "7.2", "--temperature", "39")
    assert 37.0 < data["p50_mmhg"] < 41.0
    assert data["conditions_applied"]["ph"] == 7.2


def test_hill(capsys):
    # Common practice: a Hill curve is half-saturated at its own P50.
    data = run_json(capsys, "--po2", "20", "--model", "hill", "--p50", "20", "--hill-n", "2.5")
    assert data["points"][0]["saturation"] == pytest.approx(0.5)


def test_table_output(capsys):
    assert main(["oxygen", "--po2", "40"]) == EXIT_OK
    out = capsys.readouterr().out
    assert "74.95" in out and "assumed; give --hb" in out and "P50 under these conditions: 26.83" in out


@pytest.mark.parametrize(
    ("argv", "match"),
    [
        (["--po2", "-3"], "po2_mmhg"),
        (["--po2", "40", "--ph", "6.2"], "ph"),
        (["--po2", "40", "--temperature", "50"], "temperature_c"),
        (["--po2", "40", "--dpg", "7"], "siggaard_andersen"),
        (["--po2", "40", "--model", "hill"], "p50_mmhg"),
        (["--po2", "40", "--hb", "80"], "hb_g_dl"),
    ],
)
def test_invalid_values_exit_2(capsys, argv, match):
    assert main(["oxygen", *argv]) == EXIT_BAD_INPUT
    assert match in capsys.readouterr().err


def test_unparseable_number_exits_2(capsys):
    with pytest.raises(SystemExit) as info:
        main(["oxygen", "--po2", "abc"])
    assert info.value.code == EXIT_BAD_INPUT
    assert "invalid float value" in capsys.readouterr().err
