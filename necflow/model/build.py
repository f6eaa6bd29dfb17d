"""Build the segmented :class:`WireModel` of a design (thin glue)."""

from __future__ import annotations

import numpy as np

from necflow.catalog.grounds import SURFACES
from necflow.catalog.materials import MATERIALS
from necflow.config.schema import Design
from necflow.errors import ConfigError
from necflow.model.checks import check_geometry
from necflow.model.geometry import geometry
from necflow.model.plan import plan_wires
from necflow.model.segments import target_segment_length
from necflow.model.types import GroundModel, Wire, WireModel


def ground_model(design: Design) -> GroundModel:
    """The design's ground with its constants resolved from the catalog."""
    g = design.ground
    if g.model in ("free-space", "perfect"):
        return GroundModel(g.model)
    if g.surface is not None:
        if g.surface not in SURFACES:
            raise ConfigError(f"unknown ground surface '{g.surface}'; expected one of "
                              f"{', '.join(SURFACES)}", field="ground.surface")
        s = SURFACES[g.surface]
        return GroundModel(g.model, s.permittivity, s.conductivity, g.surface)
    return GroundModel(g.model, g.permittivity, g.conductivity, None)


def wire_conductivity(design: Design) -> float | None:
    """Conductivity [S/m] of the design's wire material (None: lossless)."""
    return MATERIALS[design.antenna.wire.material]


def _frozen(point) -> np.ndarray:
    out = np.array(point, dtype=float)
    out.setflags(write=False)
    return out


def build_model(design: Design, f_max_hz: float) -> WireModel:
    """Segment the design's antenna for solves up to ``f_max_hz``.

    Runs :func:`necflow.model.check_geometry` first.  Segments are at most
    lambda(f_max) / ``design.model.segments_per_wavelength`` long; the
    source is a one-segment wire of its own centred on the feed point,
    with segments of nearly equal length either side (see
    :mod:`necflow.model.plan`).

    Parameters
    ----------
    design : Design
        A validated design.
    f_max_hz : float
        Highest frequency the model will be solved at [Hz].

    Returns
    -------
    WireModel
        Wires tagged 1..n in order; the source on segment 1 of its wire.

    Raises
    ------
    ConfigError
        From :func:`check_geometry`.
    """
    check_geometry(design, f_max_hz)
    spans, feed = geometry(design)
    planned, source = plan_wires(spans, feed, target_segment_length(design, f_max_hz))
    # Connected ends are the very same coordinates: the plan reuses each
    # joint point, and copying keeps the values bit-identical.
    wires = tuple(Wire(i + 1, p.name, _frozen(p.start), _frozen(p.end), float(p.radius),
                       p.segments) for i, p in enumerate(planned))
    return WireModel(wires=wires, feed_tag=source + 1, feed_segment=1,
                     ground=ground_model(design), conductivity=wire_conductivity(design))
