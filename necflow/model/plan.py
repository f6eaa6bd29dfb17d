"""Segmentation plan: graded segments, fine at the source and at junctions.

Rules applied (G. J. Burke and A. J. Poggio, *Numerical Electromagnetics
Code (NEC) - Method of Moments*, Part III: User's Guide, Lawrence Livermore
National Laboratory, 1981; from memory):

* no segment longer than the longest length allowed (lambda_min / segments
  per wavelength);
* the voltage source sits on a one-segment wire of its own, centred on the
  feed point;
* segments on either side of the source and of a junction have nearly equal
  lengths, and lengths change gradually along a wire;
* a wire gets at least one segment.

Segment lengths follow a size function of the distance ``d`` [m], measured
along the wires, from the source segment's ends::

    h(d) = min(longest, finest + growth * d)

so segments are ``finest`` long beside the source and grow by a factor of
about ``1 + growth`` from one segment to the next, up to ``longest``.  A
junction (wires meeting at a bend, three or more wires meeting, or a change
of radius) starts the grading again at the ``junction`` length: its nodes
enter the distance computation at the distance where ``h`` has that length.
Each straight piece gets ``N = ceil(integral of dx / h)`` segments whose ends
are evenly spaced in that integral, so each segment is ``h`` times a factor
``Phi / N <= 1``: never longer than the size function, mirror-symmetric on a
symmetric antenna, and equal where ``h`` is constant.  Refining the model by
a factor ``k`` divides ``h`` by ``k`` everywhere (:meth:`Grading.refined`),
which multiplies the segment count by about ``k``.

Why the source region: at a high-impedance feed point (a doublet near a
full wave long) the moment-method impedance of the one-segment source
changes, as the segments around it shorten, like a shunt capacitance growing
across the feed: measured with the engine on a 30 m doublet of 1 mm radius,
halving uniform segments of 0.49, 0.25, 0.12, 0.06 and 0.03 m adds 330, 193,
115, 71 and 47 fF, the same at 7.3 and 29.7 MHz.  At 2.5 kohm and 30 MHz
100 fF is 5 % of the impedance.  Short segments at the source remove most
of it for a few extra segments; the convergence check
(:mod:`necflow.chain.convergence`) reports what is left.  Why gently
(``growth`` 0.1): a faster growth (0.2 to 0.4) moved the impedance of a
half-wave dipole 2.7 to 3.4 % away from a converged model (uniform segments of a
few millimetres), against 1.6 % at 0.1 and 1.2 % for uniform segments of
lambda / 43 (measured with the engine).

Counting is arithmetic on the wire end points and a closed-form integral,
with no per-segment arrays, so the segment limit is checked before any
segment exists; :func:`expand` places the segments afterwards.
"""

from __future__ import annotations

import heapq
import math
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from necflow.errors import ModelError
from necflow.model.types import FeedLocation, WireSpan

#: Relative slack for float round-off in length comparisons.
_EPS = 1e-9
#: A bend sharper than this [rad] at a joint of two wires makes it a
#: refinement point; straighter joints continue the grading unchanged.
BEND_MIN_RAD = 1e-6
#: Consecutive segments whose lengths agree to this fraction are one run
#: (one engine wire of equal segments).
_RUN_RTOL = 1e-9


@dataclass(frozen=True)
class Grading:
    """Segment size as a function of distance from a refinement point.

    Attributes
    ----------
    longest : float
        Longest segment allowed [m].
    finest : float
        Segment length beside the source [m] (at most ``longest``).
    growth : float
        Growth of the segment length per metre of distance [1]; neighbouring
        segments differ by a factor of about ``1 + growth``.
    junction : float
        Segment length at a junction [m], between ``finest`` and ``longest``
        (None: ``finest``).
    """

    longest: float
    finest: float
    growth: float
    junction: float | None = None

    def __post_init__(self):
        if not (self.longest > 0 and self.finest > 0 and self.growth > 0):
            raise ModelError("segment lengths and their growth must be positive, got "
                             f"{self.longest!r} m, {self.finest!r} m, {self.growth!r}")
        if self.finest > self.longest:
            object.__setattr__(self, "finest", self.longest)
        j = self.finest if self.junction is None else self.junction
        object.__setattr__(self, "junction", min(max(j, self.finest), self.longest))

    def size(self, d: float) -> float:
        """Segment length [m] at distance ``d`` [m] from the source."""
        return min(self.longest, self.finest + self.growth * d)

    @property
    def junction_offset(self) -> float:
        """Distance [m] from the source at which the size function reaches
        the junction size: a junction starts the grading there."""
        return (self.junction - self.finest) / self.growth

    def refined(self, k: float) -> Grading:
        """The same grading with every segment length divided by ``k``."""
        return Grading(self.longest / k, self.finest / k, self.growth / k, self.junction / k)


