"""Straight-wire geometry of each antenna shape of the design schema.

Coordinates: x along the span, y across it, z up; the ground is z = 0.
These functions only place wires; segmentation is :mod:`necflow.model.plan`.
"""

from __future__ import annotations

import math

import numpy as np

from necflow.config.schema import (
    BentDoublet,
    DeltaLoop,
    Design,
    Doublet,
    EndFed,
    HorizontalLoop,
    InvertedV,
    Leg,
    OffCentre,
    Sloper,
    SquareLoop,
    WireList,
)
from necflow.errors import ConfigError
from necflow.model.types import FeedLocation, WireSpan


def _p(x: float, y: float, z: float) -> np.ndarray:
    return np.array([x, y, z], dtype=float)


def _position_distance(position, length: float, field: str, what: str = "feed position",
                       wire: str = "wire") -> float:
    """Distance [m] from a wire's start for a schema position.

    ``position`` is ``("fraction", v)``, ``("distance", metres)`` or a bare
    fraction (the schema default).  Raises ConfigError when the point is not
    strictly inside the wire (the ends are free tips or junctions); ``what``
    and ``wire`` name the point and the wire in the message.
    """
    if isinstance(position, (int, float)):
        position = ("fraction", float(position))
    kind, value = position
    if kind == "fraction":
        if not 0.0 < value < 1.0:
            raise ConfigError(f"{what} {value:g} is off the {wire}: a fraction must lie "
                              "strictly between 0 and 1", field=field)
        return value * length
    if not 0.0 < value < length:
        raise ConfigError(f"{what} {value:g} m is off the {wire}: a distance must lie "
                          f"strictly between 0 m and the {wire} length {length:g} m",
                          field=field)
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


def sloper_drop(antenna: Sloper) -> float:
    """Height [m] the lower end of a sloper sits below its upper end (from
    ``bottom_height`` or ``slope``); raises ConfigError when the wire cannot
    be placed."""
    if antenna.bottom_height is not None:
        if antenna.bottom_height > antenna.top_height:
            raise ConfigError(f"bottom height {antenna.bottom_height:g} m is above the top "
                              f"height ({antenna.top_height:g} m); 'bottom_height' is the "
                              "lower end", field="antenna.bottom_height")
        drop = antenna.top_height - antenna.bottom_height
        if drop > antenna.length:
            raise ConfigError(f"a wire of {antenna.length:g} m cannot reach from "
                              f"{antenna.top_height:g} m down to {antenna.bottom_height:g} m",
                              field="antenna.length")
        return drop
    return antenna.length * math.sin(antenna.slope)


def _sloper(a: Sloper) -> tuple[list[WireSpan], FeedLocation]:
    drop = sloper_drop(a)
    if a.slope is not None:
        reach = a.length * math.cos(a.slope)
    else:
        reach = math.sqrt(max(a.length ** 2 - drop ** 2, 0.0))
    top = _p(0.0, 0.0, a.top_height)
    bottom = _p(reach * math.cos(a.azimuth), reach * math.sin(a.azimuth), a.top_height - drop)
    d = _position_distance(a.feed_position, a.length, "antenna.feed_position")
    return [WireSpan("wire", top, bottom, a.wire.diameter / 2.0)], FeedLocation(0, d)


def _end_fed(a: EndFed) -> tuple[list[WireSpan], FeedLocation]:
    """The radiator from the fed end (above x = y = 0) and the counterpoise,
    if any, from the same point (the transformer)."""
    r = a.wire.diameter / 2.0
    feed = _p(0.0, 0.0, a.feed_height)
    far_height = a.feed_height if a.far_height is None else a.far_height
    drop = a.feed_height - far_height
    if abs(drop) >= a.length:
        raise ConfigError(f"a wire of {a.length:g} m cannot reach from {a.feed_height:g} m to "
                          f"{far_height:g} m", field="antenna.far_height")
    reach = math.sqrt(a.length ** 2 - drop ** 2)
    far = _p(reach * math.cos(a.azimuth), reach * math.sin(a.azimuth), far_height)
    spans = [WireSpan("radiator", feed, far, r)]
    cp = a.counterpoise
    if cp is not None:
        end_height = a.feed_height if cp.end_height is None else cp.end_height
        cdrop = a.feed_height - end_height
        if abs(cdrop) >= cp.length:
            raise ConfigError(f"a counterpoise of {cp.length:g} m cannot reach from "
                              f"{a.feed_height:g} m to {end_height:g} m",
                              field="antenna.counterpoise.end_height")
        az = a.azimuth + math.pi if cp.azimuth is None else cp.azimuth
        creach = math.sqrt(cp.length ** 2 - cdrop ** 2)
        spans.append(WireSpan("counterpoise", feed, _p(creach * math.cos(az),
                                                       creach * math.sin(az), end_height), r))
    return spans, FeedLocation(0, 0.0)


