"""Every text a lab user reads in the results is in plain words: no code names, no module paths.

Checked on simulated sessions (project simulator, fixed seeds), one clean and one noisy test of
a patient profile, so that both accepted picks and "not found" reasons are produced. The JSON
keys stay as they are; only the text values are checked.
"""

from __future__ import annotations

import re

import pytest

from analysis.pipeline import analyze_session
from analysis.records import to_json
from analysis.settings import AnalysisSettings
from tests.analysis.pipeline.conftest import simulated

#: A code word (snake_case identifier) or a module path: never in text a lab user reads.
CODE_WORD = re.compile(r"\b[a-z][a-z0-9]*_[a-z0-9_]+\b|\b(?:analysis|dashboard|store|tidemark)\.[a-z_]")


def user_texts(d: dict) -> list[str]:
    """The prose values of a results JSON: notes, reasons, warnings, method texts, cautions."""
    th = d["thresholds"]
    texts = [*d["warnings"], *d["cautions"], *d["methods"].values()]
    texts += [*th["reasons"], *th["agreement"].values()]
    for kind in ("vt1", "vt2"):
        texts += [p["note"] for p in (th.get(f"{kind}_candidates") or {}).values() if p]
        if th.get(kind):
            texts.append(th[kind]["note"])
    texts += [*d["maximality"]["reasons"], d["maximality"]["label"], d["zones"]["note"]]
    ox = d.get("oxygen")
    if ox:
        texts += [*ox["notes"], ox["decomposition_method"], ox["caution"]]
        for s in ox["states"]:
            texts += s["notes"]
    return [str(t) for t in texts if t]


@pytest.fixture(scope="module", params=[("TRAINED_CYCLIST", "CYCLE_RAMP_30", 1107, 1.0),
                                        ("HEART_FAILURE", "CYCLE_RAMP_10", 3, 3.0)],
                ids=["cyclist", "heart-failure-noisy"])
def result_json(request):
    return to_json(analyze_session(simulated(*request.param)))


def test_no_code_words_in_user_text(result_json):
    texts = user_texts(result_json)
    assert len(texts) > 20  # the collection found the texts (methods alone are about 30)
    bad = [t for t in texts if CODE_WORD.search(t)]
    assert bad == []


def test_method_texts_name_methods_not_code(result_json):
    m = result_json["methods"]
    for kind in ("vt1", "vt2"):
        if result_json[kind] is None:
            assert m[kind] == "not found (see the threshold notes for why)"
    if result_json["oxygen"] is not None:
        # default curve of the comparison: Siggaard-Andersen 1984 (analysis/oxygen/comparison.py)
        curve = {"siggaard_andersen": "Siggaard-Andersen 1984", "severinghaus": "Severinghaus 1979"}
        assert m["oxygen"].endswith(f"({curve[result_json['oxygen']['model']]})")


def test_outlier_method_quotes_the_settings(cyclist):
    # window and SD limit are the reviewer's settings; the text quotes them as set.
    d = to_json(analyze_session(cyclist, AnalysisSettings(outlier_window_breaths=11, outlier_k_sd=2.5)))
    assert d["methods"]["outliers"] == (
        "breaths more than 2.5 SD from the mean of the 11 breaths around them are excluded (Lamarra et al. 1987)"
    )