class PlannedWire(NamedTuple):
    """A straight piece of wire with its segment count (SI).

    ``d_start`` and ``d_end`` are the distances [m] along the wires from each
    end to the nearest refinement point (``inf`` when none is connected).
    """

    name: str
    start: np.ndarray
    end: np.ndarray
    radius: float
    segments: int
    d_start: float
    d_end: float


def _length(w) -> float:
    return float(np.linalg.norm(w.end - w.start))


# ----------------------------------------------------------------------------
# The size function along one straight piece


def _intervals(length: float, d_start: float, d_end: float, g: Grading):
    """Intervals ``(x0, x1, h0, h1)`` of [0, length] on which the size
    function is linear, with its values at both ends [m]."""
    def h(x: float) -> float:
        d = min(d_start + x, d_end + length - x)
        return g.size(d) if math.isfinite(d) else g.longest

    cuts = {0.0, length}
    reach = (g.longest - g.finest) / g.growth   # distance at which h reaches longest
    if math.isfinite(d_start) and math.isfinite(d_end):
        cuts.add((d_end + length - d_start) / 2)
    if math.isfinite(d_start):
        cuts.add(reach - d_start)
    if math.isfinite(d_end):
        cuts.add(length - reach + d_end)
    xs = sorted(x for x in cuts if 0.0 <= x <= length)
    return [(a, b, h(a), h(b)) for a, b in zip(xs, xs[1:]) if b > a]


def _phi(x0: float, x1: float, h0: float, h1: float) -> float:
    """Integral of dx / h over one linear interval."""
    if abs(h1 - h0) <= _EPS * h0:
        return (x1 - x0) / h0
    return (x1 - x0) * math.log(h1 / h0) / (h1 - h0)


def piece_count(length: float, d_start: float, d_end: float, g: Grading) -> int:
    """Segments of a straight piece: ``ceil`` of the integral of dx / h."""
    total = sum(_phi(*iv) for iv in _intervals(length, d_start, d_end, g))
    return max(1, math.ceil(total - _EPS))


def segment_ends(length: float, d_start: float, d_end: float, g: Grading,
                 n: int) -> np.ndarray:
    """Positions [m] of the ``n + 1`` segment ends along a piece, evenly
    spaced in the integral of dx / h (first 0, last ``length``)."""
    ivs = _intervals(length, d_start, d_end, g)
    phis = [_phi(*iv) for iv in ivs]
    total = sum(phis)
    out = np.empty(n + 1)
    out[0], out[n] = 0.0, length
    k, before = 0, 0.0
    for i in range(1, n):
        t = i * total / n
        while k < len(ivs) - 1 and before + phis[k] < t:
            before += phis[k]
            k += 1
        x0, x1, h0, h1 = ivs[k]
        u = t - before
        if abs(h1 - h0) <= _EPS * h0:
            out[i] = x0 + h0 * u
        else:
            slope = (h1 - h0) / (x1 - x0)
            out[i] = x0 + h0 * math.expm1(slope * u) / slope
    return out


# ----------------------------------------------------------------------------
# The source


def _joint_partner(spans: list[WireSpan], k: int, point: np.ndarray) -> int:
    tol = 1e-9 * max(1.0, float(np.abs(point).max()))
    others = [i for i, w in enumerate(spans) if i != k and (
        np.linalg.norm(w.start - point) <= tol or np.linalg.norm(w.end - point) <= tol)]
    if len(others) != 1:
        raise ModelError("the feed point is at a wire end; a feed there needs exactly one "
                         f"other wire meeting it, found {len(others)}")
    return others[0]


