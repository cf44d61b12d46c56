"""``tidemark analyze``: results of one test, or a one-row-per-test CSV for a whole folder.

Examples::

    tidemark analyze SEL-0107_2026-02-03_cycle-ramp.session.csv
    tidemark analyze test.session.csv --json --averaging breaths:15 --vt1-time 705
    tidemark analyze sessions/ --out results.csv --workers 2

Every number comes from :func:`analysis.pipeline.analyze_session`; this module only reads files,
builds the settings, formats and writes.
"""

from __future__ import annotations

import argparse
import csv
import io
import json
import os
import sys
from collections.abc import Iterable, Iterator, Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

from analysis.breaths import METHODS, AveragingSpec
from analysis.errors import ImportRejected, InvalidParameter, Problem, TidemarkError
from analysis.exports import SUMMARY_COLUMNS, error_row, safe_csv_cell, summary_row
from analysis.records import to_json
from analysis.session import Session
from analysis.settings import AnalysisSettings, MetadataOverrides, ThresholdOverride

if TYPE_CHECKING:
    from analysis.results import TestResults

#: File endings analysed in a folder (session files and the generic importer's formats).
BATCH_SUFFIXES: tuple[str, ...] = (".csv", ".tsv", ".txt", ".xlsx")


def add_parser(subparsers: argparse._SubParsersAction) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "analyze",
        description=(
            "Analyse a Tidemark session file (or another breath-by-breath export) and print the "
            "results with the method behind each number. Given a folder, analyse every file in it "
            "in parallel and write one row per test to --out. Estimates for qualified staff to "
            "review; not a medical device."
        ),
    )
    p.add_argument("path", type=Path, metavar="FILE_OR_FOLDER", help="a session file, or a folder of them")
    p.add_argument("--json", action="store_true", help="print exactly one JSON object (single file)")
    p.add_argument(
        "--averaging",
        metavar="METHOD:SIZE",
        help=f"averaging, METHOD one of {', '.join(METHODS)} (e.g. breaths:15, time_bin:15, rolling_time:30, middle_of_n:7)",
    )
    g1 = p.add_mutually_exclusive_group()
    g1.add_argument("--vt1-time", type=float, metavar="S", help="place VT1 at this time (s)")
    g1.add_argument("--vt1-vo2", type=float, metavar="ML", help="place VT1 at this VO2 (mL/min)")
    g2 = p.add_mutually_exclusive_group()
    g2.add_argument("--vt2-time", type=float, metavar="S", help="place VT2 at this time (s)")
    g2.add_argument("--vt2-vo2", type=float, metavar="ML", help="place VT2 at this VO2 (mL/min)")
    p.add_argument("--reason", default="", help="reason recorded with a manual VT1/VT2 placement")
    p.add_argument("--body-mass-kg", type=float, metavar="KG", help="body mass (replaces the file's value)")
    p.add_argument("--age-y", type=float, metavar="Y", help="age in years (replaces the file's value)")
    p.add_argument("--sex", help="sex for the reference equations: male or female (M/F, W, männlich/weiblich, homme/femme also read)")
    p.add_argument("--height-cm", type=float, metavar="CM", help="height (replaces the file's value)")
    p.add_argument("--hb-g-dl", type=float, metavar="G_DL", help="haemoglobin (enables the oxygen comparison)")
    p.add_argument("--out", type=Path, metavar="CSV", help="write the one-row-per-test summary CSV here")
    p.add_argument("--workers", type=int, default=None, metavar="N", help="parallel processes for a folder (default: CPU count)")
    p.add_argument("--no-progress", action="store_true", help="no progress bar on stderr")
    p.add_argument(
        "--resume", action="store_true",
        help="folder: keep the rows already in --out and analyse only the files not yet in it",
    )
    p.set_defaults(func=run)
    return p


def parse_averaging(text: str) -> AveragingSpec:
    """``"breaths:15"`` -> ``AveragingSpec("breaths", 15)`` (raises InvalidParameter)."""
    method, sep, size = text.partition(":")
    if not sep:
        raise InvalidParameter("--averaging", "METHOD:SIZE such as breaths:15 or time_bin:10", text)
    try:
        value = float(size)
    except ValueError:
        raise InvalidParameter("--averaging", "a number after the colon, e.g. time_bin:10", text) from None
    return AveragingSpec.from_text(method.strip(), int(value) if value.is_integer() else value)


