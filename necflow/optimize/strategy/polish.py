"""Local refinement of a nested trial's geometry on screened estimates.

The geometry sampler (TPE) finds the basin of a good design in a few tens of
trials but closes in on its bottom slowly: each of its draws is a whole
trial.  A trial whose screened estimate promises a new best therefore
refines its geometry first: a bounded Nelder-Mead search (scipy) in the unit
cube of the continuous geometry fields, starting from the sampled point,
every evaluation a screened estimate (a few solves over the cheap ground and
the feed found by the inner search, about a tenth of a full solve).  The
refined geometry is then confirmed as any other (solved in full, its feed
searched again and the design scored), so the estimate only steers the
search and never becomes a reported cost.

The sampler is told the cost of the refined geometry at the point it drew
(the basin's depth seen from where it landed); the refined values are the
trial's own (:data:`necflow.optimize.storage.bookkeeping.GEOMETRY`), so the
leaderboard, ``best.yaml`` and the report carry the geometry that was solved.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from scipy.optimize import minimize

__all__ = ["EVALUATIONS", "STEP", "Refined", "refine"]

#: Screened estimates one refinement may spend (about 3 full solves' worth).
EVALUATIONS = 30
#: Edge of the starting simplex in the unit cube.
STEP = 0.08
#: Simplex size in the unit cube at which the search stops (about a
#: centimetre on a 10 m range).
XTOL = 1e-3


@dataclass(frozen=True)
class Refined:
    """Outcome of :func:`refine`.

    Attributes
    ----------
    x : ndarray
        ``(ndim,)`` best unit-cube point seen (``x0`` when nothing was better).
    value : float
        Objective there.
    start_value : float
        Objective at ``x0``.
    evaluations : int
        Objective evaluations spent (``x0``'s given value not counted).
    """

    x: np.ndarray
    value: float
    start_value: float
    evaluations: int


def refine(objective: Callable[[np.ndarray], float], x0, f0: float, *,
           evaluations: int = EVALUATIONS, step: float = STEP) -> Refined:
    """Bounded Nelder-Mead from ``x0`` in the unit cube.

    Parameters
    ----------
    objective : callable
        ``objective(x) -> float`` for ``x`` in ``[0, 1]^ndim``; ``inf`` for a
        point that cannot be built or breaks a site constraint.
    x0 : array_like
        ``(ndim,)`` start, inside the cube.
    f0 : float
        Objective at ``x0`` (already known: not evaluated again).
    evaluations : int
        Most objective evaluations to spend.
    step : float
        Edge of the starting simplex (each vertex moves one coordinate by
        ``step``, inward where ``x0`` is within ``step`` of the upper bound).

    Returns
    -------
    Refined
        The best point seen.

    Notes
    -----
    Nelder-Mead (J. A. Nelder and R. Mead, "A simplex method for function
    minimization", Computer Journal 7, 1965) as in
    :func:`scipy.optimize.minimize`, with scipy's bound handling (points
    clipped into the box).  Derivative-free, so a cost that is piecewise
    smooth in the geometry (the inner search's feed changes with it) does
    not mislead it the way a finite-difference gradient would.
    """
    x0 = np.clip(np.asarray(x0, dtype=float), 0.0, 1.0)
    seen: dict[tuple, float] = {tuple(np.round(x0, 12)): float(f0)}
    best = [x0.copy(), float(f0)]

    def f(x):
        x = np.clip(np.asarray(x, dtype=float), 0.0, 1.0)
        key = tuple(np.round(x, 12))
        if key not in seen:
            v = float(objective(x))
            seen[key] = v if np.isfinite(v) else np.inf
            if seen[key] < best[1]:
                best[0], best[1] = x.copy(), seen[key]
        return seen[key]

    ndim = x0.size
    if ndim == 0 or evaluations <= 0:
        return Refined(x0, float(f0), float(f0), 0)
    simplex = [x0]
    for i in range(ndim):
        v = x0.copy()
        v[i] = v[i] + step if v[i] + step <= 1.0 else v[i] - step
        simplex.append(v)
    scale = abs(f0) if np.isfinite(f0) and f0 != 0 else 1.0
    minimize(f, x0, method="Nelder-Mead", bounds=[(0.0, 1.0)] * ndim,
             options={"maxfev": evaluations, "initial_simplex": np.array(simplex),
                      "xatol": XTOL, "fatol": 1e-5 * scale})
    return Refined(best[0], best[1], float(f0), len(seen) - 1)
