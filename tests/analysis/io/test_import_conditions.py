"""Gas conditions in exports: condition words recognised, STPD/ATPS ventilation converted to BTPS
when pressure and temperature are known, the import refused with advice otherwise."""

from __future__ import annotations

import pytest

from analysis.errors import ImportRejected, InvalidParameter
from analysis.io import describe_outcome, import_bytes, read_session, session_to_text
from analysis.io._conditions import header_conditions, preamble_statements

# gas laws, ATS/ACCP 2003 conventions (see tests/analysis/test_gas_conditions.py)
STPD_TO_BTPS_760 = 1.2103
ATPS_22_TO_BTPS_760 = 1.0909


def export(ve_header: str = "VE (L/min)", *, above: str = "", vo2_header: str = "VO2 (L/min)") -> bytes:
    rows = "".join(f"0:{3 * i:02d};0,{30 + i};0,{25 + i};{20 + i},0;{12 + i % 3}\n" for i in range(10))
    return f"{above}Time;{vo2_header};VCO2 (L/min);{ve_header};RR\n{rows}".encode()


def ve(out) -> list[float]:
    return out.session.breaths["ve_l_min"].tolist()


PLAIN_VE = [20.0 + i for i in range(10)]


@pytest.mark.parametrize(
    ("header", "found"),
    [("VE (L/min, STPD)", ("stpd",)), ("VE BTPS", ("btps",)), ("V'E [l/min] ATPS", ("atps",)), ("VEbtps", ("btps",)),
     ("VE (L/min)", ()), ("VE STPD/BTPS", ("stpd", "btps")), ("Stpdx", ())],
)
def test_condition_words_in_headers(header, found):
    assert header_conditions(header, known_keys=("ve",)) == found


def test_no_condition_stated_reads_by_convention_and_says_so():
    out = import_bytes(export(), file_name="plain.csv")
    assert ve(out) == PLAIN_VE
    assert "ve_condition" not in out.session.meta
    assert "gas conditions: ventilation taken as BTPS (no condition stated); VO2/VCO2 taken as STPD (no condition stated)" in describe_outcome(out)


def test_btps_in_the_header_is_kept_and_recorded():
    out = import_bytes(export("VE (L/min, BTPS)"), file_name="b.csv")
    assert ve(out) == PLAIN_VE
    meta = out.session.meta
    assert (meta["ve_condition"], meta["ve_condition_stated"]) == ("btps", "btps")
    assert meta["ve_condition_source"] == "header 'VE (L/min, BTPS)'"


def test_stpd_ventilation_without_pressure_is_refused_with_advice():
    with pytest.raises(ImportRejected) as err:
        import_bytes(export("VE (L/min, STPD)"), file_name="cart.csv")
    text = str(err.value)
    assert "file 'cart.csv', column 'VE (L/min, STPD)': VE is stated as STPD" in text
    assert "needs the barometric pressure" in text and "--barometric-mmhg" in text and "--ve-condition" in text
    assert "'Gas conditions'" in text


def test_stpd_ventilation_converted_with_the_pressure():
    out = import_bytes(export("VE (L/min, STPD)"), file_name="cart.csv", barometric_mmhg=760.0)
    assert ve(out) == pytest.approx([v * STPD_TO_BTPS_760 for v in PLAIN_VE], rel=5e-5)  # gas laws: 1.2103
    meta = out.session.meta
    assert meta["ve_condition"] == "btps" and meta["ve_condition_stated"] == "stpd"
    assert meta["ve_btps_factor"] == pytest.approx(1.2103, abs=5e-5)
    assert meta["barometric_mmhg"] == 760.0
    summary = describe_outcome(out)
    assert "gas conditions: ventilation BTPS, converted from STPD × 1.2103; VO2/VCO2 taken as STPD (no condition stated)" in summary
    assert any("converted to BTPS × 1.2103 (PB 760 mmHg" in line for line in summary)


def test_pressure_from_the_file_metadata():
    out = import_bytes(export("VE STPD", above="# barometric_mmhg: 760\n"), file_name="m.csv")
    assert ve(out)[0] == pytest.approx(20.0 * STPD_TO_BTPS_760, rel=5e-5)