def delta_sides(antenna: DeltaLoop) -> tuple[float, float, float]:
    """Base, each sloping side and the height of a delta loop's triangle [m].

    The sloping sides share what the base leaves of the perimeter equally;
    the height follows from Pythagoras.  Raises ConfigError when the base is
    half the perimeter or more (no triangle closes).
    """
    p = antenna.perimeter
    base = antenna.base if antenna.base is not None else p / 3.0
    if 2.0 * base >= p:
        raise ConfigError(f"a base of {base:g} m needs a perimeter above {2.0 * base:g} m (the "
                          "two sloping sides together must be longer than the base); the "
                          f"perimeter is {p:g} m", field="antenna.base")
    side = (p - base) / 2.0
    return base, side, math.sqrt(side ** 2 - (base / 2.0) ** 2)


def _lowest(antenna: DeltaLoop | SquareLoop, tall: float) -> float:
    """Height [m] of the lowest point of a vertical loop ``tall`` metres high."""
    if antenna.bottom_height is not None:
        return antenna.bottom_height
    return antenna.top_height - tall


def _closed(points: list[np.ndarray], names: list[str], radius: float) -> list[WireSpan]:
    """Straight wires around a loop of corner points: wire k runs from corner
    k to corner k + 1 and the last ends on the very first corner."""
    n = len(points)
    return [WireSpan(names[k], points[k], points[(k + 1) % n], radius) for k in range(n)]


def _delta_loop(a: DeltaLoop) -> tuple[list[WireSpan], FeedLocation]:
    base, side, tall = delta_sides(a)
    z0 = _lowest(a, tall)
    z_base, z_apex = (z0, z0 + tall) if a.apex == "up" else (z0 + tall, z0)
    corners = [_p(-base / 2.0, 0.0, z_base), _p(base / 2.0, 0.0, z_base), _p(0.0, 0.0, z_apex)]
    spans = _closed(corners, ["base", "right side", "left side"], a.wire.diameter / 2.0)
    feed = {"base-centre": FeedLocation(0, base / 2.0), "base-corner": FeedLocation(0, 0.0),
            "apex": FeedLocation(1, side), "side-centre": FeedLocation(1, side / 2.0)}[a.feed]
    return spans, feed


def _square_loop(a: SquareLoop) -> tuple[list[WireSpan], FeedLocation]:
    s = a.side
    z0 = _lowest(a, s)
    corners = [_p(-s / 2.0, 0.0, z0), _p(s / 2.0, 0.0, z0), _p(s / 2.0, 0.0, z0 + s),
               _p(-s / 2.0, 0.0, z0 + s)]
    spans = _closed(corners, ["bottom", "right side", "top", "left side"], a.wire.diameter / 2.0)
    feed = {"bottom-centre": FeedLocation(0, s / 2.0), "side-centre": FeedLocation(1, s / 2.0),
            "bottom-corner": FeedLocation(0, 0.0)}[a.feed]
    return spans, feed


def _horizontal_loop(a: HorizontalLoop) -> tuple[list[WireSpan], FeedLocation]:
    n = a.sides
    side = a.perimeter / n
    radius = side / (2.0 * math.sin(math.pi / n))        # circumradius of the polygon
    # Corner k at angle -90 deg + (2k - 1) 180 deg / n: side 0 (corners 0 -> 1)
    # is parallel to x at the -y edge, whatever n.
    angles = -math.pi / 2.0 + (2.0 * np.arange(n) - 1.0) * math.pi / n
    corners = [_p(radius * math.cos(t), radius * math.sin(t), a.height) for t in angles]
    spans = _closed(corners, [f"side {k + 1}" for k in range(n)], a.wire.diameter / 2.0)
    feed = FeedLocation(0, side / 2.0) if a.feed == "side-centre" else FeedLocation(0, 0.0)
    return spans, feed


