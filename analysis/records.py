"""One generic, versioned JSON codec for every result record.

A result record is a frozen dataclass. Its fields say what it holds; each field's metadata
(made with :func:`described`) gives the unit, a description and, where one applies, the method
behind the number. :func:`to_json` writes any record from its fields, :func:`from_json`
reads it back from the field types, and :mod:`analysis.results.schema` writes the JSON
Schema and the tables of ``docs/results.md`` from the same fields. Adding a part to the
result is adding a field whose type is a record: codec, schema and docs follow.

Rules of the JSON form (common practice for JSON exchange):

* float NaN and +/-inf are written as ``null`` and read back as NaN for a ``float`` field
  (``None`` for a ``float | None`` field);
* tuples and lists are JSON arrays; ``dict[str, X]`` is a JSON object;
* a field's JSON key is its name unless the metadata names another (``key="time_s"``);
* read-only values computed from fields (:class:`derived`) are written, never read;
* types with their own versioned form (``to_dict()`` / ``from_dict()``, e.g. the settings) are
  written and read through it.
"""

from __future__ import annotations

import dataclasses
import math
import types
import typing
from collections.abc import Callable, Iterator, Mapping
from typing import Any, TypeVar, Union

import numpy as np

from analysis.errors import InvalidParameter

T = TypeVar("T")

_MISSING = dataclasses.MISSING


def described(
    *,
    unit: str = "",
    description: str = "",
    method: str = "",
    key: str | None = None,
    default: Any = _MISSING,
    default_factory: Any = _MISSING,
    json: bool = True,
) -> Any:
    """A record field with its unit, description and method (read by the codec and the docs).

    Parameters
    ----------
    unit : str, keyword-only
        Unit of the value as the reader sees it (``"mL/min"``; empty when dimensionless).
    description : str, keyword-only
        What the value is, in plain words.
    method : str, keyword-only
        How it is computed, with its source (``"Arena et al. 2007"``).
    key : str, optional, keyword-only
        JSON key when it differs from the field name.
    default, default_factory : keyword-only
        As for :func:`dataclasses.field`.
    json : bool, keyword-only
        ``False`` for a field that is not part of the JSON form (e.g. the averaged frame kept
        for the charts); it must then have a default.
    """
    meta = {"unit": unit, "description": description, "method": method, "key": key or "", "json": json}
    kwargs: dict[str, Any] = {"metadata": meta}
    if default is not _MISSING:
        kwargs["default"] = default
    if default_factory is not _MISSING:
        kwargs["default_factory"] = default_factory
    if not json:
        kwargs["compare"] = False
        kwargs["repr"] = False
    return dataclasses.field(**kwargs)


class derived(property):
    """A read-only value computed from a record's fields, written to JSON but never read back.

    Use as ``@derived(unit="mL/min", description="...")`` on a method without arguments.
    """

    def __init__(self, fget: Callable[[Any], Any] | None = None, *, unit: str = "", description: str = "",
                 method: str = "", key: str | None = None) -> None:
        super().__init__(fget)
        self.unit = unit
        self.description = description
        self.method = method
        self.key = key

    def __call__(self, fget: Callable[[Any], Any]) -> derived:
        return derived(fget, unit=self.unit, description=self.description, method=self.method, key=self.key)


@dataclasses.dataclass(frozen=True)
class FieldInfo:
    """One JSON key of a record: where it comes from and what it means."""

    name: str
    key: str
    type: Any
    unit: str
    description: str
    method: str
    derived: bool
    field: dataclasses.Field[Any] | None


_FIELDS: dict[type, tuple[FieldInfo, ...]] = {}


def record_fields(cls: type) -> tuple[FieldInfo, ...]:
    """The JSON keys of a record class, fields first (in order), then derived values."""
    known = _FIELDS.get(cls)
    if known is None:
        known = _FIELDS[cls] = _record_fields(cls)
    return known


