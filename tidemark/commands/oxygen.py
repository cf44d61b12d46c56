"""``tidemark oxygen``: saturation, O2 content and P50 for given PO2 values and blood conditions.

Example::

    tidemark oxygen --po2 40 100 --ph 7.2 --temperature 39 --model siggaard_andersen --json
"""

from __future__ import annotations

import argparse
import json
import sys

import numpy as np

from analysis.oxygen import (
    DEFAULT_HUEFNER_ML_G,
    MODEL_CONDITIONS,
    MODELS,
    STANDARD,
    o2_content_ml_dl,
    p50,
    saturation,
)
from analysis.oxygen.curves import CURVE_CAUTION

#: Haemoglobin used when --hb is not given, g/dL (common practice: a typical adult value).
ASSUMED_HB_G_DL = 15.0


def add_parser(subparsers: argparse._SubParsersAction) -> argparse.ArgumentParser:
    p = subparsers.add_parser(
        "oxygen",
        description=(
            "Haemoglobin O2 saturation and blood O2 content at one or more PO2 values, and the P50, "
            "under the given blood conditions. Model estimates, not measurements."
        ),
    )
    p.add_argument("--po2", type=float, nargs="+", required=True, metavar="MMHG", help="PO2 value(s) in mmHg")
    p.add_argument("--ph", type=float, default=STANDARD["ph"], help="blood pH measured at 37 °C (default 7.40)")
    p.add_argument(
        "--temperature", type=float, default=STANDARD["temperature_c"], metavar="C", help="blood temperature °C (default 37)"
    )
    p.add_argument("--pco2", type=float, default=STANDARD["pco2_mmhg"], metavar="MMHG", help="PCO2 mmHg (default 40; severinghaus)")
    p.add_argument("--dpg", type=float, default=STANDARD["dpg_mmol_l"], metavar="MMOL_L", help="2,3-BPG mmol/L (default 5; siggaard_andersen)")
    p.add_argument(
        "--base-excess", type=float, default=STANDARD["base_excess_mmol_l"], metavar="MMOL_L",
        help="base excess mmol/L (default 0; siggaard_andersen)",
    )
    p.add_argument("--model", choices=MODELS, default="severinghaus", help="curve model (default severinghaus)")
    p.add_argument("--p50", type=float, default=None, metavar="MMHG", help="P50 for --model hill")
    p.add_argument("--hill-n", type=float, default=None, metavar="N", help="Hill coefficient for --model hill (default 2.7)")
    p.add_argument("--hb", type=float, default=None, metavar="G_DL", help=f"haemoglobin g/dL (assumed {ASSUMED_HB_G_DL:g} if not given)")
    p.add_argument(
        "--huefner", type=float, default=DEFAULT_HUEFNER_ML_G, metavar="ML_G",
        help=f"O2 bound per g Hb, mL/g (default {DEFAULT_HUEFNER_ML_G})",
    )
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    p.set_defaults(func=run)
    return p


def run(args: argparse.Namespace) -> int:
    conditions = {
        "ph": args.ph,
        "temperature_c": args.temperature,
        "pco2_mmhg": args.pco2,
        "dpg_mmol_l": args.dpg,
        "base_excess_mmol_l": args.base_excess,
    }
    curve = dict(conditions, model=args.model, p50_mmhg=args.p50, hill_n=args.hill_n)
    hb_assumed = args.hb is None
    hb = ASSUMED_HB_G_DL if hb_assumed else args.hb
    po2_mmhg = np.asarray(args.po2, dtype=float)
    sats = np.atleast_1d(saturation(po2_mmhg, **curve))
    contents = np.atleast_1d(o2_content_ml_dl(saturation=sats, po2_mmhg=po2_mmhg, hb_g_dl=hb, huefner_ml_g=args.huefner))
    p50_mmhg = p50(**curve)
    applied = {name: conditions[name] for name in MODEL_CONDITIONS[args.model]}

    if args.json:
        payload = {
            "model": args.model,
            "conditions_applied": applied,
            "hill": {"p50_mmhg": args.p50, "hill_n": args.hill_n} if args.model == "hill" else None,
            "hb_g_dl": hb,
            "hb_assumed": hb_assumed,
            "huefner_ml_g": args.huefner,
            "p50_mmhg": p50_mmhg,
            "points": [
                {"po2_mmhg": po2, "saturation": float(s), "o2_content_ml_dl": float(c)}
                for po2, s, c in zip(args.po2, sats, contents, strict=True)
            ],
            "estimate": True,
            "caution": CURVE_CAUTION,
        }
        json.dump(payload, sys.stdout, indent=2)
        sys.stdout.write("\n")
        return 0

    described = ", ".join(f"{k}={v:g}" for k, v in applied.items())
    if args.model == "hill":
        described = f"P50 {p50_mmhg:.1f} mmHg, n {args.hill_n if args.hill_n is not None else 2.7:g}"
    print(f"Model: {args.model} ({described})")
    print(f"Hb {hb:g} g/dL{' (assumed; give --hb)' if hb_assumed else ''}, {args.huefner:g} mL O2/g")
    print(f"{'PO2 mmHg':>10}  {'SO2 %':>7}  {'O2 content mL/dL':>17}")
    for po2, s, c in zip(args.po2, sats, contents, strict=True):
        print(f"{po2:>10.1f}  {100 * s:>7.2f}  {c:>17.2f}")
    print(f"P50 under these conditions: {p50_mmhg:.2f} mmHg")
    print(f"Caution: {CURVE_CAUTION}")
    return 0