def _leg_points(leg: Leg, sign: float, feed: np.ndarray, field: str) -> list[np.ndarray]:
    """Points of a bent-doublet leg from the feed point outward: the feed
    point, the bend (if the leg bends) and the leg's end.  ``sign`` is -1 for
    the leg toward -x, +1 for the leg toward +x."""
    h0 = float(feed[2])
    length = leg.length
    h_end = h0 if leg.end_height is None else leg.end_height
    if abs(h_end - h0) > length:
        raise ConfigError(f"a leg of {length:g} m cannot reach from the feed point at {h0:g} m "
                          f"to an end at {h_end:g} m", field=f"{field}.end_height")
    straight = _p(sign * math.sqrt(max(length ** 2 - (h_end - h0) ** 2, 0.0)), 0.0, h_end)
    if leg.bend is None:
        return [feed, straight]
    bend = leg.bend
    d = _position_distance(bend.position, length, f"{field}.bend.position",
                           what="bend position", wire="leg")
    h_bend = h0 + (h_end - h0) * d / length if bend.height is None else bend.height
    if abs(h_bend - h0) > d or abs(h_end - h_bend) > length - d:
        raise ConfigError(f"a bend at {h_bend:g} m cannot be placed: the {d:g} m of leg before "
                          f"it must change height by {abs(h_bend - h0):g} m and the "
                          f"{length - d:g} m after it by {abs(h_end - h_bend):g} m",
                          field=f"{field}.bend.height")
    inner = math.sqrt(max(d ** 2 - (h_bend - h0) ** 2, 0.0))
    outer = math.sqrt(max((length - d) ** 2 - (h_end - h_bend) ** 2, 0.0))
    corner = _p(sign * inner, 0.0, h_bend)
    end = corner + _p(sign * outer * math.cos(bend.turn), outer * math.sin(bend.turn),
                      h_end - h_bend)
    u_in, u_out = (corner - feed) / d, (end - corner) / (length - d)
    if float(np.linalg.norm(u_in - u_out)) <= 1e-12:
        return [feed, straight]          # no change of direction: one straight wire
    return [feed, corner, end]


def _bent_doublet(a: BentDoublet) -> tuple[list[WireSpan], FeedLocation]:
    r = a.wire.diameter / 2.0
    feed = _p(0.0, 0.0, a.height)
    left = _leg_points(a.left, -1.0, feed, "antenna.left")[::-1]
    right = _leg_points(a.right, 1.0, feed, "antenna.right")
    spans = []
    for name, pts, outward in (("left leg", left, False), ("right leg", right, True)):
        labels = [name] if len(pts) == 2 else [f"{name}, inner piece", f"{name}, outer piece"]
        if not outward:
            labels.reverse()
        spans += [WireSpan(label, p, q, r) for label, p, q in zip(labels, pts, pts[1:])]
    k = len(left) - 2                     # the left leg's piece that ends at the feed point
    return spans, FeedLocation(k, float(np.linalg.norm(spans[k].end - spans[k].start)))


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
        an inverted-V and a bent doublet the feed is the shared end of both
        legs (``distance`` equals the length of the wire that ends there);
        a loop fed at a corner has ``distance`` 0 on the wire starting there.

    Notes
    -----
    Loops are closed: wire k of a loop ends on the very point where wire
    k + 1 starts, and the last ends where the first starts.  Vertical loops
    (delta, square) lie in the x-z plane, centred on x = 0; the horizontal
    loop is centred above x = y = 0; a sloper's upper end and a bent
    doublet's feed point stand above x = y = 0.

    Raises
    ------
    ConfigError
        For a feed position off its wire, or inverted-V legs, a sloper, a
        delta loop's base or a bent doublet's leg or bend that cannot be
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
    shapes = {Sloper: _sloper, DeltaLoop: _delta_loop, SquareLoop: _square_loop,
              HorizontalLoop: _horizontal_loop, BentDoublet: _bent_doublet, EndFed: _end_fed}
    if type(a) in shapes:
        return shapes[type(a)](a)
    raise ConfigError(f"unknown antenna shape '{getattr(a, 'shape', a)}'", field="antenna.shape")