def settings_from_args(args: argparse.Namespace) -> AnalysisSettings:
    """The :class:`AnalysisSettings` described by the command-line options."""
    kw: dict[str, Any] = {}
    if args.averaging:
        kw["averaging"] = parse_averaging(args.averaging)
    for kind in ("vt1", "vt2"):
        t, v = getattr(args, f"{kind}_time"), getattr(args, f"{kind}_vo2")
        if t is not None or v is not None:
            kw[f"{kind}_override"] = ThresholdOverride(t_s=t, vo2_ml_min=v, reason=args.reason or "set on the command line")
    meta = {
        k: getattr(args, k)
        for k in ("body_mass_kg", "age_y", "sex", "height_cm", "hb_g_dl")
        if getattr(args, k) is not None
    }
    if meta:
        kw["metadata"] = MetadataOverrides(**meta)
    return AnalysisSettings(**kw)


def load_session(path: Path) -> Session:
    """A session file read strictly, or any other export through the generic importer.

    A file named ``*.session.csv`` is read only as a session file, so its own problems are
    reported rather than hidden by a second reading.
    """
    from analysis.io import import_file, read_session

    if not path.exists():
        raise ImportRejected(Problem("the file does not exist", "check the path and name", str(path)))
    if path.is_dir():
        raise ImportRejected(Problem("this is a folder, not a file", "give a session file or use --out for a folder", str(path)))
    if path.name.lower().endswith(".session.csv"):
        return read_session(path)
    try:
        return read_session(path)
    except ImportRejected as first:
        try:
            return import_file(path).session
        except ImportRejected as second:
            raise second from first


def analyze_path(path: str | Path, settings_dict: dict[str, Any]) -> dict[str, Any]:
    """One summary row for one file; a file that fails gives an error row (never raises)."""
    from analysis.pipeline import analyze_session

    path = Path(path)
    try:
        settings = AnalysisSettings.from_dict(settings_dict)
        results = analyze_session(load_session(path), settings, with_oxygen=False)  # no oxygen column in the row
        return summary_row(results, file=path.name)
    except TidemarkError as exc:
        return error_row(file=path.name, error=str(exc).replace("\n", " | "))
    except Exception as exc:  # noqa: BLE001 - one bad file must not stop the batch
        return error_row(file=path.name, error=f"internal error ({type(exc).__name__}: {exc}); please report it with the file")


#: Files handed to a worker at a time: small, so rows (and the progress bar) arrive every
#: second or so even when one file takes a few seconds, and an interruption loses little.
BATCH_CHUNK_FILES = 4

_worker_settings: dict[str, Any] = {}


def _init_worker(settings_dict: dict[str, Any]) -> None:
    """Process-pool initialiser: the settings are sent to each worker once, not with every file."""
    _worker_settings.clear()
    _worker_settings.update(settings_dict)


def _analyze_in_worker(path: str) -> dict[str, Any]:
    return analyze_path(path, _worker_settings)


def iter_batch(
    paths: Iterable[str | Path], *, settings: AnalysisSettings | None = None, workers: int | None = None
) -> Iterator[dict[str, Any]]:
    """Analyse files in parallel, yielding one summary row per file as soon as it is ready.

    Rows come in the order of ``paths`` (a row waits only for the files before it, which are
    at most a few chunks of :data:`BATCH_CHUNK_FILES` away). Nothing is kept: memory does not
    grow with the number of files. ``workers`` = 1 analyses in this process.
    """
    settings_dict = (settings or AnalysisSettings()).to_dict()
    names = (str(p) for p in paths)
    n_workers = max(1, workers or os.cpu_count() or 1)
    if n_workers == 1:
        for name in names:
            yield analyze_path(name, settings_dict)
        return
    import multiprocessing

    with multiprocessing.Pool(n_workers, initializer=_init_worker, initargs=(settings_dict,)) as pool:
        yield from pool.imap(_analyze_in_worker, names, chunksize=BATCH_CHUNK_FILES)


