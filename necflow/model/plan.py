"""Segmentation plan: how many segments each wire gets, and the source wire.

Rules applied (G. J. Burke and A. J. Poggio, *Numerical Electromagnetics
Code (NEC) - Method of Moments*, Part III: User's Guide, Lawrence Livermore
National Laboratory, 1981; from memory):

* no segment longer than the target length (lambda_min / segments per
  wavelength);
* the voltage source sits on a one-segment wire of its own, centred on the
  feed point, so the source and its neighbours are uniform;
* segments on either side of a junction have nearly equal lengths;
* a wire gets at least one segment; a centre-fed symmetric wire gets an odd
  count (equal halves either side of the source).

The plan is plain arithmetic on a handful of points: no per-segment arrays,
so counting segments is cheap enough to run before any check refuses a model.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from necflow.errors import ModelError
from necflow.model.types import FeedLocation, WireSpan

#: Relative slack for float round-off in length comparisons.
_EPS = 1e-9


class PlannedWire(NamedTuple):
    """A wire with its segment count (SI)."""

    name: str
    start: np.ndarray
    end: np.ndarray
    radius: float
    segments: int


def _length(w) -> float:
    return float(np.linalg.norm(w.end - w.start))


def matched_count(length: float, neighbour: float, longest: float) -> int:
    """Segments for a wire joining a segment of length ``neighbour``.

    Picks the count whose segment length is nearest (as a ratio) to
    ``neighbour`` while not exceeding ``longest`` [m].
    """
    x = length / neighbour
    best, best_ratio = None, math.inf
    for n in {max(1, math.floor(x)), max(1, math.ceil(x - _EPS))}:
        seg = length / n
        if seg > longest * (1 + _EPS):
            continue
        ratio = max(seg / neighbour, neighbour / seg)
        if ratio < best_ratio - _EPS:
            best, best_ratio = n, ratio
    return best if best is not None else max(1, math.ceil(length / longest - _EPS))


def source_length(short_side: float, target: float) -> tuple[float, int]:
    """Source-segment length [m] and segment count of the shorter side.

    The shorter side (``short_side`` [m], feed point to the nearer end) is
    cut into ``n`` segments of exactly the source-segment length s:
    ``short_side = (n + 1/2) s`` with the smallest ``n >= 1`` giving
    ``s <= target``.
    """
    n = max(1, math.ceil(short_side / target - 0.5 - _EPS))
    return short_side / (n + 0.5), n


def _joint_partner(spans: list[WireSpan], k: int, point: np.ndarray) -> int:
    tol = 1e-9 * max(1.0, float(np.abs(point).max()))
    others = [i for i, w in enumerate(spans) if i != k and (
        np.linalg.norm(w.start - point) <= tol or np.linalg.norm(w.end - point) <= tol)]
    if len(others) != 1:
        raise ModelError("the feed point is at a wire end; a feed there needs exactly one "
                         f"other wire meeting it, found {len(others)}")
    return others[0]


def plan_wires(spans: list[WireSpan], feed: FeedLocation,
               target: float) -> tuple[list[PlannedWire], int]:
    """Segment the wires and give the source its own one-segment wire.

    Parameters
    ----------
    spans : list of WireSpan
        Straight wires [m].
    feed : FeedLocation
        Fed wire and distance along it [m].  A distance of 0 or the wire's
        length puts the source at a joint of exactly two wires (the apex of
        an inverted-V): a straight source wire is then centred on the joint
        along the bisector, and both wires are shortened to meet it.
    target : float
        Longest segment allowed [m].

    Returns
    -------
    wires : list of PlannedWire
        In the order of ``spans``, the fed wire replaced by its pieces.
    source : int
        Index in ``wires`` of the one-segment source wire.
    """
    k, d = feed
    fed = spans[k]
    length = _length(fed)
    tol = 1e-9 * max(1.0, length)
    plans: list[list[PlannedWire] | None] = [None] * len(spans)
    if tol < d < length - tol:
        u = (fed.end - fed.start) / length
        s, n_short = source_length(min(d, length - d), target)
        a = fed.start + (d - s / 2) * u
        b = fed.start + (d + s / 2) * u
        n_a = n_short if d <= length - d else matched_count(d - s / 2, s, target)
        n_b = n_short if d > length - d else matched_count(length - d - s / 2, s, target)
        plans[k] = [PlannedWire(f"{fed.name} (to start)", fed.start, a, fed.radius, n_a),
                    PlannedWire(f"{fed.name} (source)", a, b, fed.radius, 1),
                    PlannedWire(f"{fed.name} (to end)", b, fed.end, fed.radius, n_b)]
        source_in_plan = (k, 1)
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
        s, _ = source_length(min(length, _length(other)), target)
        a, b = point - s / 2 * u, point + s / 2 * u
        for idx, new_end in ((first, a), (second, b)):
            w = spans[idx]
            at_start = np.linalg.norm(w.start - point) <= tol
            start, end = (new_end, w.end) if at_start else (w.start, new_end)
            n = matched_count(float(np.linalg.norm(end - start)), s, target)
            plans[idx] = [PlannedWire(w.name, start, end, w.radius, n)]
        src = PlannedWire("feed (source)", a, b, fed.radius, 1)
        plans[first] = plans[first] + [src]
        source_in_plan = (first, 1)
    out: list[PlannedWire] = []
    source = -1
    for i, w in enumerate(spans):
        if plans[i] is None:
            plans[i] = [PlannedWire(w.name, w.start, w.end, w.radius,
                                    max(1, math.ceil(_length(w) / target - _EPS)))]
        if i == source_in_plan[0]:
            source = len(out) + source_in_plan[1]
        out.extend(plans[i])
    return out, source
