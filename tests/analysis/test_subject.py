"""One sex normaliser for every layer: the table of spellings and what each layer does with it."""

from __future__ import annotations

import pytest

from analysis.errors import InvalidParameter
from analysis.reference import friend_vo2max_ml_kg_min
from analysis.settings import MetadataOverrides
from analysis.subject import SEX_SPELLINGS, SEXES, normalise_sex, reference_sex

# The spellings the lab's exports and forms use (common practice; English, German, French,
# Spanish, Italian, Dutch and Portuguese words and their usual one-letter codes).
TABLE = [
    ("male", "male"), ("Male", "male"), ("M", "male"), (" m ", "male"), ("man", "male"),
    ("männlich", "male"), ("Maennlich", "male"), ("homme", "male"), ("H", "male"),
    ("hombre", "male"), ("masculino", "male"), ("maschio", "male"), ("mannelijk", "male"),
    ("female", "female"), ("FEMALE", "female"), ("F", "female"), ("woman", "female"),
    ("W", "female"), ("weiblich", "female"), ("Frau", "female"), ("femme", "female"),
    ("féminin", "female"), ("mujer", "female"), ("femenino", "female"), ("femmina", "female"),
    ("V", "female"), ("vrouw", "female"),
    ("other", "other"), ("divers", "other"), ("diverse", "other"), ("X", "other"),
    ("non-binary", "other"), ("D", "other"),
    (None, None), ("", None), ("   ", None),
]


@pytest.mark.parametrize("text, meaning", TABLE)
def test_table_of_spellings(text, meaning):
    assert normalise_sex(text) == meaning


@pytest.mark.parametrize("text", ["1", "2", "0", "banana", "mf", "male/female", "?"])
def test_unknown_spellings_and_numeric_codes_are_refused(text):
    # numeric codes are refused on purpose: exports differ on which number means what
    with pytest.raises(InvalidParameter, match="sex"):
        normalise_sex(text)


@pytest.mark.parametrize("value", [1, 2.0, True, ["m"]])
def test_non_text_is_refused(value):
    with pytest.raises(InvalidParameter, match="sex"):
        normalise_sex(value)


def test_every_spelling_is_lower_case_and_means_one_of_the_sexes():
    assert set(SEX_SPELLINGS.values()) == set(SEXES)
    assert all(s == s.strip().lower() for s in SEX_SPELLINGS)


def test_the_two_disagreements_are_gone():
    # "woman" was female for the reference values but "other" in the store; "W" was female in the
    # store but an error in the analysis. Both now read as female everywhere.
    assert normalise_sex("woman") == reference_sex("woman") == "female"
    assert normalise_sex("W") == reference_sex("W") == "female"
    assert MetadataOverrides(sex="W").sex == "female"


@pytest.mark.parametrize("text", ["other", "x", "", None])
def test_reference_equations_need_male_or_female(text):
    with pytest.raises(InvalidParameter, match="male or female for a sex-specific reference equation"):
        reference_sex(text)


def test_reference_sex_refuses_unknown_text_with_the_spellings():
    with pytest.raises(InvalidParameter, match="männlich / weiblich"):
        reference_sex("banana")


def test_friend_reads_any_spelling_the_same():
    # de Souza e Silva et al. 2018 (FRIEND): the sex term is the same for every spelling of female
    kw = dict(age_y=30, body_mass_kg=132 / 2.2046226218, height_cm=162.56, mode="cycle")
    values = {friend_vo2max_ml_kg_min(sex=s, **kw) for s in ("female", "F", "W", "weiblich", "femme")}
    assert len(values) == 1
    # FRIEND by hand for this woman (see tests/analysis/reference): 35.70 mL/kg/min
    assert values.pop() == pytest.approx(35.70, abs=1e-4)


@pytest.mark.parametrize("text, meaning", [(t, m) for t, m in TABLE if t is not None and t.strip()])
def test_every_layer_reads_the_same_table(text, meaning):
    # the importer's preamble reader and the dashboard's details form agree with normalise_sex
    from analysis.io.preamble import read_preamble_item
    from dashboard.subject_details import form_defaults

    item = read_preamble_item(3, ["Sex", text])
    assert item is not None and item.key == "sex"
    assert item.value == {"male": "M", "female": "F", "other": "other"}[meaning]
    assert form_defaults({"sex": text})["sex"] == {"male": "M", "female": "F", "other": ""}[meaning]
