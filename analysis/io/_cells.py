"""Reading cell values: numbers with either decimal mark, times, and missing-value tokens.

A cell is the text of a CSV field or the value of a spreadsheet cell (number, text, time).
"""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Sequence
from typing import cast

import numpy as np
import pandas as pd

#: Cell texts read as "no value" (compared lower-case, after trimming).
MISSING_TOKENS: frozenset[str] = frozenset(
    {"", "-", "--", "---", "na", "n/a", "n.a.", "nan", "none", "null", "#n/a", "."}
)

_NUM = r"[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?"
NUMBER_RE = re.compile(_NUM)
_DOT_NUMBER = r"^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$"
TIME_RE = re.compile(r"[+-]?(?:\d+:)?\d+:\d{1,2}(?:[.,]\d*)?")
_TIME_PARTS = r"^(?P<sign>[+-]?)(?:(?P<h>\d+):)?(?P<m>\d+):(?P<s>\d{1,2}(?:\.\d*)?)$"
_COMMA_LINES = re.compile(r"^[ \t]*[+-]?\d*,\d+[ \t]*$", re.MULTILINE)
_DOT_LINES = re.compile(r"^[ \t]*[+-]?\d*\.\d+[ \t]*$", re.MULTILINE)

TIME_FORMATS: tuple[str, ...] = ("auto", "s", "min", "ms", "mm:ss", "h:mm:ss")


def _text(cell: object) -> str | None:
    if isinstance(cell, str):
        return cell.strip().replace("\u2212", "-")
    return None


def is_missing(cell: object) -> bool:
    """Empty cell or a missing-value token such as ``"-"`` or ``"n/a"``."""
    if cell is None:
        return True
    if isinstance(cell, float) and np.isnan(cell):
        return True
    t = _text(cell)
    return t is not None and t.lower() in MISSING_TOKENS


def is_value(cell: object) -> bool:
    """A number or a time, written as text or stored natively (spreadsheet)."""
    if isinstance(cell, bool):
        return False
    if isinstance(cell, (int, float, dt.time, dt.timedelta, dt.datetime)):
        return True
    t = _text(cell)
    return t is not None and bool(NUMBER_RE.fullmatch(t) or TIME_RE.fullmatch(t))


#: A cell that reads as a number or a time (either decimal mark; unicode minus allowed).
VALUE_RE = re.compile(rf"(?:{_NUM}|[+-]?(?:\d+:)?\d+:\d{{1,2}}(?:[.,]\d*)?)")


def detect_decimal(cells: Sequence[object]) -> str:
    """``','`` when more text cells use a decimal comma than a decimal point, else ``'.'``."""
    joined = "\n".join(c for c in cells if type(c) is str and "\n" not in c)
    comma = len(_COMMA_LINES.findall(joined))
    dot = len(_DOT_LINES.findall(joined))
    return "," if comma > dot else "."


def _series(values: Sequence[object]) -> pd.Series:
    return pd.Series(list(values), dtype=object)


def _is_num(v: object) -> bool:
    return isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, bool)


def _split_kinds(s: pd.Series) -> tuple[np.ndarray, np.ndarray]:
    values = s.tolist()
    n = len(values)
    is_str = np.fromiter((type(v) is str for v in values), dtype=bool, count=n)
    is_num = np.fromiter((type(v) is not str and _is_num(v) for v in values), dtype=bool, count=n)
    return is_str, is_num


def _none_or_nan(s: pd.Series) -> np.ndarray:
    values = s.tolist()
    return np.fromiter((v is None or (type(v) is float and v != v) for v in values), dtype=bool, count=len(values))


def _clean_text(s: pd.Series, *, decimal: str) -> tuple[pd.Series, pd.Series]:
    """Trimmed text with '.' as the decimal mark, and the missing-token mask."""
    t = s.astype(str).str.strip().str.replace("\u2212", "-", regex=False)
    missing = t.str.lower().isin(MISSING_TOKENS)
    if decimal == ",":
        t = t.str.replace(",", ".", regex=False)
    return t, missing


def _fast_column_re(decimal: str) -> re.Pattern[str]:
    num = rf"[+-]?(?:\d+(?:\{decimal}\d*)?|\{decimal}\d+)(?:[eE][+-]?\d+)?"
    return re.compile(rf"(?:{num})?(?:\n(?:{num})?)*")


