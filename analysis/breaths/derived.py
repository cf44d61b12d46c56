"""Series derived from the averaged gases, computed once for every chart and table."""

from __future__ import annotations

import numpy as np
import pandas as pd

from analysis import columns as C
from analysis.indices.o2_pulse import MIN_HR_BPM

#: Names of the derived columns of the averaged frame.
RER = "rer"
VE_VO2 = "ve_vo2"
VE_VCO2 = "ve_vco2"
O2_PULSE_ML_BEAT = "o2_pulse_ml_beat"

DERIVED_COLUMNS: tuple[str, ...] = (RER, VE_VO2, VE_VCO2, O2_PULSE_ML_BEAT)


def with_derived_series(avg: pd.DataFrame) -> pd.DataFrame:
    """The averaged frame with RER, VE/VO2, VE/VCO2 and O2 pulse columns added.

    Parameters
    ----------
    avg : pandas.DataFrame
        Averaged breaths in canonical columns (``vo2_ml_min``, ``vco2_ml_min``, ``ve_l_min``,
        optionally ``hr_bpm``).

    Returns
    -------
    pandas.DataFrame
        A copy with ``rer`` (VCO2/VO2), ``ve_vo2`` and ``ve_vco2`` (VE in L/min over VO2 or
        VCO2 in L/min, dimensionless) and ``o2_pulse_ml_beat`` (VO2/HR, mL/beat; NaN where HR is
        missing or below 30 beats/min). NaN where a denominator is not positive.

    Notes
    -----
    Ratios of the averaged values (the ratio of means), the definitions of the ventilatory
    equivalents and O2 pulse (Wasserman et al., common practice).

    References
    ----------
    Wasserman K, Hansen JE, Sue DY, et al. Principles of Exercise Testing and Interpretation,
    5th ed. 2012 (from memory).
    """
    vo2 = avg[C.VO2_ML_MIN].to_numpy(dtype=float)
    vco2 = avg[C.VCO2_ML_MIN].to_numpy(dtype=float)
    ve = avg[C.VE_L_MIN].to_numpy(dtype=float)
    hr = avg[C.HR_BPM].to_numpy(dtype=float) if C.HR_BPM in avg.columns else np.full(len(avg), np.nan)
    with np.errstate(invalid="ignore", divide="ignore"):
        out = avg.assign(
            **{
                RER: np.where(vo2 > 0, vco2 / vo2, np.nan),
                VE_VO2: np.where(vo2 > 0, 1000.0 * ve / vo2, np.nan),
                VE_VCO2: np.where(vco2 > 0, 1000.0 * ve / vco2, np.nan),
                O2_PULSE_ML_BEAT: np.where(hr >= MIN_HR_BPM, vo2 / hr, np.nan),
            }
        )
    return out
