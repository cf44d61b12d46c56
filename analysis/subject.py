"""Facts about the person tested, read the same way by every layer: sex.

One table of spellings serves the reference equations, the store's person records and the
dashboard. The session's own metadata keeps the text as written in the file (nothing is lost);
these functions say what that text means.

Accepted spellings (case and surrounding spaces ignored; common practice in the labs' own
languages, not from a single source):

============  =================================================================================
meaning       spellings
============  =================================================================================
``male``      m, ♂, male, man, men's, h (homme/hombre), männlich, maennlich, mannlich, mann, homme,
              masculin, hombre, masculino, maschio, maschile, uomo, mannelijk
``female``    f, ♀, female, woman, women's, w (weiblich), v (vrouw), weiblich, frau, femme, féminin,
              feminin, mujer, femenino, feminino, femmina, femminile, donna, vrouw, vrouwelijk
``other``     other, diverse, divers, d, x, non-binary, nonbinary, intersex, inter
============  =================================================================================

Numeric codes (``1``/``2``, ``0``/``1``) are refused: exports differ on which number means what.
A blank value means "not recorded" (``None``).
"""

from __future__ import annotations

from typing import Literal, get_args

from analysis.errors import InvalidParameter

Sex = Literal["female", "male", "other"]
#: Sexes a sex-specific reference equation is defined for.
ReferenceSex = Literal["female", "male"]
SEXES: tuple[Sex, ...] = get_args(Sex)

_SPELLINGS: dict[Sex, tuple[str, ...]] = {
    "male": (
        "m", "♂", "male", "man", "men's", "h", "männlich", "maennlich", "mannlich", "mann", "homme", "masculin",
        "hombre", "masculino", "maschio", "maschile", "uomo", "mannelijk",
    ),
    "female": (
        "f", "♀", "female", "woman", "women's", "w", "v", "weiblich", "frau", "femme", "féminin", "feminin",
        "mujer", "femenino", "feminino", "femmina", "femminile", "donna", "vrouw", "vrouwelijk",
    ),
    "other": ("other", "diverse", "divers", "d", "x", "non-binary", "nonbinary", "intersex", "inter"),
}

#: Every accepted spelling (lower case) -> its meaning.
SEX_SPELLINGS: dict[str, Sex] = {spelling: sex for sex, spellings in _SPELLINGS.items() for spelling in spellings}

_EXPECTED = "male, female or other (or M / F / W, männlich / weiblich, homme / femme), or blank when not recorded"


def normalise_sex(value: object) -> Sex | None:
    """The meaning of a sex entry: ``"male"``, ``"female"``, ``"other"``, or ``None`` when blank.

    Parameters
    ----------
    value : str or None
        The text as written (a file's metadata, a form, a command-line option).

    Returns
    -------
    {"male", "female", "other"} or None
        ``None`` for ``None`` or blank text (not recorded).

    Raises
    ------
    InvalidParameter
        For text that is not one of the accepted spellings (see the module's table).

    Examples
    --------
    >>> normalise_sex(" W "), normalise_sex("Homme"), normalise_sex("divers"), normalise_sex("")
    ('female', 'male', 'other', None)
    """
    if value is None:
        return None
    if not isinstance(value, str):
        raise InvalidParameter("sex", _EXPECTED, value)
    key = value.strip().lower()
    if not key:
        return None
    try:
        return SEX_SPELLINGS[key]
    except KeyError:
        raise InvalidParameter("sex", _EXPECTED, value) from None


def reference_sex(value: object) -> ReferenceSex:
    """``"male"`` or ``"female"`` for a sex-specific reference equation (e.g. FRIEND).

    The equations were fitted on people recorded as male or female; for ``"other"`` or a blank
    entry there is no defined prediction, so the caller is told what to enter instead.

    Raises
    ------
    InvalidParameter
        Blank, ``"other"`` or an unknown spelling.

    Examples
    --------
    >>> reference_sex("weiblich"), reference_sex("M")
    ('female', 'male')
    """
    sex = normalise_sex(value)
    if sex == "male" or sex == "female":
        return sex
    raise InvalidParameter(
        "sex",
        "male or female for a sex-specific reference equation (enter the sex the equation should use "
        "in the test's metadata for the analysis)",
        value,
    )