def _record_fields(cls: type) -> tuple[FieldInfo, ...]:
    if not (isinstance(cls, type) and dataclasses.is_dataclass(cls)):
        raise InvalidParameter("cls", "a dataclass record type", cls)
    hints = typing.get_type_hints(cls)
    out: list[FieldInfo] = []
    for f in dataclasses.fields(cls):
        meta = f.metadata
        if meta.get("json") is False:
            continue
        out.append(
            FieldInfo(
                name=f.name,
                key=meta.get("key") or f.name,
                type=hints[f.name],
                unit=meta.get("unit", ""),
                description=meta.get("description", ""),
                method=meta.get("method", ""),
                derived=False,
                field=f,
            )
        )
    for klass in reversed(cls.__mro__):
        for name, attr in vars(klass).items():
            if isinstance(attr, derived):
                ret = typing.get_type_hints(attr.fget).get("return", Any) if attr.fget else Any
                info = FieldInfo(name, attr.key or name, ret, attr.unit, attr.description, attr.method, True, None)
                out = [i for i in out if i.name != name] + [info]
    return tuple(out)


def _is_record(obj: Any) -> bool:
    return dataclasses.is_dataclass(obj) and not isinstance(obj, type)


def _has_own_form(cls: Any) -> bool:
    return isinstance(cls, type) and callable(getattr(cls, "from_dict", None)) and callable(getattr(cls, "to_dict", None))