def _pieces_with_source(spans: list[WireSpan], feed: FeedLocation, finest: float):
    """Straight pieces (name, start, end, radius) with the source piece in
    place, and the index of the source piece.

    An interior feed cuts its wire in three; the source is ``finest`` long
    (shorter when the feed is near a tip, so the piece beyond it is at least
    as long as the source).  A feed at the joint of two wires (the apex of an
    inverted-V) gets a straight source wire centred on the joint along the
    bisector, both wires shortened to meet it.
    """
    k, d = feed
    fed = spans[k]
    length = _length(fed)
    tol = 1e-9 * max(1.0, length)
    pieces: list[list[tuple] | None] = [None] * len(spans)
    if tol < d < length - tol:
        u = (fed.end - fed.start) / length
        s = min(finest, min(d, length - d) / 1.5)
        a = fed.start + (d - s / 2) * u
        b = fed.start + (d + s / 2) * u
        pieces[k] = [(f"{fed.name} (to start)", fed.start, a, fed.radius),
                     (f"{fed.name} (source)", a, b, fed.radius),
                     (f"{fed.name} (to end)", b, fed.end, fed.radius)]
        source_in = (k, 1)
    else:
        point = fed.start if d <= tol else fed.end
        j = _joint_partner(spans, k, point)
        other = spans[j]
        away_k = (fed.end if d <= tol else fed.start) - point
        away_j = (other.end if np.linalg.norm(other.start - point) <= tol else other.start) - point
        first, second = (k, j) if k < j else (j, k)
        v_first = away_k if first == k else away_j
        v_second = away_j if first == k else away_k
        v_first = v_first / np.linalg.norm(v_first)
        v_second = v_second / np.linalg.norm(v_second)
        u = v_second - v_first
        if np.linalg.norm(u) < 1e-6:
            raise ModelError("the two wires at the feed point fold back on each other")
        u /= np.linalg.norm(u)
        s = min(finest, min(length, _length(other)) / 1.5)
        a, b = point - s / 2 * u, point + s / 2 * u
        for idx, new_end in ((first, a), (second, b)):
            w = spans[idx]
            at_start = np.linalg.norm(w.start - point) <= tol
            start, end = (new_end, w.end) if at_start else (w.start, new_end)
            pieces[idx] = [(w.name, start, end, w.radius)]
        pieces[first] = pieces[first] + [("feed (source)", a, b, fed.radius)]
        source_in = (first, 1)
    out: list[tuple] = []
    source = -1
    for i, w in enumerate(spans):
        if pieces[i] is None:
            pieces[i] = [(w.name, w.start, w.end, w.radius)]
        if i == source_in[0]:
            source = len(out) + source_in[1]
        out.extend(pieces[i])
    return out, source


# ----------------------------------------------------------------------------
# Refinement points and distances


def _nodes(pieces) -> tuple[list[np.ndarray], list[tuple[int, int]]]:
    """Distinct end points and, per piece, the node index of each end."""
    points: list[np.ndarray] = []
    ends = []
    for _, start, end, _ in pieces:
        idx = []
        for p in (start, end):
            tol = 1e-9 * max(1.0, float(np.abs(p).max()))
            for n, q in enumerate(points):
                if float(np.linalg.norm(p - q)) <= tol:
                    idx.append(n)
                    break
            else:
                points.append(p)
                idx.append(len(points) - 1)
        ends.append(tuple(idx))
    return points, ends


def _refinement(node: int, pieces, ends, fine: set[int]) -> str | None:
    """'source' for an end of a one-segment piece (the source's, a load's),
    'junction' where three or more pieces meet, two meet at a bend or change
    radius; else None."""
    touching = [(i, e) for i, pe in enumerate(ends) for e, n in enumerate(pe) if n == node]
    if any(i in fine for i, _ in touching):
        return "source"
    if len(touching) >= 3:
        return "junction"
    if len(touching) < 2:
        return None
    (i, ei), (j, ej) = touching
    if pieces[i][3] != pieces[j][3]:
        return "junction"
    # Directions pointing away from the joint along each piece.
    vi = pieces[i][2 - ei] - pieces[i][1 + ei]
    vj = pieces[j][2 - ej] - pieces[j][1 + ej]
    cos = float(np.dot(vi, vj) / (np.linalg.norm(vi) * np.linalg.norm(vj)))
    return "junction" if math.acos(max(-1.0, min(1.0, cos))) < math.pi - BEND_MIN_RAD else None