_FAST_COLUMN = {".": _fast_column_re("."), ",": _fast_column_re(",")}
_PLAIN_CHARS = {d: frozenset("0123456789+-eE\n" + d) for d in (".", ",")}


def _parse_plain_column(values: Sequence[object], decimal: str) -> tuple[np.ndarray, np.ndarray, np.ndarray] | None:
    """Fast path: every cell is text that is a plain number or empty (the usual case)."""
    if not values or set(map(type, values)) != {str}:
        return None
    texts = cast("Sequence[str]", values)  # every cell is a str (checked just above)
    joined = "\n".join(texts)
    # Cells made only of digits, signs, exponents and this decimal mark: float() reads exactly
    # the ones the number pattern accepts and fails on the rest (then the pattern decides).
    plain = set(joined) <= _PLAIN_CHARS[decimal]
    if not plain and not _FAST_COLUMN[decimal].fullmatch(joined):
        return None
    cells = [v or "nan" for v in texts]
    if decimal == ",":
        cells = [v.replace(",", ".") for v in cells]
    try:
        out = np.array(cells, dtype=float)
    except ValueError:
        if not _FAST_COLUMN[decimal].fullmatch(joined):
            return None
        raise
    missing = np.isnan(out)  # only empty cells read as NaN: no cell here spells "nan"
    bad = ~np.isfinite(out) & ~missing  # e.g. 1e999
    out[bad] = np.nan
    return out, missing, bad