def to_json(obj: Any) -> Any:
    """Plain JSON types for a record (or any value a record holds).

    Parameters
    ----------
    obj : object
        A result record (frozen dataclass), or a value inside one.

    Returns
    -------
    object
        ``dict`` / ``list`` / ``str`` / ``int`` / ``float`` / ``bool`` / ``None`` only; NaN and
        infinities as ``None``. A record with a ``SCHEMA_VERSION`` class attribute gets a
        ``schema_version`` key first.

    Raises
    ------
    InvalidParameter
        A value that has no JSON form (e.g. a data frame in a field not marked ``json=False``).
    """
    kind = type(obj)
    if obj is None or kind is str or kind is bool or kind is int:
        return obj
    if kind is float:
        return obj if math.isfinite(obj) else None
    if _has_own_form(kind):
        return to_json(obj.to_dict())
    if _is_record(obj):
        out: dict[str, Any] = {}
        version = getattr(kind, "SCHEMA_VERSION", None)
        if version is not None:
            out["schema_version"] = version
        for info in record_fields(kind):
            out[info.key] = to_json(getattr(obj, info.name))
        return out
    if isinstance(obj, Mapping):
        return {str(k): to_json(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [to_json(v) for v in obj]
    if isinstance(obj, (bool, np.bool_)):
        return bool(obj)
    if isinstance(obj, np.integer):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        f = float(obj)
        return f if math.isfinite(f) else None
    if isinstance(obj, str):
        return str(obj)
    raise InvalidParameter("value", "a result record or plain value with a JSON form", type(obj).__name__)


def _optional_args(tp: Any) -> tuple[Any, ...] | None:
    origin = typing.get_origin(tp)
    if origin is Union or origin is types.UnionType:
        return typing.get_args(tp)
    return None


def _decode(tp: Any, data: Any, where: str) -> Any:
    if tp is Any or tp is object:
        return data
    union = _optional_args(tp)
    if union is not None:
        if data is None and type(None) in union:
            return None
        errors = []
        for arm in union:
            if arm is type(None):
                continue
            try:
                return _decode(arm, data, where)
            except InvalidParameter as exc:
                errors.append(exc)
        raise errors[0] if errors else InvalidParameter(where, "a value", data)
    origin = typing.get_origin(tp)
    if origin is typing.Literal:
        allowed = typing.get_args(tp)
        if data not in allowed:
            raise InvalidParameter(where, f"one of {list(allowed)}", data)
        return data
    if origin in (tuple, list):
        if not isinstance(data, list):
            raise InvalidParameter(where, "a JSON array", data)
        args = typing.get_args(tp)
        if origin is tuple and args and args[-1] is not Ellipsis:
            if len(args) != len(data):
                raise InvalidParameter(where, f"an array of {len(args)} values", data)
            return tuple(_decode(a, d, f"{where}[{i}]") for i, (a, d) in enumerate(zip(args, data, strict=True)))
        item = args[0] if args else Any
        items = [_decode(item, d, f"{where}[{i}]") for i, d in enumerate(data)]
        return tuple(items) if origin is tuple else items
    if origin in (dict, Mapping, typing.Mapping):
        if not isinstance(data, dict):
            raise InvalidParameter(where, "a JSON object", data)
        args = typing.get_args(tp)
        item = args[1] if len(args) == 2 else Any
        return {str(k): _decode(item, v, f"{where}.{k}") for k, v in data.items()}
    if tp is float:
        if data is None:
            return math.nan
        if isinstance(data, bool) or not isinstance(data, (int, float)):
            raise InvalidParameter(where, "a number", data)
        return float(data)
    if tp is int:
        if isinstance(data, bool) or not isinstance(data, int):
            raise InvalidParameter(where, "a whole number", data)
        return data
    if tp is bool:
        if not isinstance(data, bool):
            raise InvalidParameter(where, "true or false", data)
        return data
    if tp is str:
        if not isinstance(data, str):
            raise InvalidParameter(where, "text", data)
        return data
    if _has_own_form(tp):
        return tp.from_dict(data)
    if isinstance(tp, type) and dataclasses.is_dataclass(tp):
        return _decode_record(tp, data, where)
    raise InvalidParameter(where, "a type the result codec can read", tp)


def _decode_record(cls: type[T], data: Any, where: str) -> T:
    if not isinstance(data, dict):
        raise InvalidParameter(where, f"a JSON object for {cls.__name__}", data)
    kwargs: dict[str, Any] = {}
    for info in record_fields(cls):
        if info.derived:
            continue
        sub = f"{where}.{info.key}" if where else info.key
        if info.key in data:
            kwargs[info.name] = _decode(info.type, data[info.key], sub)
        elif info.field is not None and (
            info.field.default is _MISSING and info.field.default_factory is _MISSING
        ):
            raise InvalidParameter(sub, "present (a required key of the results JSON)", None)
    return cls(**kwargs)


def from_json(cls: type[T], data: Mapping[str, Any]) -> T:
    """Read a record of type ``cls`` back from :func:`to_json` output.

    Parameters
    ----------
    cls : type
        The record class (e.g. :class:`analysis.results.TestResults`).
    data : mapping
        Its JSON form.

    Returns
    -------
    record
        Equal to the record that was written (fields marked ``json=False`` take their default).

    Raises
    ------
    InvalidParameter
        A missing or mistyped key (named by its dotted path), or a ``schema_version`` this
        Tidemark does not read.
    """
    version = getattr(cls, "SCHEMA_VERSION", None)
    if version is not None:
        got = data.get("schema_version") if isinstance(data, Mapping) else None
        if got != version:
            raise InvalidParameter(
                "schema_version",
                f"results of layout version {version} (re-run the analysis to refresh older results)",
                got,
            )
    return _decode_record(cls, dict(data), "")


def walk_records(cls: type, seen: set[type] | None = None) -> Iterator[type]:
    """Every record class reachable from ``cls`` through its fields, ``cls`` first."""
    seen = set() if seen is None else seen
    if cls in seen:
        return
    seen.add(cls)
    yield cls
    for info in record_fields(cls):
        for inner in record_types_in(info.type):
            yield from walk_records(inner, seen)


def record_types_in(tp: Any) -> list[type]:
    """The record classes named in a type annotation (``X | None``, ``tuple[X, ...]``, ...)."""
    if _has_own_form(tp):
        return []
    if isinstance(tp, type) and dataclasses.is_dataclass(tp):
        return [tp]
    out: list[type] = []
    for arg in typing.get_args(tp):
        out.extend(record_types_in(arg))
    return out
