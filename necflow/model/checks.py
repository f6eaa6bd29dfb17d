"""Checks of a design's geometry, run before any model is built.

Each problem a user can cause is a :class:`necflow.errors.ConfigError`
naming the field to change (0-based list indexes).
"""

from __future__ import annotations

import math

import numpy as np

from necflow import limits
from necflow.catalog.bands import resolve_bands
from necflow.config.schema import DeltaLoop, Design, EndFed, InvertedV, Sloper, SquareLoop, WireList
from necflow.errors import ConfigError
from necflow.model.clearance import clearance_problems
from necflow.model.geometry import geometry
from necflow.model.plan import plan_routed_wires, plan_wires
from necflow.model.route import route_plan
from necflow.model.segments import grading


def check_geometry(design: Design, f_max_hz: float, *, density: float = 1.0,
                   f_min_hz: float | None = None) -> None:
    """Refuse a design whose wires cannot make a sound model.

    Checks, in order: inverted-V legs that cannot be placed (end height
    above the apex, legs too short or reaching below ground); a sloper whose
    lower end cannot be placed or reaches below ground; a delta loop whose
    base is too long for its perimeter, or a vertical loop hung from
    'top_height' whose lowest point would be at or below ground; a bent
    doublet's leg or bend that cannot be placed; a feed or bend position off
    its wire; any wire point of a wire list below ground (z < 0) when there
    is a ground (an end exactly at z = 0 is a ground connection and allowed);
    a model needing more than ``design.model.max_segments`` segments.  The
    segment count is plain arithmetic on the wire end points, so an
    oversized model is refused before any matrix exists.

    Parameters
    ----------
    design : Design
        A validated design.
    f_max_hz : float
        Highest frequency to be solved [Hz].
    density : float, optional
        Refinement factor of the segmentation (see :func:`build_model`).

    Raises
    ------
    ConfigError
        With ``field`` set to the dotted path of the offending value.
    """
    if not (math.isfinite(f_max_hz) and f_max_hz > 0):
        raise ConfigError(f"highest frequency must be a positive number, got {f_max_hz!r} Hz",
                          field="bands")
    grounded = design.ground.model != "free-space"
    a = design.antenna
    spans, feed = geometry(design)  # raises for shapes that cannot be placed
    if grounded and isinstance(a, InvertedV):
        z_end = spans[0].start[2]
        if z_end < 0:
            raise ConfigError(f"legs of {a.leg:g} m at this droop reach {-z_end:.3g} m below "
                              f"ground from an apex at {a.apex_height:g} m", field="antenna.leg")
    if grounded and isinstance(a, Sloper):
        z_end = spans[0].end[2]
        if z_end < 0:
            raise ConfigError(f"a wire of {a.length:g} m at this slope reaches {-z_end:.3g} m "
                              f"below ground from its top at {a.top_height:g} m",
                              field="antenna.length")
    if grounded and isinstance(a, (DeltaLoop, SquareLoop)):
        z_low = min(min(w.start[2], w.end[2]) for w in spans)
        if z_low <= 0:
            where = "on the ground" if z_low == 0 else f"{-z_low:.3g} m below ground"
            raise ConfigError(f"the loop is {a.top_height - z_low:.4g} m tall, so from its top "
                              f"at {a.top_height:g} m its lowest point would be {where}; raise "
                              "'top_height' or make the loop smaller", field="antenna.top_height")
    if grounded and isinstance(a, WireList):
        for i, w in enumerate(spans):
            for end in ("start", "end"):
                z = getattr(w, end)[2]
                if z < 0:
                    raise ConfigError(f"wire '{w.name}' goes {-z:.3g} m below ground (z < 0); "
                                      "an end at z = 0 connects to the ground",
                                      field=f"antenna.wires[{i}].{end}")
    problems = clearance_problems(spans)
    if problems:
        i, j, what = problems[0]
        field = "antenna.wires" if isinstance(a, WireList) else "antenna"
        p = spans[j].start
        extra = f" (and {len(problems) - 1} more pair(s))" if len(problems) > 1 else ""
        raise ConfigError(
            f"wire '{spans[j].name}' ({field}[{j}]) {what} wire '{spans[i].name}' "
            f"({field}[{i}]){extra}; wires may meet only end to end, at a shared point "
            f"(wire '{spans[j].name}' starts at {p[0]:g}, {p[1]:g}, {p[2]:g} m)",
            field=f"{field}[{j}]" if isinstance(a, WireList) else field)
    g = grading(design, f_max_hz, density, f_min_hz)
    w = spans[feed.wire]
    route = route_plan(design, w.start + feed.distance * (w.end - w.start)
                       / float(np.linalg.norm(w.end - w.start)))
    if route is None:
        planned, _ = plan_wires(spans, feed, g)
    else:
        far = w.end if isinstance(a, EndFed) else None
        gap = grading(design, f_max_hz, 1.0, f_min_hz).finest
        planned = plan_routed_wires(spans, feed, g, route, cold_far_from=far,
                                    source_gap=gap).wires
    count = sum(w.segments for w in planned)
    limit = design.model.max_segments
    if count > limit:
        refined = f", refined {density:g} times for the convergence check" if density != 1 else ""
        raise ConfigError(f"the model needs {count} segments at {f_max_hz / 1e6:g} MHz "
                          f"({design.model.segments_per_wavelength:g} per wavelength{refined}), "
                          f"more than the limit of {limit}; raise the limit or lower "
                          "model.segments_per_wavelength", field="model.max_segments")
    fits = limits.max_segments_for_memory()
    if count > fits:
        need = limits.solve_memory_bytes(count) / 1024 ** 3
        raise ConfigError(f"the model needs {count} segments, whose interaction matrix takes "
                          f"{need:.3g} GiB; this machine has room for about {fits} segments "
                          "now; lower model.segments_per_wavelength or shorten the wires",
                          field="model.max_segments")


def check_variant(design: Design) -> None:
    """:func:`check_geometry` at the top of the design's own bands: what a
    variant (a trial, a tolerance case, a corner of a search space) must pass
    before it is built.

    Raises
    ------
    ConfigError
        With the field path.
    """
    check_geometry(design, max(b.high_hz for b in resolve_bands(design)))
