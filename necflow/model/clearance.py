"""Wires that cross, overlap, repeat or nearly touch: found before the engine.

The method-of-moments engine connects wires only where their ends coincide;
wires that cross, run inside each other or lie closer than a few radii make
its matrix meaningless or make it fail without saying which wires.  These
checks find such pairs from the end points alone, vectorised over all pairs.
"""

from __future__ import annotations

import numpy as np

from necflow.model.types import WireSpan

#: Centre lines closer than this many times the sum of the two radii are
#: refused (the surfaces are then less than one sum of radii apart).  The
#: NEC-2 user's guide asks for parallel wires several radii apart (Burke and
#: Poggio 1981, Part III, from memory).
NEAR_FACTOR = 2.0
#: Relative tolerance of "the same point" (as the segmentation's junctions).
_TOL = 1e-9


def segment_distances(p0, p1, q0, q1):
    """Closest distance between segments ``p0-p1`` and ``q0-q1``, pairwise.

    Parameters
    ----------
    p0, p1, q0, q1 : ndarray
        ``(n, 3)`` end points [m].

    Returns
    -------
    dist : ndarray
        ``(n,)`` [m].
    s, t : ndarray
        ``(n,)`` parameters of the closest points along each segment (0 at
        ``p0``/``q0``, 1 at ``p1``/``q1``).

    References
    ----------
    .. [1] C. Ericson, *Real-Time Collision Detection*, Morgan Kaufmann 2005,
       sec. 5.1.9 (closest points of two segments).
    """
    d1, d2, r = p1 - p0, q1 - q0, p0 - q0
    a = np.einsum("ij,ij->i", d1, d1)
    e = np.einsum("ij,ij->i", d2, d2)
    f = np.einsum("ij,ij->i", d2, r)
    c = np.einsum("ij,ij->i", d1, r)
    b = np.einsum("ij,ij->i", d1, d2)
    denom = a * e - b * b
    a_ = np.where(a > 0, a, 1.0)          # a point (zero length) stays at parameter 0
    e_ = np.where(e > 0, e, 1.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        s = np.where(denom > _TOL * a * e, np.clip((b * f - c * e) / denom, 0.0, 1.0), 0.0)
        t = np.where(e > 0, (b * s + f) / e_, 0.0)
        s = np.where(t < 0.0, np.clip(-c / a_, 0.0, 1.0),
                     np.where(t > 1.0, np.clip((b - c) / a_, 0.0, 1.0), s))
        s = np.where(e > 0, s, np.clip(-c / a_, 0.0, 1.0))     # the second is a point
        s = np.where(a > 0, s, 0.0)
        t = np.clip(t, 0.0, 1.0)
    gap = (p0 + d1 * s[:, None]) - (q0 + d2 * t[:, None])
    return np.sqrt(np.einsum("ij,ij->i", gap, gap)), s, t


def clearance_problems(spans: list[WireSpan]) -> list[tuple[int, int, str]]:
    """Pairs of wires the engine cannot model as given.

    Returns
    -------
    list of (i, j, what)
        ``i < j`` wire indexes and a phrase: 'is the same wire as',
        'overlaps', 'crosses', 'touches ... away from its ends' or 'runs
        closer than ...', each about wire j against wire i.
    """
    n = len(spans)
    if n < 2:
        return []
    start = np.array([w.start for w in spans], dtype=float)
    end = np.array([w.end for w in spans], dtype=float)
    radius = np.array([w.radius for w in spans], dtype=float)
    scale = max(1.0, float(np.abs(np.concatenate([start, end])).max()))
    tol = _TOL * scale * 1e3
    ii, jj = np.triu_indices(n, k=1)
    out: list[tuple[int, int, str]] = []
    dist, s, t = segment_distances(start[ii], end[ii], start[jj], end[jj])
    ends_i = np.stack([start[ii], end[ii]], axis=1)           # (m, 2, 3)
    ends_j = np.stack([start[jj], end[jj]], axis=1)
    shared = np.linalg.norm(ends_i[:, :, None, :] - ends_j[:, None, :, :], axis=-1) <= tol
    n_shared = shared.sum(axis=(1, 2))
    near = NEAR_FACTOR * (radius[ii] + radius[jj])
    suspects = np.flatnonzero((dist < near) | (n_shared > 0))
    for k in suspects:
        i, j = int(ii[k]), int(jj[k])
        what = _judge(start[i], end[i], start[j], end[j], radius[i], radius[j],
                      float(dist[k]), float(s[k]), float(t[k]), int(n_shared[k]), tol)
        if what:
            out.append((i, j, what))
    return out


def _judge(a0, a1, b0, b1, ra, rb, dist, s, t, n_shared, tol) -> str | None:
    touch = ra + rb
    if n_shared >= 2:
        return "is the same wire as"
    if n_shared == 1:
        # a junction: the wires must leave the shared end in different
        # directions; the free end of either must not lie along the other
        pa = a1 if np.linalg.norm(a0 - b0) <= tol or np.linalg.norm(a0 - b1) <= tol else a0
        pb = b1 if np.linalg.norm(b0 - a0) <= tol or np.linalg.norm(b0 - a1) <= tol else b0
        d_pb = segment_distances(a0[None], a1[None], pb[None], pb[None])[0][0]
        d_pa = segment_distances(b0[None], b1[None], pa[None], pa[None])[0][0]
        if min(d_pa, d_pb) < touch:
            return "overlaps (runs along)"
        return None
    da, db = a1 - a0, b1 - b0
    la, lb = float(np.linalg.norm(da)), float(np.linalg.norm(db))
    if np.linalg.norm(np.cross(da, db)) <= 1e-9 * la * lb and dist < touch:
        # parallel and touching: overlapping if their spans along the line overlap
        u = da / la
        lo, hi = sorted((float(np.dot(b0 - a0, u)), float(np.dot(b1 - a0, u))))
        if min(hi, la) - max(lo, 0.0) > tol:
            return "overlaps (runs along)"
    inner_a = tol < s * np.linalg.norm(a1 - a0) < np.linalg.norm(a1 - a0) - tol
    inner_b = tol < t * np.linalg.norm(b1 - b0) < np.linalg.norm(b1 - b0) - tol
    if dist <= tol:
        if inner_a and inner_b:
            return "crosses"
        return "touches, away from the ends of one of them,"
    if dist < touch:
        return "overlaps (the conductors intersect)"
    return f"runs closer than {NEAR_FACTOR:g} times the sum of the radii to"
