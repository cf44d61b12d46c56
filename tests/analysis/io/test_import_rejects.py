"""Generic import: every rejected file says which file, line and column, and what to do."""

from __future__ import annotations

import pytest

from analysis.errors import ImportRejected, InvalidParameter
from analysis.io import ColumnMapping, import_bytes

HEAD = b"Time,VO2,VCO2,VE,HR\n"


def _reject(data: bytes, match: str, **kwargs) -> ImportRejected:
    with pytest.raises(ImportRejected, match=match) as info:
        import_bytes(data, file_name="cart.csv", **kwargs)
    assert "file 'cart.csv'" in str(info.value)
    return info.value


@pytest.mark.parametrize(
    ("data", "match"),
    [
        (b"", "the file is empty"),
        (b"\n\n  \n", "only blank lines"),
        (b"0,300,250,10\n3,310,260,11\n", r"line 1: no header row above the numbers"),
        (b"just some words\nand more words\n", "no table of numbers"),
        (b"Time,Oxygen,VCO2,VE\n0,300,250,10\n", r"required column\(s\) not found: VO2 \(vo2_ml_min\); the columns are: 'Time', 'Oxygen'"),
        (HEAD + b"0,300,250,10,80\n3,3O0,260,11,80\n6,310,260,11,80\n", r"line 3, column 'VO2': '3O0' is not a number"),
        (HEAD + b"0,300,250,10,80\n3,310,260,11,eighty\n6,310,260,11,80\n", r"line 3, column 'HR': 'eighty' is not a number"),
        (HEAD + b"0,300,250,10,80\n3,,260,11,80\n", r"line 3, column 'VO2': the required VO2 value is empty"),
        (HEAD + b"0,300,250,10,80\n6,310,260,11,80\n3,310,260,11,80\n", r"line 4, column 'Time': time goes backwards \(3 s after 6 s on line 3\)"),
        (HEAD + b"0,300,250,10,80\n3,310,-5,11,80\n", r"line 3, column 'VCO2': VCO2 -5 mL/min is impossible"),
        (HEAD + b"0,300,250,10,80\n3,310,260,11,300\n", r"line 3, column 'HR': Heart rate 300 beats/min is impossible"),
        (HEAD + b"0,300,250,10,80\n3,300,950,11,80\n", r"line 3, column 'VCO2': RER \(VCO2/VO2\) is 3.17, above 3"),
        (HEAD + b"0,300,250,10,80\n3,0:3x,260,11,80\n", r"line 3, column 'VO2'"),
        (HEAD + b"0,300,250,10,80\n0:0x,300,250,10,80\n3,310,260,11,80\n", r"line 3, column 'Time': '0:0x' is not a time"),
        (b"Time,VO2 (ml/kg/min),VCO2,VE\n0,5,250,10\n", r"required column\(s\) not found: VO2"),
        (b"PK\x03\x04garbage", "damaged|not a readable .xlsx"),
        (b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + b"\x00" * 50, r"old-style Excel \.xls"),
        (b"Time,VO2\x00,VCO2\n", r"line 1: the file contains NUL bytes"),
        (b"Time,VO2,VCO2,VE\n0,300,250,10\x07\n", r"line 2: the file contains the control character U\+0007"),
        (b"\x81\x8d\x8f\x90\x9d", "neither UTF-8 nor Windows-1252"),
        (b'Time,VO2,VCO2,VE\n0,300,250,10\n3,"310,260,11\n', "unclosed quotation mark|not a number|cannot be split"),
    ],
)
def test_rejections(data, match):
    _reject(data, match)


def test_vo2_over_10_l_min_rejected_with_unit_hint():
    # limit from analysis/columns.py (VO2 above 10 L/min is not a human value)
    err = _reject(b"Time,VO2 (L/min),VCO2 (L/min),VE\n0,0.3,0.25,10\n3,10.5,3.1,11\n", r"line 3, column 'VO2 \(L/min\)': VO2 10500 mL/min is impossible")
    assert "read as L/min" in str(err)


def test_size_limit():
    _reject(HEAD + b"0,300,250,10,80\n" * 10, "larger than the", max_bytes=50)


def test_rows_after_a_broken_line_are_not_dropped():
    data = HEAD + b"0,300,250,10,80\n3,310,260,11,80\nTime,VO2,VCO2,VE,HR\n6,320,270,12,81\n9,330,280,13,82\n"
    _reject(data, r"line 4: the table stops at line 4, but line\(s\) 5-6 after it look like more breaths")


def test_per_kg_column_mapped_explicitly_is_refused():
    data = b"Time,VO2/kg,VCO2,VE\n0,5,250,10\n"
    _reject(data, r"column 'VO2/kg'.*per kilogram", mapping=ColumnMapping({"VO2/kg": "vo2_ml_min"}))


def test_at_most_ten_problems_and_a_count():
    rows = b"".join(b"%d,x%d,250,10,80\n" % (i, i) for i in range(30))
    err = _reject(HEAD + rows, "is not a number")
    assert len(err.problems) == 11
    assert "20 more" in err.problems[-1].message
    assert [p.row for p in err.problems[:10]] == list(range(2, 12))


def test_bad_arguments_are_invalid_parameter():
    with pytest.raises(InvalidParameter, match="gas_unit"):
        import_bytes(HEAD, file_name="a.csv", gas_unit="kg")
    with pytest.raises(InvalidParameter, match="time_format"):
        import_bytes(HEAD, file_name="a.csv", time_format="hours")
    with pytest.raises(InvalidParameter, match="column mapping target"):
        ColumnMapping({"VO2": "oxygen"})
    with pytest.raises(InvalidParameter, match="one source column"):
        ColumnMapping({"A": "vo2_ml_min", "B": "vo2_l_min"})
    with pytest.raises(InvalidParameter, match="unit of hr_bpm"):
        ColumnMapping({"HR": "hr_bpm"}, {"hr_bpm": "l_min"})


def test_mixed_decimal_marks_are_rejected_with_location():
    data = b"Time;VO2;VCO2;VE\n0;300,5;250,1;10,2\n3;2.345;260,1;11,4\n"
    _reject(data, r"line 3, column 'VO2': '2.345' is not a number .*one decimal mark")


def test_semicolon_numbers_without_header_are_pointed_at():
    _reject(b"1;2;3;4\n5;6;7;8\n", r"line 1: no header row above the numbers that start on line 1")
