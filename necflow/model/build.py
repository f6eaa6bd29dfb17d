"""Build the segmented :class:`WireModel` of a design (thin glue)."""

from __future__ import annotations

import numpy as np

from necflow.catalog.grounds import SURFACES
from necflow.catalog.materials import MATERIALS
from necflow.config.schema import Design, EndFed
from necflow.errors import ConfigError
from necflow.model.checks import check_geometry
from necflow.model.geometry import geometry
from necflow.model.plan import expand, plan_routed_wires, plan_wires
from necflow.model.route import route_plan
from necflow.model.segments import grading
from necflow.model.types import GroundModel, Load, Probe, Source, Wire, WireModel


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
    route = route_plan(design, _feed_point(spans, feed))
    if route is None:
        planned, source = plan_wires(spans, feed, g)
        sources, loads, probes = [(source, 1.0)], [], []
    else:
        far = spans[feed.wire].end if isinstance(design.antenna, EndFed) else None
        gap = grading(design, f_max_hz, 1.0, f_min_hz).finest   # not refined: a physical gap
        plan = plan_routed_wires(spans, feed, g, route, cold_far_from=far, source_gap=gap)
        planned, sources, loads, probes = plan.wires, plan.sources, plan.loads, plan.probes
        g = plan.grading
    # Connected ends are the very same coordinates: the plan reuses each
    # joint point, and copying keeps the values bit-identical.
    wires: list[Wire] = []
    first_tag: dict[int, int] = {}
    last_tag: dict[int, int] = {}
    for i, p in enumerate(planned):
        first_tag[i] = len(wires) + 1
        for start, end, n in expand(p, g):
            wires.append(Wire(len(wires) + 1, p.name, _frozen(start), _frozen(end),
                              float(p.radius), n))
        last_tag[i] = len(wires)
    by_tag = {w.tag: w for w in wires}
    src = tuple(Source(first_tag[i], 1, v) for i, v in sources) if route is not None else ()
    lds = tuple(Load(ld.name, first_tag[i], 1, ld.kind, ld.spec) for i, ld in loads)
    prb = tuple(Probe(name, first_tag[i], 1) if which == "first"
                else Probe(name, first_tag[i[0]], 1, last_tag=last_tag[i[1]])
                if which == "largest"
                else Probe(name, last_tag[i], by_tag[last_tag[i]].segments)
                for name, i, which in probes)
    return WireModel(wires=tuple(wires), feed_tag=first_tag[sources[0][0]], feed_segment=1,
                     ground=ground_model(design), conductivity=wire_conductivity(design),
                     sources=src, loads=lds, probes=prb)


def _feed_point(spans, feed) -> np.ndarray:
    w = spans[feed.wire]
    u = (w.end - w.start) / np.linalg.norm(w.end - w.start)
    return w.start + feed.distance * u
