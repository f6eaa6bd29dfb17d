"""Wire models: geometry of each antenna shape, segmentation, rule checks.

``build_model(design, f_max_hz)`` turns a validated design into a
:class:`WireModel` the engine solves; ``check_rules`` and ``summarize``
judge it against the method-of-moments modelling rules.
"""

from necflow.model.build import build_model, ground_model, wire_conductivity
from necflow.model.checks import check_geometry, check_variant
from necflow.model.geometry import geometry
from necflow.model.rules import Finding, check_rules
from necflow.model.segments import target_segment_length
from necflow.model.summary import ModelSummary, WireRow, summarize
from necflow.model.types import FeedLocation, GroundModel, Wire, WireModel, WireSpan

__all__ = [
    "FeedLocation", "Finding", "GroundModel", "ModelSummary", "Wire", "WireModel", "WireRow",
    "WireSpan", "build_model", "check_geometry", "check_variant", "check_rules", "geometry",
    "ground_model",
    "summarize", "target_segment_length", "wire_conductivity",
]
