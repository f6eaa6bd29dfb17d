"""Straight-wire geometry of each antenna shape of the design schema.

Coordinates: x along the span, y across it, z up; the ground is z = 0.
These functions only place wires; segmentation is :mod:`necflow.model.plan`.
"""

from __future__ import annotations

import math

import numpy as np

from necflow.config.schema import Design, Doublet, InvertedV, OffCentre, WireList
from necflow.errors import ConfigError
from necflow.model.types import FeedLocation, WireSpan


def _p(x: float, y: float, z: float) -> np.ndarray:
    return np.array([x, y, z], dtype=float)


def _position_distance(position, length: float, field: str) -> float:
    """Distance [m] from a wire's start for a schema feed position.

    ``position`` is ``("fraction", v)``, ``("distance", metres)`` or a bare
    fraction (the schema default).  Raises ConfigError when the point is not
    strictly inside the wire (the ends are free tips or junctions).
    """
    if isinstance(position, (int, float)):
        position = ("fraction", float(position))
    kind, value = position
    if kind == "fraction":
        if not 0.0 < value < 1.0:
            raise ConfigError(f"feed position {value:g} is off the wire: a fraction must lie "
                              "strictly between 0 and 1", field=field)
        return value * length
    if not 0.0 < value < length:
        raise ConfigError(f"feed position {value:g} m is off the wire: a distance must lie "
                          f"strictly between 0 m and the wire length {length:g} m", field=field)
    return float(value)


def inverted_v_drop(antenna: InvertedV) -> float:
    """Height [m] the leg ends sit below the apex (from ``end_height`` or
    ``droop``); raises ConfigError when the legs cannot be placed."""
    if antenna.end_height is not None:
        if antenna.end_height > antenna.apex_height:
            raise ConfigError(f"end height {antenna.end_height:g} m is above the apex "
                              f"({antenna.apex_height:g} m); leg ends must hang at or below "
                              "the feed point", field="antenna.end_height")
        drop = antenna.apex_height - antenna.end_height
        if drop > antenna.leg:
            raise ConfigError(f"legs of {antenna.leg:g} m cannot reach from the apex at "
                              f"{antenna.apex_height:g} m down to {antenna.end_height:g} m",
                              field="antenna.leg")
        return drop
    return antenna.leg * math.sin(antenna.droop)


def geometry(design: Design) -> tuple[list[WireSpan], FeedLocation]:
    """Straight wires of the design's antenna and its feed point.

    Parameters
    ----------
    design : necflow.config.schema.Design
        A validated design.

    Returns
    -------
    wires : list of WireSpan
        ``(name, start, end, radius)`` per straight wire [m].
    feed : FeedLocation
        Index of the fed wire and distance [m] along it from its start.  For
        an inverted-V the feed is the apex, the shared end of both legs
        (``distance`` equals the first leg's length).

    Raises
    ------
    ConfigError
        For a feed position off its wire or inverted-V legs that cannot be
        placed.
    """
    a = design.antenna
    if isinstance(a, (Doublet, OffCentre)):
        r = a.wire.diameter / 2.0
        half = a.span / 2.0
        span = WireSpan("wire", _p(-half, 0.0, a.height), _p(half, 0.0, a.height), r)
        if isinstance(a, Doublet):
            return [span], FeedLocation(0, half)
        d = _position_distance(a.feed_position, a.span, "antenna.feed_position")
        return [span], FeedLocation(0, d)
    if isinstance(a, InvertedV):
        r = a.wire.diameter / 2.0
        drop = inverted_v_drop(a)
        reach = math.sqrt(max(a.leg ** 2 - drop ** 2, 0.0))
        apex = _p(0.0, 0.0, a.apex_height)
        z_end = a.apex_height - drop
        left = WireSpan("left leg", _p(-reach, 0.0, z_end), apex, r)
        right = WireSpan("right leg", apex, _p(reach, 0.0, z_end), r)
        return [left, right], FeedLocation(0, a.leg)
    if isinstance(a, WireList):
        default_r = a.wire.diameter / 2.0
        spans = []
        for i, item in enumerate(a.wires):
            r = item.diameter / 2.0 if item.diameter is not None else default_r
            spans.append(WireSpan(item.name or str(i + 1), _p(*item.start), _p(*item.end), r))
        k = a.feed_index()
        length = float(np.linalg.norm(spans[k].end - spans[k].start))
        d = _position_distance(a.feed.position, length, "antenna.feed.position")
        return spans, FeedLocation(k, d)
    raise ConfigError(f"unknown antenna shape '{getattr(a, 'shape', a)}'", field="antenna.shape")
