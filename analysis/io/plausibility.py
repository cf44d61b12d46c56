"""Checks of an imported test that do not reject it but ask the reviewer to look again.

An exercise test — rest, warm-up, the exercise itself and recovery — takes well under an hour
(the ramp is aimed at 8-12 min of exercise, ATS/ACCP statement on cardiopulmonary exercise
testing, Am J Respir Crit Care Med 2003;167:211-277). A file that spans many hours usually has
its time column read in the wrong unit (minutes or milliseconds taken as seconds) or holds a
whole day's recording; the import is kept but the reviewer is told.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

#: A recording longer than this (seconds) gets a plausibility warning: two hours, twice the
#: longest usual test with a long rest and recovery (common practice).
LONGEST_PLAUSIBLE_TEST_S: float = 2 * 3600.0


def format_duration(seconds: float) -> str:
    """``79200`` -> ``'22 h 00 min'``; ``754`` -> ``'12:34 min'`` (m:ss under an hour).

    Examples
    --------
    >>> format_duration(79200.0)
    '22 h 00 min'
    >>> format_duration(754.0)
    '12:34 min'
    """
    total = round(float(seconds))
    if total >= 3600:
        return f"{total // 3600} h {total % 3600 // 60:02d} min"
    return f"{total // 60}:{total % 60:02d} min"


def duration_warning(t_s: Sequence[float] | np.ndarray, *, limit_s: float = LONGEST_PLAUSIBLE_TEST_S) -> str | None:
    """A warning when the breaths span more than ``limit_s`` seconds, else ``None``.

    Parameters
    ----------
    t_s : sequence of float
        Breath times in seconds as imported.
    limit_s : float
        Longest span accepted without a warning (default two hours).

    Examples
    --------
    >>> duration_warning([0.0, 79200.0]) is not None
    True
    >>> duration_warning([0.0, 900.0]) is None
    True
    """
    values = np.asarray(t_s, dtype=float)
    values = values[np.isfinite(values)]
    if values.size < 2:
        return None
    span = float(values.max() - values.min())
    if span <= limit_s:
        return None
    return (
        f"The breaths span {format_duration(span)}, far longer than an exercise test with rest and recovery "
        f"(usually under an hour). Check that the time column was read in the right unit (seconds, minutes, "
        f"milliseconds or m:ss) and that the file holds one test."
    )