def analyze_batch(
    paths: Sequence[str | Path],
    *,
    settings: AnalysisSettings | None = None,
    workers: int | None = None,
    progress: bool = True,
) -> list[dict[str, Any]]:
    """Analyse many files in parallel; one summary row per file, in the order given.

    Parameters
    ----------
    paths : sequence of path
        Files to analyse.
    settings : AnalysisSettings, optional
        Applied to every file.
    workers : int, optional
        Processes (default: CPU count); 1 runs in this process.
    progress : bool
        Show a tqdm progress bar on stderr.

    Returns
    -------
    list of dict
        Rows with the keys :data:`analysis.exports.SUMMARY_COLUMNS`; failed files have
        ``status="error"`` and the reason in ``error``. (``tidemark analyze DIR`` streams the
        rows to its CSV instead, see :func:`write_batch`.)
    """
    from tqdm import tqdm

    with tqdm(total=len(paths), file=sys.stderr, disable=not progress, unit="test", desc="analyse") as bar:
        rows = []
        for row in iter_batch(paths, settings=settings, workers=min(workers or os.cpu_count() or 1, len(paths) or 1)):
            rows.append(row)
            bar.update()
    return rows


def summary_csv_text(rows: Iterable[dict[str, Any]]) -> str:
    """CSV text of summary rows; every cell passed through :func:`safe_csv_cell`."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(SUMMARY_COLUMNS)
    for row in rows:
        w.writerow(_csv_cells(row))
    return buf.getvalue()


def _csv_cells(row: dict[str, Any]) -> list[str]:
    return [safe_csv_cell(row.get(c)) for c in SUMMARY_COLUMNS]


def files_in_output(out: Path) -> set[str]:
    """The ``file`` cells of an existing summary CSV (as written), for ``--resume``.

    A last line cut off by an interruption is removed from the file first, so the rerun
    writes that file's row again. Raises InvalidParameter when ``out`` is not such a CSV.
    """
    data = out.read_bytes()
    if data and not data.endswith(b"\n"):
        data = data[: data.rfind(b"\n") + 1]
        out.write_bytes(data)
    reader = csv.reader(io.StringIO(data.decode("utf-8")))
    header = next(reader, None)
    if header is None:
        return set()
    if header != list(SUMMARY_COLUMNS):
        raise InvalidParameter("--resume", f"an --out file written by 'tidemark analyze' (columns {', '.join(SUMMARY_COLUMNS[:3])}, ...)", str(out))
    return {cells[0] for cells in reader if cells}


def write_batch(
    files: Sequence[Path], out: Path, *, settings: AnalysisSettings, workers: int | None, resume: bool, progress: bool
) -> tuple[int, int, int]:
    """Analyse ``files`` into the summary CSV ``out``, one row written (and flushed) per file.

    An interrupted run keeps every row written; with ``resume`` the files already in ``out``
    are skipped and new rows appended. Returns ``(rows written, of them failed, skipped)``.
    """
    from tqdm import tqdm

    done = files_in_output(out) if resume and out.exists() and out.stat().st_size else set()
    todo = [f for f in files if safe_csv_cell(f.name) not in done]
    written = failed = 0
    try:
        handle = out.open("a" if done else "w", encoding="utf-8", newline="")
    except OSError as exc:
        raise InvalidParameter("--out", "a CSV file path that can be written", f"{out} ({exc.strerror})") from None
    with handle, tqdm(
        total=len(files), initial=len(files) - len(todo), file=sys.stderr, disable=not progress, unit="test", desc="analyse"
    ) as bar:
        w = csv.writer(handle, lineterminator="\n")
        if not done:
            w.writerow(SUMMARY_COLUMNS)
        workers = min(workers or os.cpu_count() or 1, len(todo) or 1)
        for row in iter_batch(todo, settings=settings, workers=workers):
            w.writerow(_csv_cells(row))
            handle.flush()  # an interruption keeps every finished row
            written += 1
            failed += row["status"] != "ok"
            bar.update()
    return written, failed, len(files) - len(todo)


def batch_files(folder: Path) -> list[Path]:
    """Files in ``folder`` (not recursive) with a :data:`BATCH_SUFFIXES` ending, sorted by name."""
    return sorted(
        p for p in folder.iterdir() if p.is_file() and not p.name.startswith(".") and p.suffix.lower() in BATCH_SUFFIXES
    )


# --- readable summary -----------------------------------------------------------------------


def _n(value: float | None, digits: int = 0, unit: str = "") -> str:
    if value is None or value != value:  # missing or NaN
        return "–"
    text = f"{value:,.{digits}f}"
    return f"{text} {unit}".rstrip()


def format_summary(r: TestResults) -> str:
    """Readable text of a result record (numbers with their methods)."""
    from analysis.indices.summary import VE_VCO2_TO_VT2, VE_VCO2_WHOLE_EXERCISE  # kept out of the CLI start-up

    # which span the headline VE/VCO2 slope covers, in words
    spans = {VE_VCO2_TO_VT2: "to VT2", VE_VCO2_WHOLE_EXERCISE: "whole exercise"}
    m = r.methods
    sub = r.subject
    mx = r.maximality
    lines = [
        f"Tidemark analysis: {sub.source_name or ''}",
        f"Subject {sub.subject_id or '–'}, mode {sub.mode or 'unknown'}; "
        f"breaths {r.breaths.total} (excluded {r.breaths.excluded}); averaging {r.averaging.label}",
        "",
        "Peak",
        f"  VO2peak          {_n(r.vo2_peak_ml_min, 0, 'mL/min')}  ({_n(r.vo2_peak_ml_kg_min, 1, 'mL/kg/min')})  — {m.get('vo2_peak', '')}",
        f"  RER peak         {_n(r.rer_peak, 2)}  — {m.get('rer_peak', '')}",
        f"  HR peak          {_n(r.hr_peak_bpm, 0, 'beats/min')}  — {m.get('hr_peak_bpm', '')}",
        f"  Maximality       {mx.label}  — {m.get('maximality', '')}",
    ]
    lines += [f"    · {reason}" for reason in mx.reasons]
    lines += ["", "Thresholds"]
    for kind, label in (("vt1", "VT1"), ("vt2", "VT2/RCP")):
        t = r.vt1 if kind == "vt1" else r.vt2
        if t is None:
            lines.append(f"  {label:<8} not found")
            continue
        load = _n(t.work_w, 0, "W") if t.work_w is not None else _n(t.speed_kmh, 1, "km/h")
        lines.append(
            f"  {label:<8} {_n(t.t_s, 0, 's')}, VO2 {_n(t.vo2_ml_min, 0, 'mL/min')} "
            f"({_n(t.pct_vo2_peak, 0, '%')} of peak), HR {_n(t.hr_bpm, 0, 'beats/min')}, {load}"
            f"  — {t.method} ({t.source}, confidence {t.confidence})"
        )
        lines += [f"    · {note}" for note in t.notes]
    ind = r.indices
    cls = r.classes
    lines += [
        "",
        "Indices",
        f"  VE/VCO2 slope    to VT2 {_n(ind.ve_vco2_slope_to_vt2, 1)}, whole exercise "
        f"{_n(ind.ve_vco2_slope_whole_exercise, 1)} (ventilatory class {cls.ventilatory or '–'}) "
        f"(headline: {spans.get(ind.ve_vco2_slope_span or '', 'none')}), "
        f"nadir (30 s) {_n(ind.ve_vco2_nadir, 1)}  — {m.get('ve_vco2_slope', '')}",
        f"  OUES             {_n(ind.oues, 0)}  — {m.get('oues', '')}",
        f"  O2 pulse peak    {_n(ind.o2_pulse_peak_ml_beat, 1, 'mL/beat')} (30 s); at peak (VO2peak/HRpeak) "
        f"{_n(ind.o2_pulse_at_peak_ml_beat, 1, 'mL/beat')}  — {m.get('o2_pulse', '')}",
        f"  ΔVO2/ΔWR         {_n(ind.vo2_work_rate_slope_ml_min_w, 1, 'mL/min/W')}  — {m.get('vo2_work_rate_slope', '')}",
        f"  METs peak        {_n(ind.mets_peak, 1)}  — {m.get('mets', '')}",
        f"  HR recovery 1min {_n(ind.hr_recovery_1min_bpm, 0, 'beats/min')}  — {m.get('hr_recovery_1min', '')}",
    ]
    br = ind.breathing_reserve
    if br:
        lines.append(f"  Breathing reserve {_n(br.reserve_pct, 0, '%')} of MVV {_n(br.mvv_l_min, 0, 'L/min')}  — {m.get('breathing_reserve', '')}")
    fm = ind.fat_max
    if fm:
        lines.append(
            f"  FATmax           {_n(fm.fat_g_min, 2, 'g/min')} at VO2 {_n(fm.vo2_ml_min, 0, 'mL/min')} "
            f"({_n(fm.pct_vo2_peak, 0, '%')} of peak)  — {m.get('fat_max', '')}"
        )
    pred = r.predicted
    lines += [
        "",
        "Reference values (population estimates)",
    ]
    chosen = r.interpretation.predicted if r.interpretation is not None else None
    if chosen is not None and chosen.reference_set != "friend2018":  # the set chosen in the settings
        lines += [
            f"  Predicted peak VO2 {_n(chosen.vo2_peak_ml_min, 0, 'mL/min')} ({_n(chosen.pct_vo2_peak, 0, '%')} achieved)"
            f"  — {chosen.reference_name}",
            f"  Predicted HRmax  {_n(chosen.hr_max_bpm, 0, 'beats/min')} ({_n(chosen.pct_hr_max, 0, '%')} achieved)"
            f"  — {chosen.reference_name}",
        ]
    else:
        lines += [
            f"  Predicted VO2max {_n(pred.vo2max_friend_ml_kg_min, 1, 'mL/kg/min')} ({_n(pred.pct_predicted_vo2max, 0, '%')} achieved)  — {m.get('predicted_vo2max', '')}",
            f"  Predicted HRmax  {_n(pred.hr_max_tanaka_bpm, 0, 'beats/min')}  — {m.get('hr_max_predicted', '')}",
        ]
    if mx.hr_max_beta_blocker_bpm is not None:
        lines.append(
            f"  HRmax on a beta-blocker {_n(mx.hr_max_beta_blocker_bpm, 0, 'beats/min')}  — {m.get('hr_max_beta_blocker', '')}"
        )
    lines += [
        f"  Weber class      {cls.weber or '–'}; ventilatory class {cls.ventilatory or '–'} "
        f"(from the whole-exercise VE/VCO2 slope {_n(cls.ventilatory_slope, 1)})",
        "",
        "Training zones  — " + m.get("zones", ""),
    ]

    def rng(lo: float | None, hi: float | None, digits: int, unit: str) -> str:
        return f"< {_n(hi, digits)} {unit}" if lo is None else f"{_n(lo, digits)}–{_n(hi, digits)} {unit}"

    for z in r.zones.zones:
        parts = [f"HR {rng(z.hr_low_bpm, z.hr_high_bpm, 0, 'beats/min')}"]
        if z.work_high_w is not None:
            parts.append(rng(z.work_low_w, z.work_high_w, 0, "W"))
        elif z.speed_high_kmh is not None:
            parts.append(rng(z.speed_low_kmh, z.speed_high_kmh, 1, "km/h"))
        lines.append(f"  {z.name}: {', '.join(parts)}")
    lines.append(f"  {r.zones.note}")
    if r.oxygen is not None:
        lines += ["", "Oxygen transport: computed (see --json 'oxygen'); model estimates, not measurements."]
    if r.warnings:
        lines += ["", "Warnings"] + [f"  ! {w}" for w in r.warnings]
    lines += ["", "Cautions"] + [f"  {c}" for c in r.cautions]
    return "\n".join(lines) + "\n"


def _write(path: Path, text: str) -> None:
    try:
        path.write_text(text, encoding="utf-8", newline="")
    except OSError as exc:
        raise InvalidParameter("--out", "a CSV file path that can be written", f"{path} ({exc.strerror})") from None


def run(args: argparse.Namespace) -> int:
    from analysis.pipeline import analyze_session

    settings = settings_from_args(args)
    path: Path = args.path
    if args.workers is not None and args.workers < 1:
        raise InvalidParameter("--workers", "a whole number ≥ 1", args.workers)
    if path.is_dir():
        if args.out is None:
            raise InvalidParameter("--out", "a CSV file to write when analysing a folder", None)
        if args.json:
            raise InvalidParameter("--json", "used with a single file only (a folder gives --out CSV)", str(path))
        files = batch_files(path)
        if not files:
            raise ImportRejected(
                Problem(f"no files ending in {', '.join(BATCH_SUFFIXES)} were found", "check the folder", str(path))
            )
        try:
            written, failed, skipped = write_batch(
                files, args.out, settings=settings, workers=args.workers, resume=args.resume, progress=not args.no_progress
            )
        except KeyboardInterrupt:
            print(f"interrupted; the rows finished so far are in {args.out} (add --resume to continue)", file=sys.stderr)
            return 1
        kept = f", {skipped} already in the file" if skipped else ""
        print(f"{written} tests analysed, {failed} failed{kept}; results in {args.out}", file=sys.stderr)
        return 0
    results = analyze_session(load_session(path), settings)
    if args.out is not None:
        _write(args.out, summary_csv_text([summary_row(results, file=path.name)]))
    if args.json:  # JSON only at the edge: the codec writes the record
        sys.stdout.write(json.dumps(to_json(results), ensure_ascii=False, allow_nan=False) + "\n")
    else:
        sys.stdout.write(format_summary(results))
    return 0
