"""The JSON Schema and the key tables of ``docs/results.md``, generated from the result records.

Both are written from the same field declarations the codec reads (:mod:`analysis.records`),
so a new part or field appears in the schema and the docs by regenerating them::

    python -m analysis.results.schema            # rewrite docs/results.schema.json and the tables
    python -m analysis.results.schema --check    # exit 1 when the committed files are stale

A test runs the check, so stale docs fail the suite.
"""

from __future__ import annotations

import argparse
import dataclasses
import json
import re
import sys
import types
import typing
from pathlib import Path
from typing import Any

from analysis.records import FieldInfo, record_fields, walk_records
from analysis.results.test_results import RESULTS_SCHEMA_VERSION, TestResults

#: Markers around the generated part of docs/results.md.
BEGIN = "<!-- generated from the result records: python -m analysis.results.schema; do not edit by hand -->"
END = "<!-- end of generated part -->"

SCHEMA_FILE = Path("docs") / "results.schema.json"
DOCS_FILE = Path("docs") / "results.md"


def _own_form(tp: Any) -> bool:
    return isinstance(tp, type) and callable(getattr(tp, "from_dict", None)) and callable(getattr(tp, "to_dict", None))


def _type_schema(tp: Any) -> dict[str, Any]:
    """JSON Schema of one annotated type (NaN-able floats allow ``null``)."""
    if tp is Any:
        return {}
    origin = typing.get_origin(tp)
    args = typing.get_args(tp)
    if origin in (typing.Union, types.UnionType):
        arms = [a for a in args if a is not type(None)]
        inner = _type_schema(arms[0]) if len(arms) == 1 else {"anyOf": [_type_schema(a) for a in arms]}
        if type(None) in args:
            if "$ref" in inner or "anyOf" in inner or "enum" in inner:
                return {"anyOf": [inner, {"type": "null"}]}
            t = inner.get("type")
            inner = {**inner, "type": sorted({*(t if isinstance(t, list) else [t]), "null"})}
        return inner
    if origin is typing.Literal:
        return {"enum": list(args)}
    if origin in (tuple, list):
        if origin is tuple and args and args[-1] is not Ellipsis:
            return {"type": "array", "prefixItems": [_type_schema(a) for a in args], "minItems": len(args),
                    "maxItems": len(args)}
        return {"type": "array", "items": _type_schema(args[0]) if args else {}}
    if origin is dict:
        return {"type": "object", "additionalProperties": _type_schema(args[1]) if len(args) == 2 else {}}
    if tp is float:
        return {"type": ["number", "null"]}  # NaN and infinities are written as null
    if tp is int:
        return {"type": "integer"}
    if tp is bool:
        return {"type": "boolean"}
    if tp is str:
        return {"type": "string"}
    if _own_form(tp):
        return {"type": "object", "description": f"{tp.__name__}.to_dict() (its own versioned form)"}
    if isinstance(tp, type) and dataclasses.is_dataclass(tp):
        return {"$ref": f"#/$defs/{tp.__name__}"}
    return {}


def _docstring_attributes(cls: type) -> dict[str, str]:
    """``name -> text`` from the numpydoc Attributes section of a class docstring (fallback text)."""
    doc = cls.__doc__ or ""
    m = re.search(r"Attributes\n\s*-+\n(.*?)(?:\n\s*\n\s*[A-Z][a-z]+\n\s*-+|\Z)", doc, re.S)
    if not m:
        return {}
    out: dict[str, str] = {}
    names: list[str] = []
    for line in m.group(1).splitlines():
        head = re.match(r"^    ([\w, ]+?) :", line)
        if head:
            names = [n.strip() for n in head.group(1).split(",")]
            for n in names:
                out[n] = ""
        elif line.strip() and names:
            for n in names:
                out[n] = (out[n] + " " + line.strip()).strip()
    return {k: v.replace("``", "`") for k, v in out.items()}


def _described(cls: type) -> list[FieldInfo]:
    """The record's fields, with the docstring's text where a field has no description."""
    fallback = _docstring_attributes(cls)
    return [
        info if info.description else dataclasses.replace(info, description=fallback.get(info.name, ""))
        for info in record_fields(cls)
    ]


def _describe(info: FieldInfo) -> str:
    text = info.description
    if info.unit:
        text += f" [{info.unit}]"
    if info.method:
        text += f" ({info.method})"
    return text.strip()


def _record_schema(cls: type) -> dict[str, Any]:
    props: dict[str, Any] = {}
    for info in _described(cls):
        schema = _type_schema(info.type)
        text = _describe(info)
        if text:
            schema = {**schema, "description": text}
        if info.derived:
            schema = {**schema, "readOnly": True}
        props[info.key] = schema
    return {
        "type": "object",
        "description": _plain_doc(cls),
        "properties": props,
        "required": list(props),
    }


