"""The audit package: the one adapter between the record and the acoustics engine.

It maps a wall's stored SI data (wall type curve or layers, openings, findings) onto the engine,
caches one audit per wall through Django's cache framework, and presents it (texts, fix-first
steps, chart data) for the pages, the API, the walk's bundle and the hand-over report.
"""

from __future__ import annotations

from .cache import ENGINE_VERSION, invalidate_wall, invalidate_wall_type
from .curves import curve_errors, predict_curve, rate_curve, resolve_wall_type_curve
from .fix_order import fix_steps
from .summary import (
    audit_summary,
    audits_for_job,
    audits_for_walls,
    compute_summary,
    wall_inputs,
    wall_model_for,
)

__all__ = [
    "ENGINE_VERSION",
    "audit_summary",
    "audits_for_job",
    "audits_for_walls",
    "compute_summary",
    "curve_errors",
    "fix_steps",
    "invalidate_wall",
    "invalidate_wall_type",
    "predict_curve",
    "rate_curve",
    "resolve_wall_type_curve",
    "wall_inputs",
    "wall_model_for",
]
