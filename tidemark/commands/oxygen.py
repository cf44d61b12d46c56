"""``tidemark oxygen``: the dissociation curve at given blood conditions, or one test's O2 cascade.

Examples::

    tidemark oxygen --po2 40 100 --ph 7.2 --temperature 39 --model siggaard_andersen --json
    tidemark oxygen --po2 60 95 --cohb 10 --pb 596 --fio2 0.21
    tidemark oxygen cascade demo_sessions/SEL-0107_2026-02-03_cycle-ramp.session.csv --json

Every figure is a model estimate, not a measurement (Tidemark is not a medical device).
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path
from typing import Any

#: Haemoglobin used when --hb is not given, g/dL (common practice: a typical adult value).
ASSUMED_HB_G_DL = 15.0

#: Curve models (kept here so that building the parser imports nothing of the analysis).
CURVE_MODELS: tuple[str, ...] = ("severinghaus", "siggaard_andersen", "hill")


def add_parser(subparsers: argparse._SubParsersAction) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "oxygen",
        description=(
            "Haemoglobin O2 saturation and blood O2 content at one or more PO2 values, and the P50, "
            "under the given blood conditions; or, with 'cascade FILE', one test's O2 cascade at peak "
            "with its what-if scenarios. Model estimates, not measurements."
        ),
    )
    p.add_argument("form", nargs="?", choices=["cascade"], help="'cascade' followed by a session file")
    p.add_argument("file", nargs="?", metavar="FILE", help="session file or export (with 'cascade')")
    p.add_argument("--po2", type=float, nargs="+", metavar="MMHG", help="PO2 value(s) in mmHg (curve form)")
    p.add_argument("--ph", type=float, default=7.40, help="blood pH measured at 37 °C (default 7.40)")
    p.add_argument("--temperature", type=float, default=37.0, metavar="C", help="blood temperature °C (default 37)")
    p.add_argument("--pco2", type=float, default=40.0, metavar="MMHG", help="PCO2 mmHg (default 40; severinghaus, and the alveolar gas equation)")
    p.add_argument("--dpg", type=float, default=5.0, metavar="MMOL_L", help="2,3-BPG mmol/L (default 5; siggaard_andersen)")
    p.add_argument("--base-excess", type=float, default=0.0, metavar="MMOL_L", help="base excess mmol/L (default 0; siggaard_andersen)")
    p.add_argument("--model", choices=CURVE_MODELS, default=None, help="curve model (default severinghaus; siggaard_andersen for cascade)")
    p.add_argument("--p50", type=float, default=None, metavar="MMHG", help="P50 for --model hill; with cascade, the person's standard P50")
    p.add_argument("--hill-n", type=float, default=None, metavar="N", help="Hill coefficient for --model hill (default 2.7)")
    p.add_argument("--hb", type=float, default=None, metavar="G_DL", help=f"haemoglobin g/dL (assumed {ASSUMED_HB_G_DL:g} if not given)")
    p.add_argument("--huefner", type=float, default=1.34, metavar="ML_G", help="O2 bound per g Hb, mL/g (default 1.34)")
    p.add_argument("--pb", type=float, default=None, metavar="MMHG", help="barometric pressure mmHg (alveolar PO2; cascade: replaces the test's)")
    p.add_argument("--fio2", type=float, default=None, metavar="FRACTION", help="inspired O2 fraction (default 0.2093)")
    p.add_argument("--rer", type=float, default=0.8, metavar="R", help="R for the alveolar gas equation (curve form; default 0.8)")
    p.add_argument("--cohb", type=float, default=0.0, metavar="PCT", help="carboxyhaemoglobin, %% of total Hb (default 0)")
    p.add_argument("--methb", type=float, default=0.0, metavar="PCT", help="methaemoglobin, %% of total Hb (default 0)")
    p.add_argument("--q-peak", type=float, default=None, metavar="L_MIN", help="measured peak cardiac output, L/min (cascade)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    p.set_defaults(func=run)
    return p


def run(args: argparse.Namespace) -> int:
    from analysis.errors import InvalidParameter

    if args.form == "cascade":
        if not args.file:
            raise InvalidParameter("FILE", "a session file after 'cascade' (tidemark oxygen cascade FILE)", None)
        return run_cascade(args)
    if args.file:
        raise InvalidParameter("FILE", "given only after 'cascade' (tidemark oxygen cascade FILE)", args.file)
    if not args.po2:
        raise InvalidParameter("--po2", "one or more PO2 values in mmHg (or 'cascade FILE')", None)
    return run_curve(args)


def _fractions(args: argparse.Namespace) -> tuple[float, float]:
    """--cohb and --methb (percent) as fractions of total Hb."""
    from analysis.errors import InvalidParameter

    for name, value in (("--cohb", args.cohb), ("--methb", args.methb)):
        if not 0.0 <= value <= 60.0:
            raise InvalidParameter(name, "a percentage of total haemoglobin from 0 to 60 (e.g. 10 for 10 %)", value)
    return args.cohb / 100.0, args.methb / 100.0


def run_curve(args: argparse.Namespace) -> int:
    import numpy as np

    from analysis.oxygen import MODEL_CONDITIONS, o2_content_ml_dl, p50
    from analysis.oxygen.alveolar import FIO2_AIR, SEA_LEVEL_PB_MMHG, alveolar_po2_mmhg
    from analysis.oxygen.curves import CURVE_CAUTION
    from analysis.oxygen.dyshaemoglobin import functional_saturation

    model = args.model or "severinghaus"
    conditions = {
        "ph": args.ph,
        "temperature_c": args.temperature,
        "pco2_mmhg": args.pco2,
        "dpg_mmol_l": args.dpg,
        "base_excess_mmol_l": args.base_excess,
    }
    curve = dict(conditions, model=model, p50_mmhg=args.p50, hill_n=args.hill_n)
    cohb, methb = _fractions(args)
    hb_assumed = args.hb is None
    hb = ASSUMED_HB_G_DL if hb_assumed else args.hb
    po2_mmhg = np.asarray(args.po2, dtype=float)
    sats = np.atleast_1d(functional_saturation(po2_mmhg, cohb_fraction=cohb, methb_fraction=methb, **curve))
    contents = np.atleast_1d(
        o2_content_ml_dl(
            saturation=sats, po2_mmhg=po2_mmhg, hb_g_dl=hb, huefner_ml_g=args.huefner,
            cohb_fraction=cohb, methb_fraction=methb,
        )
    )
    p50_mmhg = p50(**curve) if not cohb else _p50_with_co(curve, cohb, methb)
    applied = {name: conditions[name] for name in MODEL_CONDITIONS[model]}
    alveolar = None
    if args.pb is not None or args.fio2 is not None:
        pb = SEA_LEVEL_PB_MMHG if args.pb is None else args.pb
        fio2 = FIO2_AIR if args.fio2 is None else args.fio2
        alveolar = {
            "pb_mmhg": pb, "fio2": fio2, "paco2_mmhg": args.pco2, "rer": args.rer,
            "pao2_alveolar_mmhg": alveolar_po2_mmhg(pb_mmhg=pb, fio2=fio2, paco2_mmhg=args.pco2, rer=args.rer),
        }
    dyshb_note = (
        "Saturation is the functional saturation of the haemoglobin free to carry O2; CO shifts its curve to "
        "the left. A pulse oximeter would read COHb as oxyhaemoglobin."
        if cohb or methb
        else None
    )

    if args.json:
        payload = {
            "model": model,
            "conditions_applied": applied,
            "hill": {"p50_mmhg": args.p50, "hill_n": args.hill_n} if model == "hill" else None,
            "hb_g_dl": hb,
            "hb_assumed": hb_assumed,
            "huefner_ml_g": args.huefner,
            "cohb_fraction": cohb,
            "methb_fraction": methb,
            "p50_mmhg": p50_mmhg,
            "alveolar": alveolar,
            "points": [
                {"po2_mmhg": float(po2), "saturation": float(s), "o2_content_ml_dl": float(c)}
                for po2, s, c in zip(args.po2, sats, contents, strict=True)
            ],
            "notes": [dyshb_note] if dyshb_note else [],
            "estimate": True,
            "caution": CURVE_CAUTION,
        }
        json.dump(payload, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0

    described = ", ".join(f"{k}={v:g}" for k, v in applied.items())
    if model == "hill":
        described = f"P50 {p50(**curve):.1f} mmHg, n {args.hill_n if args.hill_n is not None else 2.7:g}"
    print(f"Model: {model} ({described})")
    print(f"Hb {hb:g} g/dL{' (assumed; give --hb)' if hb_assumed else ''}, {args.huefner:g} mL O2/g")
    if cohb or methb:
        print(f"COHb {100 * cohb:g} %, MetHb {100 * methb:g} % of total Hb (carry no O2)")
    if alveolar:
        print(
            f"Alveolar PO2 {alveolar['pao2_alveolar_mmhg']:.1f} mmHg at PB {alveolar['pb_mmhg']:g} mmHg, FIO2 "
            f"{alveolar['fio2']:g}, PaCO2 {args.pco2:g} mmHg, R {args.rer:g} (alveolar gas equation)"
        )
    print(f"{'PO2 mmHg':>10}  {'SO2 %':>7}  {'O2 content mL/dL':>17}")
    for po2, s, c in zip(args.po2, sats, contents, strict=True):
        print(f"{po2:>10.1f}  {100 * s:>7.2f}  {c:>17.2f}")
    print(f"P50 under these conditions: {p50_mmhg:.2f} mmHg")
    if dyshb_note:
        print(dyshb_note)
    print(f"Caution: {CURVE_CAUTION}")
    return 0


def _p50_with_co(curve: dict[str, Any], cohb: float, methb: float) -> float:
    """P50 of the haemoglobin free to carry O2 when part of it holds CO (root of S = 0.5)."""
    from scipy.optimize import brentq

    from analysis.oxygen.dyshaemoglobin import functional_saturation

    def gap(p: float) -> float:
        return float(functional_saturation(p, cohb_fraction=cohb, methb_fraction=methb, **curve)) - 0.5

    return float(brentq(gap, 0.5, 200.0, xtol=1e-6))


def run_cascade(args: argparse.Namespace) -> int:
    from analysis.errors import AnalysisError
    from analysis.oxygen.pathway import oxygen_pathway
    from analysis.pipeline import analyze_session
    from analysis.records import to_json
    from analysis.settings import AnalysisSettings, MetadataOverrides
    from tidemark.commands.analyze import load_session

    cohb, methb = _fractions(args)
    oxygen: dict[str, Any] = {"model": args.model or "siggaard_andersen"}
    if args.pb is not None:
        oxygen["pb_mmhg"] = args.pb
    if args.fio2 is not None:
        oxygen["fio2"] = args.fio2
    if cohb:
        oxygen["cohb_fraction"] = cohb
    if methb:
        oxygen["methb_fraction"] = methb
    if args.q_peak is not None:
        oxygen["q_l_min"] = {"peak": args.q_peak}
    meta = MetadataOverrides(hb_g_dl=args.hb) if args.hb is not None else MetadataOverrides()
    results = analyze_session(load_session(Path(args.file)), AnalysisSettings(metadata=meta, oxygen=oxygen))
    if results.oxygen is None:
        reasons = " ".join(w for w in results.warnings if w.lower().startswith("oxygen"))
        raise AnalysisError(
            f"no oxygen comparison for '{args.file}': the test needs haemoglobin (give --hb G_DL). {reasons}".strip()
        )
    notes: tuple[str, ...] = ()
    pathway = results.oxygen_cascade
    if args.p50 is not None:  # the person's measured standard P50: the cascade again with it
        pathway, notes = oxygen_pathway(results.oxygen, p50_standard_mmhg=args.p50)
    if pathway is None:
        why = notes or tuple(w for w in results.warnings if "cascade" in w.lower())
        raise AnalysisError(f"{args.file}: " + (" ".join(why) or "the O2 cascade could not be solved"))
    if args.json:
        json.dump({"source": str(args.file), "oxygen_cascade": to_json(pathway)}, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0
    print(cascade_text(pathway, source=str(args.file)))
    return 0


#: How peak cardiac output was obtained, in words.
Q_WORDS: dict[str, str] = {
    "measured": "measured",
    "stringer1997": "ESTIMATE, Stringer 1997",
    "stringer1997_raised_to_venous_floor": "ESTIMATE, Stringer 1997 raised to keep mixed venous PO2 at 15 mmHg",
}


def cascade_text(pathway: Any, *, source: str) -> str:
    """The cascade and its what-if table as plain text."""
    p, i = pathway.peak, pathway.inputs
    q_words = Q_WORDS.get(pathway.q_method, pathway.q_method)
    lines = [
        f"O2 cascade at peak — {source} (model estimate)",
        f"  VO2peak {pathway.vo2_peak_ml_min:.0f} mL/min; Hb {i.hb_g_dl:g} g/dL; PB {i.pb_mmhg:.0f} mmHg; FIO2 {i.fio2:.3f}",
        f"  Alveolar PO2 {p.pao2_alveolar_mmhg:.1f} mmHg -> arterial PO2 {p.pao2_mmhg:.1f} mmHg, SaO2 {100 * p.sao2:.1f} %, "
        f"CaO2 {p.cao2_ml_dl:.1f} mL/dL",
        f"  Cardiac output {pathway.q_l_min:.1f} L/min ({q_words}); O2 delivery {p.o2_delivery_ml_min:.0f} mL/min",
        f"  Venous blood — {pathway.venous_blood}: PO2 {p.pvo2_mmhg:.1f} mmHg, SvO2 {100 * p.svo2:.1f} %, CvO2 {p.cvo2_ml_dl:.1f} mL/dL",
        f"  Muscle O2 diffusing capacity DmO2 {pathway.dmo2_ml_min_mmhg:.0f} mL/min/mmHg (mean capillary PO2 "
        f"{p.mean_capillary_po2_mmhg:.1f} mmHg)",
        "",
        f"  {'What if':<18} {'VO2peak mL/min':>15} {'change %':>9}  note",
    ]
    for w in pathway.what_if:
        lines.append(f"  {w.scenario:<18} {w.vo2_peak_ml_min:>15.0f} {w.change_pct:>+9.1f}  {w.note}")
    lines += ["", "  " + pathway.limiting]
    lines += ["  Assumptions: " + "; ".join(pathway.assumptions) + "."]
    lines += [f"  Note: {n}" for n in pathway.notes]
    lines += [f"  Caution: {pathway.caution}"]
    return "\n".join(lines)