def _distances(npoints: int, pieces, ends, seeds: dict[int, float]) -> list[float]:
    """Shortest distance along the wires from each node to a seed node, each
    seed starting at its own distance."""
    adj: list[list[tuple[int, float]]] = [[] for _ in range(npoints)]
    for (_, start, end, _), (a, b) in zip(pieces, ends):
        w = float(np.linalg.norm(end - start))
        adj[a].append((b, w))
        adj[b].append((a, w))
    dist = [math.inf] * npoints
    heap = [(d0, s) for s, d0 in seeds.items()]
    for s, d0 in seeds.items():
        dist[s] = d0
    while heap:
        d, n = heapq.heappop(heap)
        if d > dist[n]:
            continue
        for m, w in adj[n]:
            if d + w < dist[m]:
                dist[m] = d + w
                heapq.heappush(heap, (d + w, m))
    return dist


def plan_wires(spans: list[WireSpan], feed: FeedLocation,
               grading: Grading) -> tuple[list[PlannedWire], int]:
    """Segment counts of every straight piece, the source on a piece of its own.

    Parameters
    ----------
    spans : list of WireSpan
        Straight wires [m].
    feed : FeedLocation
        Fed wire and distance along it [m].  A distance of 0 or the wire's
        length puts the source at a joint of exactly two wires (the apex of
        an inverted-V): a straight source wire is then centred on the joint
        along the bisector, and both wires are shortened to meet it.
    grading : Grading
        Longest and finest segment and the growth between them.

    Returns
    -------
    wires : list of PlannedWire
        In the order of ``spans``, the fed wire replaced by its pieces.
    source : int
        Index in ``wires`` of the one-segment source piece.
    """
    pieces, source = _pieces_with_source(spans, feed, grading.finest)
    return _graded(pieces, {source}, grading), source


def _graded(pieces, fine: set[int], grading: Grading,
            min_size: dict[int, float] | None = None) -> list[PlannedWire]:
    """Segment counts of straight pieces; the ``fine`` pieces (sources,
    loads) get one segment and start the grading at their ends.  A piece in
    ``min_size`` starts its grading where the size function reaches that
    length [m] (a fat wire's segments stay long against its radius)."""
    points, ends = _nodes(pieces)
    start = {"source": 0.0, "junction": grading.junction_offset}
    seeds = {n: start[kind] for n in range(len(points))
             if (kind := _refinement(n, pieces, ends, fine)) is not None}
    dist = _distances(len(points), pieces, ends, seeds)
    out = []
    for i, ((name, start, end, radius), (a, b)) in enumerate(zip(pieces, ends)):
        length = float(np.linalg.norm(end - start))
        da, db = dist[a], dist[b]
        if min_size and i in min_size:
            off = max(0.0, (min_size[i] - grading.finest) / grading.growth)
            da, db = max(da, off), max(db, off)
        n = 1 if i in fine else piece_count(length, da, db, grading)
        out.append(PlannedWire(name, start, end, float(radius), n, da, db))
    return out


#: Length of an end-fed wire's source segment [m]: about the size of the
#: transformer's box between its terminals (common practice: a few cm to 10 cm).
END_FED_GAP = 0.1

#: A line's segments stay at least this many times its common-mode radius
#: (the thin-wire kernel wants 8, NEC-2 user guide; a margin for round-off),
#: and a route piece's grading starts no shorter than 1.1 finest segments
#: (a graded piece's count rounds up, which shortens its segments a little).
_THICK = 8.5


@dataclass(frozen=True)
class RoutedPlan:
    """A plan with the feed line's common-mode path.

    ``sources`` are ``(piece index, voltage)`` (a split source: two halves of
    0.5 V), ``loads`` ``(piece index, RouteLoad)``, ``probes`` ``(name,
    piece index, 'first' or 'last' segment)`` where currents are read, or
    ``(name, (first piece, last piece), 'largest')``;
    ``grading`` the grading the pieces were counted with (expand with it).
    """

    wires: list[PlannedWire]
    sources: list[tuple[int, float]]
    loads: list[tuple[int, object]]
    probes: list[tuple[str, int, str]]
    grading: Grading