def json_schema() -> dict[str, Any]:
    """JSON Schema (draft 2020-12) of ``to_json(TestResults)``."""
    defs = {cls.__name__: _record_schema(cls) for cls in walk_records(TestResults) if cls is not TestResults}
    top = _record_schema(TestResults)
    top["properties"] = {"schema_version": {"const": RESULTS_SCHEMA_VERSION}, **top["properties"]}
    top["required"] = ["schema_version", *top["required"]]
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": "https://tidemark.invalid/results.schema.json",
        "title": f"Tidemark analysis results, layout version {RESULTS_SCHEMA_VERSION}",
        **top,
        "$defs": defs,
    }


def _type_words(tp: Any) -> str:
    origin = typing.get_origin(tp)
    args = typing.get_args(tp)
    if origin in (typing.Union, types.UnionType):
        arms = [a for a in args if a is not type(None)]
        words = " or ".join(_type_words(a) for a in arms)
        return f"{words} or null" if type(None) in args else words
    if origin is typing.Literal:
        return "text"
    if origin in (tuple, list):
        if origin is tuple and args and args[-1] is not Ellipsis:
            return f"[{', '.join(_type_words(a) for a in args)}]"
        return f"list of {_type_words(args[0]) if args else 'values'}"
    if origin is dict:
        return f"object of {_type_words(args[1])}" if len(args) == 2 else "object"
    names = {float: "number", int: "whole number", bool: "true/false", str: "text"}
    if tp in names:
        return names[tp]
    if isinstance(tp, type):
        return f"`{tp.__name__}`"
    return "value"


def _plain_doc(cls: type) -> str:
    """First paragraph of a class docstring without Sphinx roles."""
    doc = " ".join(((cls.__doc__ or "").strip().split("\n\n")[0]).split())
    return re.sub(r":\w+:`~?([^`]+)`", r"`\1`", doc).replace("``", "`")


def _cell(text: str) -> str:
    return text.replace("|", "\\|").replace("\n", " ")


def results_tables() -> str:
    """The generated part of docs/results.md: one table per record, top level first."""
    out = [BEGIN, "", f"Layout version (`schema_version`): **{RESULTS_SCHEMA_VERSION}**. Machine-readable: "
           "[`results.schema.json`](results.schema.json). Every key is always present (`null` when not "
           "computable); keys marked *derived* repeat a value held elsewhere in the record and are "
           "written, never read back.", ""]
    for cls in walk_records(TestResults):
        title = "Top level (`TestResults`)" if cls is TestResults else f"`{cls.__name__}`"
        doc = _plain_doc(cls)
        out += [f"### {title}", "", doc, "", "| key | type | unit | meaning |", "|---|---|---|---|"]
        if cls is TestResults:
            out.append(f"| `schema_version` | whole number | – | layout version of this JSON ({RESULTS_SCHEMA_VERSION}) |")
        for info in _described(cls):
            meaning = info.description + (f" ({info.method})" if info.method else "")
            if info.derived:
                meaning = f"*derived*: {meaning}"
            out.append(
                f"| `{info.key}` | {_cell(_type_words(info.type))} | {_cell(info.unit) or '–'} | {_cell(meaning)} |"
            )
        out.append("")
    out.append(END)
    return "\n".join(out)


def _docs_text(current: str) -> str:
    if BEGIN not in current or END not in current:
        raise ValueError(f"{DOCS_FILE} has no generated part (markers {BEGIN!r} ... {END!r})")
    head, rest = current.split(BEGIN, 1)
    _, tail = rest.split(END, 1)
    return head + results_tables() + tail


def schema_text() -> str:
    """The text of docs/results.schema.json."""
    return json.dumps(json_schema(), indent=2, ensure_ascii=False) + "\n"


def stale_files(root: Path) -> list[str]:
    """The generated files under ``root`` that differ from what the records give."""
    stale = []
    if not (root / SCHEMA_FILE).exists() or (root / SCHEMA_FILE).read_text(encoding="utf-8") != schema_text():
        stale.append(str(SCHEMA_FILE))
    docs = (root / DOCS_FILE).read_text(encoding="utf-8")
    if _docs_text(docs) != docs:
        stale.append(str(DOCS_FILE))
    return stale


def write_generated(root: Path) -> None:
    """Rewrite docs/results.schema.json and the generated part of docs/results.md under ``root``."""
    (root / SCHEMA_FILE).write_text(schema_text(), encoding="utf-8")
    docs = root / DOCS_FILE
    docs.write_text(_docs_text(docs.read_text(encoding="utf-8")), encoding="utf-8")


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Write (or check) the results schema and docs tables.")
    parser.add_argument("--check", action="store_true", help="only report stale files (exit 1 when any)")
    parser.add_argument("--root", type=Path, default=Path("."), help="repository folder (default: here)")
    args = parser.parse_args(argv)
    if args.check:
        stale = stale_files(args.root)
        for name in stale:
            print(f"stale: {name} (run: python -m analysis.results.schema)", file=sys.stderr)
        return 1 if stale else 0
    write_generated(args.root)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