def parse_numbers(values: Sequence[object], *, decimal: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Parse cells as numbers.

    Returns
    -------
    values : ndarray of float
        NaN where missing or unreadable.
    missing : ndarray of bool
        Empty cells and missing-value tokens.
    bad : ndarray of bool
        Cells with content that is not a finite number (text, dates, ``inf``).
    """
    fast = _parse_plain_column(values, decimal)
    if fast is not None:
        return fast
    s = _series(values)
    n = len(s)
    out = np.full(n, np.nan)
    missing = _none_or_nan(s)
    bad = np.zeros(n, dtype=bool)
    is_str, is_num = _split_kinds(s)
    num_idx = np.flatnonzero(is_num & ~missing)
    if num_idx.size:
        out[num_idx] = s.iloc[num_idx].to_numpy(dtype=float, copy=True)
    str_idx = np.flatnonzero(is_str)
    if str_idx.size:
        raw = s.iloc[str_idx]
        t, miss = _clean_text(raw, decimal=decimal)
        ok = t.str.match(_DOT_NUMBER).to_numpy(dtype=bool, copy=True)
        if decimal == ",":
            # "2.345" in a decimal-comma file may be 2345 or 2.345: refuse to guess
            ok &= ~raw.astype(str).str.contains(".", regex=False).to_numpy(dtype=bool, copy=True)
        miss_a = miss.to_numpy(dtype=bool, copy=True)
        good = ok & ~miss_a
        parsed = np.full(str_idx.size, np.nan)
        if good.any():
            parsed[good] = t[good].to_numpy(dtype=float, copy=True)
        out[str_idx] = parsed
        missing[str_idx] = miss_a
        bad[str_idx] = ~ok & ~miss_a
    other = ~is_str & ~is_num & ~missing
    bad |= other
    finite = np.isfinite(out)
    bad |= ~finite & ~missing
    out[bad] = np.nan
    return out, missing, bad


def _time_of(value: object, origin: list[dt.date]) -> float | None:
    if isinstance(value, dt.datetime):
        if not origin:
            origin.append(value.date())
        day = (value.date() - origin[0]).days
        return day * 86400.0 + value.hour * 3600 + value.minute * 60 + value.second + value.microsecond / 1e6
    if isinstance(value, dt.time):
        return value.hour * 3600.0 + value.minute * 60 + value.second + value.microsecond / 1e6
    if isinstance(value, dt.timedelta):
        return value.total_seconds()
    return None


def parse_times(
    values: Sequence[object], *, decimal: str, time_format: str = "auto", unit: str | None = None
) -> tuple[np.ndarray, np.ndarray, np.ndarray, str]:
    """Parse a time column to seconds.

    Text with colons is ``m:ss`` (one colon) or ``h:mm:ss`` (two), with optional fractional
    seconds; seconds must be below 60 (and minutes below 60 when hours are given). Plain
    numbers are seconds unless ``time_format`` (or the header ``unit``) says ``min`` or ``ms``.
    Spreadsheet time values are converted directly.

    Returns
    -------
    seconds, missing, bad, detected_format
        ``detected_format`` is one of ``'s'``, ``'min'``, ``'ms'``, ``'mm:ss'``, ``'h:mm:ss'``.
    """
    s = _series(values)
    n = len(s)
    out = np.full(n, np.nan)
    missing = _none_or_nan(s)
    bad = np.zeros(n, dtype=bool)
    plain_format = time_format if time_format in ("s", "min", "ms") else (unit if unit in ("s", "min", "ms") else "s")
    plain_factor = {"s": 1.0, "min": 60.0, "ms": 0.001}[plain_format]
    counts = {"plain": 0, "mm:ss": 0, "h:mm:ss": 0}

    is_str, is_num = _split_kinds(s)
    num_idx = np.flatnonzero(is_num & ~missing)
    if time_format in ("mm:ss", "h:mm:ss"):
        bad[num_idx] = True
    elif num_idx.size:
        out[num_idx] = s.iloc[num_idx].to_numpy(dtype=float, copy=True) * plain_factor
        counts["plain"] += num_idx.size
    str_idx = np.flatnonzero(is_str)
    if str_idx.size:
        t, miss = _clean_text(s.iloc[str_idx], decimal=decimal)
        t = t.str.replace(r"^([^,]*:\d{1,2}),(\d*)$", r"\1.\2", regex=True)  # "1:05,5": comma fraction
        miss_a = miss.to_numpy(dtype=bool, copy=True)
        parsed = np.full(str_idx.size, np.nan)
        is_plain = t.str.match(_DOT_NUMBER).to_numpy(dtype=bool, copy=True) & ~miss_a
        if time_format in ("mm:ss", "h:mm:ss"):
            is_plain[:] = False  # plain numbers are not what the caller said the column holds
        if is_plain.any():
            parsed[is_plain] = t[is_plain].to_numpy(dtype=float, copy=True) * plain_factor
            counts["plain"] += int(is_plain.sum())
        parts = t.str.extract(_TIME_PARTS)
        has_colon = parts["m"].notna().to_numpy(dtype=bool, copy=True) & ~miss_a
        if has_colon.any():
            p = parts[has_colon]
            h = pd.to_numeric(p["h"]).fillna(0).to_numpy(dtype=float, copy=True)
            m = pd.to_numeric(p["m"]).to_numpy(dtype=float, copy=True)
            sec = pd.to_numeric(p["s"]).to_numpy(dtype=float, copy=True)
            with_h = p["h"].notna().to_numpy(dtype=bool, copy=True)
            sign = np.where(p["sign"].to_numpy() == "-", -1.0, 1.0)
            valid = (sec < 60) & ~(with_h & (m >= 60))
            seconds = sign * (h * 3600 + m * 60 + sec)
            seconds[~valid] = np.nan
            parsed[has_colon] = seconds
            counts["h:mm:ss"] += int(with_h.sum())
            counts["mm:ss"] += int((~with_h).sum())
        out[str_idx] = parsed
        missing[str_idx] = miss_a
        bad[str_idx] = ~miss_a & np.isnan(parsed)
    other_idx = np.flatnonzero(~is_str & ~is_num & ~missing)
    origin: list[dt.date] = []
    for i in other_idx:
        sec_value = _time_of(s.iloc[i], origin)
        if sec_value is None:
            bad[i] = True
        else:
            out[i] = sec_value
            counts["h:mm:ss"] += 1
    bad |= ~np.isfinite(out) & ~missing
    out[bad] = np.nan
    if counts["h:mm:ss"] + counts["mm:ss"] > counts["plain"]:
        detected = "h:mm:ss" if counts["h:mm:ss"] >= counts["mm:ss"] else "mm:ss"
    else:
        detected = plain_format
    return out, missing, bad, detected


def text_values(values: Sequence[object]) -> list[str | None]:
    """Cells of a text column (phase, marker): trimmed text, ``None`` when missing."""
    if all(type(v) is str for v in values):  # the usual case: CSV text, read without is_missing
        out_text: list[str | None] = []
        for cell in cast("Sequence[str]", values):
            t = cell.strip()
            out_text.append(None if t.replace("\u2212", "-").lower() in MISSING_TOKENS else t)
        return out_text
    out: list[str | None] = []
    for v in values:
        if is_missing(v):
            out.append(None)
        elif isinstance(v, float) and v.is_integer():
            out.append(str(int(v)))
        else:
            text = str(v).strip()
            out.append(text or None)
    return out