def plan_routed_wires(spans: list[WireSpan], feed: FeedLocation, grading: Grading,
                      route, cold_far_from: np.ndarray | None = None,
                      source_gap: float | None = None) -> RoutedPlan:
    """:func:`plan_wires` with the route's common-mode path attached.

    Parameters
    ----------
    spans, feed, grading
        As :func:`plan_wires`.
    route : necflow.model.route.RoutePlan
    cold_far_from : ndarray, optional
        For an end-fed wire: the radiator's far end; the cold side of the
        source is the end farther from it.
    source_gap : float, optional
        Length of a source segment [m], kept when the model is refined (the
        feed gap is a physical size: the line's attachment there is not
        refined away); default the grading's finest.
    """
    gap = grading.finest if source_gap is None else source_gap
    if cold_far_from is not None:
        # an end-fed wire's source is the transformer's gap, of a fixed size:
        # a source refined toward zero at the current minimum of a
        # high-impedance feed does not converge (the average gain test drifts)
        gap = max(gap, END_FED_GAP)
    grading = Grading(grading.longest, max(grading.finest, gap), grading.growth,
                      grading.junction)
    finest = grading.finest
    k, d = feed
    fed = spans[k]
    tol = 1e-9 * max(1.0, _length(fed))
    at_end = d <= tol or d >= _length(fed) - tol
    point = fed.start if d <= tol else fed.end
    partners = [i for i, w in enumerate(spans) if i != k and (
        np.linalg.norm(w.start - point) <= tol or np.linalg.norm(w.end - point) <= tol)]
    if at_end and not partners:
        # an end-fed wire with only the line as its return: the source bridges
        # the line's top (cold) and the wire's end, along the route's first leg
        u0 = route.points[1] - route.points[0]
        u0 = u0 / np.linalg.norm(u0)
        s = min(finest, _length(fed) / 1.5, float(np.linalg.norm(route.points[1] - point)) / 1.5)
        a, b = point + s * u0, point
        pieces = [(w.name, w.start, w.end, w.radius) for w in spans]
        pieces.append(("feed (source)", a, b, fed.radius))
        source = len(pieces) - 1
        cold_far_from = None            # the line goes on from the source's lower end
    else:
        # a source segment is at least the finest length (a split source is
        # two of them) and long enough that the line's first segment, kept at
        # least _THICK times its radius, is under twice its length
        seg = max(finest, _THICK * route.radius_at(0.0) / 1.8)
        src = 2.0 * seg if route.attach == "split" else seg
        pieces, source = _pieces_with_source(spans, feed, src)
        _, a, b, _ = pieces[source]
    name, _, _, radius = pieces[source]
    sources: list[tuple[int, float]]
    if route.attach == "split":
        m = (a + b) / 2.0
        pieces[source] = (f"{name} (half)", a, m, radius)
        pieces.insert(source + 1, (f"{name} (half)", m, b, radius))
        sources = [(source, 0.5), (source + 1, 0.5)]
        attach = m
    else:
        sources = [(source, 1.0)]
        attach = a
        if cold_far_from is not None and \
                np.linalg.norm(b - cold_far_from) > np.linalg.norm(a - cold_far_from):
            attach = b
    fine = {i for i, _ in sources}
    loads: list[tuple[int, object]] = []
    probes: list[tuple[str, int, str]] = []
    pts = [attach] + list(route.points[1:])
    cum = np.concatenate([[0.0], np.cumsum([np.linalg.norm(q - p)
                                            for p, q in zip(pts, pts[1:])])])
    total = float(cum[-1])
    cuts = {0.0, total, *map(float, cum)}
    cuts |= {min(e, total) for e, _ in route.sections if e < total}
    load_spans = []
    first_route = len(pieces)
    for ld in route.loads:
        if ld.at is None:
            continue
        span = max(finest, _THICK * route.radius_at(ld.at))
        lo = min(max(ld.at - span / 2, 0.0), max(total - span, 0.0))
        hi = min(lo + span, total)
        for c in map(float, cum[1:-1]):      # keep a choke on one straight leg
            if lo + 1e-9 < c < hi - 1e-9:
                lo, hi = (max(c - span, 0.0), c) if ld.at <= c else (c, min(c + span, total))
        load_spans.append((lo, hi, ld))
        cuts |= {lo, hi}
    cuts_sorted = sorted(c for c in cuts if 0.0 <= c <= total and not any(
        lo + 1e-9 < c < hi - 1e-9 for lo, hi, _ in load_spans))
    merged = [cuts_sorted[0]]
    for c in cuts_sorted[1:]:
        if c - merged[-1] > 1e-9 * max(1.0, total):
            merged.append(c)

    thick: dict[int, float] = {}

    def at(dist: float) -> np.ndarray:
        j = min(int(np.searchsorted(cum, dist, side="right")) - 1, len(pts) - 2)
        t = (dist - cum[j]) / max(cum[j + 1] - cum[j], 1e-300)
        return pts[j] + t * (pts[j + 1] - pts[j])

    node_at = {merged[0]: attach}
    for c in merged[1:]:
        node_at[c] = at(c)
    for lo, hi in zip(merged, merged[1:]):
        mid = (lo + hi) / 2.0
        here = next((ld for (a0, b0, ld) in load_spans if a0 <= mid <= b0), None)
        r = route.radius_at(mid)
        idx = len(pieces)
        pieces.append(("line" if here is None else f"choke {here.name}", node_at[lo],
                       node_at[hi], r))
        thick[idx] = max(_THICK * r, 1.1 * finest)
        if here is not None:
            fine.add(idx)
            loads.append((idx, here))
            probes.append((here.name, idx, "first"))
    last_route = len(pieces) - 1
    # the line below its last choke, toward the station: with a floating
    # entry its largest current is what reaches the station (the current at
    # the open end itself is zero)
    below = max((i for i, _ in loads), default=first_route - 1) + 1
    end = node_at[merged[-1]]
    entry_load = next((ld for ld in route.loads if ld.at is None), None)
    r_end = route.radius_at(total)
    if route.entry in ("ground", "resistance") and end[2] > 1e-9:
        # the wire down to the ground ends in one short segment at the ground
        # (where the resistance of entry: resistance sits): a long graded
        # segment at a Sommerfeld-Norton ground contact does not converge
        foot = np.array([end[0], end[1], 0.0])
        s = min(max(finest, _THICK * r_end), end[2] / 1.5)
        knee = np.array([end[0], end[1], s])
        pieces.append(("entry wire", end, knee, r_end))
        thick[len(pieces) - 1] = max(_THICK * r_end, 1.1 * finest)
        pieces.append(("entry load" if entry_load is not None else "entry contact", knee, foot,
                       r_end))
        fine.add(len(pieces) - 1)
        if entry_load is not None:
            loads.append((len(pieces) - 1, entry_load))
        probes.append(("entry", len(pieces) - 1, "first"))
    else:
        probes.append(("entry", (min(below, last_route), last_route), "largest"))
    return RoutedPlan(_graded(pieces, fine, grading, thick), sources, loads, probes, grading)


