"""Oxygen delivery and unloading: dissociation curves, O2 content, Fick, Haldane.

Public API
----------
Curves
    :func:`saturation`, :func:`po2_at_saturation`, :func:`p50`, :data:`MODELS`
"""

from analysis.oxygen.curves import MODEL_CONDITIONS, MODELS, STANDARD, p50, po2_at_saturation, saturation

__all__ = [
    "MODELS",
    "MODEL_CONDITIONS",
    "STANDARD",
    "p50",
    "po2_at_saturation",
    "saturation",
]
