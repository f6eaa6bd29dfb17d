"""Site constraints of a study: the design's ``constraints`` section checked
on a variant's wires before anything is solved.

Each stated limit gives a margin in metres, positive by how much the
variant breaks it and zero or negative when it is met (the sign optuna's
constraint functions use): ``min_height`` the lowest wire point above
ground, ``max_height`` the highest, ``max_span`` the largest horizontal
distance between two wire ends.  The wires are the antenna's straight
wires (:func:`necflow.model.geometry`); a straight wire's lowest and
highest points are its ends, so the ends are all that is measured.
"""

from __future__ import annotations

import numpy as np

from necflow.config.schema import Design
from necflow.model import geometry

__all__ = ["INFEASIBLE", "margins", "violations"]

#: First word of the fail reason of a trial outside the search's limits.
INFEASIBLE = "infeasible"

_WORDS = {
    "min_height": ("lowest wire point", "at least"),
    "max_height": ("highest wire point", "at most"),
    "max_span": ("largest horizontal distance between wire ends", "at most"),
}


def _measures(design: Design) -> dict[str, float]:
    spans, _ = geometry(design)
    ends = np.array([p for w in spans for p in (w.start, w.end)], dtype=float)
    xy = ends[:, :2]
    gaps = np.linalg.norm(xy[:, None, :] - xy[None, :, :], axis=-1)
    return {"min_height": float(ends[:, 2].min()), "max_height": float(ends[:, 2].max()),
            "max_span": float(gaps.max())}


def margins(design: Design) -> dict[str, float]:
    """Margin of each stated limit [m]: > 0 broken by that much, <= 0 met.

    Parameters
    ----------
    design : Design
        A valid design (its wires can be placed).

    Returns
    -------
    dict
        Limit key -> margin; empty when the design states no constraints.
    """
    limits = design.constraints.stated() if design.constraints is not None else {}
    if not limits:
        return {}
    measured = _measures(design)
    return {k: (lim - measured[k]) if k.startswith("min_") else (measured[k] - lim)
            for k, lim in limits.items()}


def violations(design: Design, found: dict[str, float]) -> str | None:
    """What the margins ``found`` break, as one line, or None."""
    limits = design.constraints.stated() if design.constraints is not None else {}
    broken = []
    for k, m in found.items():
        if m > 0:
            what, words = _WORDS[k]
            value = limits[k] - m if k.startswith("min_") else limits[k] + m
            broken.append(f"{what} {value:.3f} m, constraints.{k} wants {words} "
                          f"{limits[k]:g} m")
    return "; ".join(broken) or None