def test_atps_needs_the_room_temperature_too():
    with pytest.raises(ImportRejected, match="the barometric pressure and the room temperature"):
        import_bytes(export("VE ATPS"), file_name="a.csv", barometric_mmhg=760.0)
    out = import_bytes(export("VE ATPS"), file_name="a.csv", barometric_mmhg=760.0, ambient_c=22.0)
    assert ve(out) == pytest.approx([v * ATPS_22_TO_BTPS_760 for v in PLAIN_VE], rel=5e-5)  # gas laws: 1.0909
    assert out.session.meta["ambient_c"] == 22.0


def test_lines_above_the_table_state_the_conditions_and_the_room():
    above = "Barometric pressure;1013 hPa\nRoom temperature;22\nVolumes;ATPS\n\n"
    out = import_bytes(export(above=above), file_name="pre.csv")
    # 1013 hPa = 759.8 mmHg (1 mmHg = 133.322387415 Pa); factor by the gas laws at that pressure
    assert out.session.meta["barometric_mmhg"] == pytest.approx(759.8, abs=0.05)
    assert ve(out)[0] == pytest.approx(20.0 * 1.0909, rel=3e-4)
    assert out.session.meta["ve_condition_source"].startswith("line 3 above the table")


def test_the_option_states_the_condition_over_the_header():
    out = import_bytes(export("VE (STPD)"), file_name="x.csv", ve_condition="btps")
    assert ve(out) == PLAIN_VE
    assert out.session.meta["ve_condition_source"] == "as set for the import; the header 'VE (STPD)' says STPD"
    out = import_bytes(export(), file_name="x.csv", ve_condition="stpd", barometric_mmhg=760.0)
    assert ve(out)[0] == pytest.approx(20.0 * STPD_TO_BTPS_760, rel=5e-5)


def test_vo2_stated_at_btps_is_converted_to_stpd():
    out = import_bytes(export(vo2_header="VO2 (L/min, BTPS)"), file_name="g.csv", barometric_mmhg=760.0)
    # gas laws: BTPS -> STPD = 1 / 1.2103 at 760 mmHg; 0.30 L/min -> 247.9 mL/min
    assert out.session.breaths["vo2_ml_min"].iloc[0] == pytest.approx(300.0 / STPD_TO_BTPS_760, rel=5e-5)
    assert out.session.breaths["vco2_ml_min"].iloc[0] == 250.0  # its own header states nothing
    assert out.session.meta["gas_condition"] == "stpd"


def test_two_conditions_in_one_header_are_refused():
    with pytest.raises(ImportRejected, match="more than one condition"):
        import_bytes(export("VE (STPD, BTPS)"), file_name="x.csv", barometric_mmhg=760.0)


def test_a_converted_session_reads_back_without_converting_again():
    out = import_bytes(export("VE (L/min, STPD)"), file_name="cart.csv", barometric_mmhg=760.0)
    text = session_to_text(out.session)
    assert read_session(text.encode(), file_name="s.csv").meta["ve_condition"] == "btps"
    again = import_bytes(text.encode(), file_name="again.csv")
    assert ve(again) == pytest.approx(ve(out), rel=1e-6)


@pytest.mark.parametrize(
    ("kwargs", "name"),
    [({"ve_condition": "ntpd"}, "ve_condition"), ({"barometric_mmhg": -1.0}, "barometric_mmhg"),
     ({"barometric_mmhg": 101.3}, "barometric_mmhg"), ({"ambient_c": float("nan")}, "ambient_c")],
)
def test_bad_options_are_refused(kwargs, name):
    with pytest.raises(InvalidParameter, match=name):
        import_bytes(export(), file_name="x.csv", **kwargs)


def test_preamble_pieces_go_to_their_group():
    found = preamble_statements([(1, "Ventilation BTPS, VO2/VCO2 STPD"), (2, "Conditions: ATPS"), (3, "no words")])
    assert [(s.group, s.condition, s.line) for s in found] == [("ve", "btps", 1), ("gas", "stpd", 1), ("ve", "atps", 2)]
    found = preamble_statements([(4, "gas exchange: STPD")])
    assert [(s.group, s.condition) for s in found] == [("gas", "stpd")]
