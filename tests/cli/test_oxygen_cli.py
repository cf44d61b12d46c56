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


# --- gas conditions, dyshaemoglobins and the cascade form -------------------------------------


def test_alveolar_po2_from_pb_and_fio2(capsys):
    # Alveolar gas equation (textbook): PB 596, PaCO2 40, R 0.8 -> 67.0 mmHg.
    data = run_json(capsys, "--po2", "60", "--pb", "596")
    assert data["alveolar"]["pao2_alveolar_mmhg"] == pytest.approx(67.0, abs=0.05)
    assert data["alveolar"]["fio2"] == pytest.approx(0.2093)


def test_cohb_lowers_content_and_p50(capsys):
    # Content with COHb 20 % (Hb 15, S 0.98, PO2 95 -> 16.05 mL/dL when S is the functional
    # saturation); CO shifts the remaining haemoglobin's curve left (Roughton & Darling 1944).
    plain = run_json(capsys, "--po2", "95", "--hb", "15")
    co = run_json(capsys, "--po2", "95", "--hb", "15", "--cohb", "20")
    point = co["points"][0]
    assert point["o2_content_ml_dl"] == pytest.approx(1.34 * 15 * 0.8 * point["saturation"] + 0.0031 * 95, abs=1e-9)
    assert point["o2_content_ml_dl"] < plain["points"][0]["o2_content_ml_dl"] - 3.5
    assert co["p50_mmhg"] < plain["p50_mmhg"] - 4.0
    assert co["cohb_fraction"] == pytest.approx(0.2) and co["notes"]


def test_cohb_out_of_range_is_refused(capsys):
    assert main(["oxygen", "--po2", "95", "--cohb", "0.2", "--methb", "70"]) == EXIT_BAD_INPUT
    assert "--methb" in capsys.readouterr().err


@pytest.fixture(scope="module")
def demo_file():
    from pathlib import Path

    return str(sorted(Path(__file__).resolve().parents[2].joinpath("demo_sessions").glob("SEL-0107*.session.csv"))[0])


def test_cascade_form_json(capsys, demo_file):
    code = main(["oxygen", "cascade", demo_file, "--json"])
    assert code == EXIT_OK
    data = json.loads(capsys.readouterr().out)["oxygen_cascade"]
    rows = {r["scenario"]: r for r in data["what_if"]}
    assert rows["baseline"]["vo2_peak_ml_min"] == pytest.approx(data["vo2_peak_ml_min"], rel=1e-9)
    assert rows["hb_minus_10pct"]["change_pct"] < 0 < rows["fio2_30pct"]["change_pct"] < 8.0
    assert data["estimate"] is True and data["q_estimated"] is True


def test_cascade_options_change_the_inputs(capsys, demo_file):
    # A measured peak Q replaces the estimate; a lower PB lowers the alveolar and arterial PO2.
    main(["oxygen", "cascade", demo_file, "--json"])
    base = json.loads(capsys.readouterr().out)["oxygen_cascade"]
    main(["oxygen", "cascade", demo_file, "--json", "--q-peak", "30", "--pb", "596"])
    high = json.loads(capsys.readouterr().out)["oxygen_cascade"]
    assert high["q_estimated"] is False and high["q_l_min"] == pytest.approx(30.0)
    assert high["peak"]["pao2_alveolar_mmhg"] < base["peak"]["pao2_alveolar_mmhg"] - 30.0


def test_cascade_text_says_estimate_and_caution(capsys, demo_file):
    assert main(["oxygen", "cascade", demo_file]) == EXIT_OK
    out = capsys.readouterr().out
    assert "model estimate" in out and "consistent with" in out and "not a medical device" in out
    assert "hb_minus_10pct" in out and "mixed venous" in out


def test_cascade_needs_a_file(capsys):
    assert main(["oxygen", "cascade"]) == EXIT_BAD_INPUT
    assert "cascade FILE" in capsys.readouterr().err
    assert main(["oxygen"]) == EXIT_BAD_INPUT


def test_analyze_json_shows_the_what_if_rows(capsys, demo_file):
    # Issue 15: `tidemark analyze --json` carries oxygen_cascade.what_if with the stable codes.
    from analysis.oxygen.scenarios import SCENARIO_CODES

    assert main(["analyze", demo_file, "--json"]) == EXIT_OK
    data = json.loads(capsys.readouterr().out)
    rows = data["oxygen_cascade"]["what_if"]
    assert [r["scenario"] for r in rows] == list(SCENARIO_CODES)
    assert rows[0]["vo2_peak_ml_min"] == pytest.approx(data["vo2_peak_ml_min"], rel=1e-9)
    assert "oxygen_cascade" in data["methods"]