def expand(wire: PlannedWire, grading: Grading) -> list[tuple[np.ndarray, np.ndarray, int]]:
    """The runs of equal segments of a planned piece: ``(start, end, count)``.

    The first run starts at the piece's start and the last ends at its end,
    bit for bit, so connected pieces keep identical end points.
    """
    if wire.segments == 1:
        return [(wire.start, wire.end, 1)]
    length = float(np.linalg.norm(wire.end - wire.start))
    x = segment_ends(length, wire.d_start, wire.d_end, grading, wire.segments)
    seg = np.diff(x)
    runs: list[list[int]] = []   # [first segment, count]
    for i, s in enumerate(seg):
        if runs and abs(s - seg[runs[-1][0]]) <= _RUN_RTOL * seg[runs[-1][0]]:
            runs[-1][1] += 1
        else:
            runs.append([i, 1])
    u = (wire.end - wire.start) / length
    out = []
    for first, count in runs:
        a = wire.start if first == 0 else wire.start + x[first] * u
        last = first + count
        b = wire.end if last == wire.segments else wire.start + x[last] * u
        out.append((a, b, count))
    # Interior run ends are shared: reuse the same array for both neighbours.
    for i in range(1, len(out)):
        out[i] = (out[i - 1][1], out[i][1], out[i][2])
    return out
