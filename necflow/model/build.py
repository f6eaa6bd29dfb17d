"""Build the segmented :class:`WireModel` of a design (thin glue)."""

from __future__ import annotations

import numpy as np

from necflow.catalog.grounds import SURFACES
from necflow.catalog.materials import MATERIALS
from necflow.config.schema import Design
from necflow.errors import ConfigError
from necflow.model.checks import check_geometry
from necflow.model.geometry import geometry
from necflow.model.plan import expand, plan_wires
from necflow.model.segments import grading
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


def build_model(design: Design, f_max_hz: float, *, density: float = 1.0,
                f_min_hz: float | None = None) -> WireModel:
    """Segment the design's antenna for solves up to ``f_max_hz``.

    Runs :func:`necflow.model.check_geometry` first.  Segments are at most
    lambda(f_max) / ``design.model.segments_per_wavelength`` long and
    shorter near the source and at junctions (see :mod:`necflow.model.plan`
    and :func:`necflow.model.segments.grading`); the source is a
    one-segment wire of its own centred on the feed point.  A graded run of
    a wire becomes several collinear engine wires of equal segments each.

    Parameters
    ----------
    design : Design
        A validated design.
    f_max_hz : float
        Highest frequency the model will be solved at [Hz].
    density : float, optional
        Refinement factor: every segment length is divided by it (2 gives
        about twice the segments, the convergence check's model).
    f_min_hz : float, optional
        Lowest frequency the model will be solved at [Hz] (it bounds the
        finest segment); default the lowest band edge of the design.

    Returns
    -------
    WireModel
        Wires tagged 1..n in order; the source on segment 1 of its wire.

    Raises
    ------
    ConfigError
        From :func:`check_geometry`.
    """
    check_geometry(design, f_max_hz, density=density, f_min_hz=f_min_hz)
    spans, feed = geometry(design)
    g = grading(design, f_max_hz, density, f_min_hz)
    planned, source = plan_wires(spans, feed, g)
    # Connected ends are the very same coordinates: the plan reuses each
    # joint point, and copying keeps the values bit-identical.
    wires: list[Wire] = []
    feed_tag = 0
    for i, p in enumerate(planned):
        if i == source:
            feed_tag = len(wires) + 1
        for start, end, n in expand(p, g):
            wires.append(Wire(len(wires) + 1, p.name, _frozen(start), _frozen(end),
                              float(p.radius), n))
    return WireModel(wires=tuple(wires), feed_tag=feed_tag, feed_segment=1,
                     ground=ground_model(design), conductivity=wire_conductivity(design))
