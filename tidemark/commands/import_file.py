"""``tidemark import``: turn one cart export into a session file, keeping the original.

Writes ``<out>/<stem>.session.csv`` and ``<out>/originals/<file name>`` (byte for byte), then
prints what was read and how. ``--out`` defaults to the current folder.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from analysis.errors import ImportRejected, InvalidParameter, Problem, name_list, quoted
from analysis.io import (
    DEFAULT_MAX_BYTES,
    GAS_UNITS,
    TIME_FORMATS,
    ColumnMapping,
    describe_outcome,
    file_kind,
    import_bytes,
    list_sheets,
    load_profile,
    read_input_file,
    save_profile,
)
from analysis.io.plausibility import duration_warning
from analysis.io.saving import save_import


def add_parser(subparsers: argparse._SubParsersAction) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "import",
        description=(
            "Read one breath-by-breath export, check it, and write OUT/<name>.session.csv plus an "
            "unchanged copy in OUT/originals/. Nothing is written when the file is rejected."
        ),
    )
    p.add_argument("file", type=Path, help="the export file")
    p.add_argument("--out", type=Path, default=Path("."), help="output folder (default: the current folder)")
    p.add_argument(
        "--map",
        action="append",
        default=[],
        metavar="HEADER=COLUMN",
        help="use the column HEADER as COLUMN (e.g. \"Oxygen=vo2_ml_min\", \"O2 L=vo2_l_min\", \"Notes=ignore\"); repeatable",
    )
    p.add_argument("--sheet", help="worksheet of an .xlsx file: its name, or its number (1 = first)")
    p.add_argument("--gas-unit", choices=GAS_UNITS, default="auto", help="unit of VO2 and VCO2 (default: auto)")
    p.add_argument("--time-format", choices=TIME_FORMATS, default="auto", help="how time is written (default: auto)")
    p.add_argument(
        "--ve-condition",
        choices=("auto", "btps", "stpd", "atps"),
        default="auto",
        help="condition the ventilation (VE, tidal volume) was measured in; default: as the file states it, else BTPS. "
        "STPD and ATPS values are converted to BTPS",
    )
    p.add_argument("--barometric-mmhg", type=float, help="barometric pressure during the test, mmHg (to convert STPD/ATPS)")
    p.add_argument("--ambient-c", type=float, help="room temperature during the test, °C (to convert ATPS)")
    p.add_argument("--profile", type=Path, help="read column choices from a mapping profile (JSON)")
    p.add_argument("--save-profile", type=Path, help="save the column choices used as a mapping profile (JSON)")
    p.add_argument(
        "--set",
        action="append",
        default=[],
        metavar="KEY=VALUE",
        help="set a metadata value (e.g. body_mass_kg=72.5, subject_id=SEL-014); repeatable",
    )
    p.add_argument(
        "--max-mb",
        type=float,
        default=DEFAULT_MAX_BYTES / 1_000_000,
        help=f"reject files larger than this many MB (default {DEFAULT_MAX_BYTES / 1_000_000:g}; 1 MB = 1,000,000 bytes, "
        "as in the dashboard's upload box)",
    )
    p.set_defaults(func=run)
    return p


def _pairs(items: list[str], option: str, example: str, *, split_at_last: bool) -> list[tuple[str, str]]:
    """``KEY=VALUE`` texts as pairs; a header may contain '=', a metadata key may not."""
    out = []
    for item in items:
        key, sep, value = item.rpartition("=") if split_at_last else item.partition("=")
        if not sep or not key.strip():
            raise InvalidParameter(option, f"KEY=VALUE, e.g. {example}", item)
        out.append((key.strip(), value.strip()))
    return out


def _sheet(value: str | None, data: bytes, file_name: str) -> str | int | None:
    if value is None or file_kind(data) != "xlsx":
        return value
    names = list_sheets(data, file_name=file_name)
    if value in names:
        return value
    if value.isdigit() and 1 <= int(value) <= len(names):
        return int(value) - 1
    raise ImportRejected(Problem(f"there is no sheet {quoted(value)}", f"choose one of: {name_list(names)}", file_name))


def run(args: argparse.Namespace) -> int:
    path: Path = args.file
    if not args.max_mb > 0:
        raise InvalidParameter("--max-mb", "a positive number", args.max_mb)
    max_bytes = int(args.max_mb * 1_000_000)
    mapping = load_profile(args.profile) if args.profile else None
    overrides = _pairs(args.map, "--map", '"Oxygen uptake=vo2_ml_min"', split_at_last=True)
    if overrides:
        explicit = ColumnMapping(dict(overrides))
        mapping = mapping.overridden_by(explicit) if mapping else explicit
    meta = dict(_pairs(args.set, "--set", "body_mass_kg=72.5", split_at_last=False))
    data = read_input_file(path, max_bytes=max_bytes)
    outcome = import_bytes(
        data,
        file_name=path.name,
        mapping=mapping,
        sheet=_sheet(args.sheet, data, path.name),
        gas_unit=args.gas_unit,
        time_format=args.time_format,
        meta_overrides=meta,
        max_bytes=max_bytes,
        ve_condition=args.ve_condition,
        barometric_mmhg=args.barometric_mmhg,
        ambient_c=args.ambient_c,
    )
    if args.save_profile:  # first: a profile that cannot be written stops before anything else is
        save_profile(outcome.mapping, args.save_profile)
    saved = save_import(outcome, data, out_dir=args.out, original_name=path.name)
    verb = "replaced" if saved.session_replaced else "wrote"
    print(f"Imported '{path.name}': {verb} {saved.session_path}")
    for line in describe_outcome(outcome):
        print(f"  {line}")
    warning = duration_warning(outcome.session.breaths["t_s"].to_numpy())
    if warning:
        print(f"warning: {warning}", file=sys.stderr)
    kept = "kept" if saved.original_was_new else "already kept (identical)"
    print(f"  original {kept}: {saved.original_path}")
    if args.save_profile:
        print(f"  mapping profile saved: {args.save_profile}")
    return 0
