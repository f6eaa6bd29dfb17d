"""The cost of a design: a smooth SWR penalty plus the total system loss.

Per frequency point ``i`` of a band, with SWR ``s_i`` at the radio, the
goal's limit ``L``, the knee width ``w`` (``cost.swr_softness``) and the
total loss ``T_i`` in dB between the radio and the feed point (mismatch at
the radio plus every element's dissipation)::

    swr_term_i  = w * ln(1 + exp((min(s_i, 1000) - L) / w))   # softplus
    point_i     = a * swr_term_i + b * T_i                     # a = swr_weight, b = loss_weight

Per band the mean over its points (they are evenly spaced); over bands
either the weighted mean ``sum(W_k C_k) / sum(W_k)`` with the band weights
``W_k``, or the worst band ``max C_k`` over bands of non-zero weight.

The softplus tends to ``s - L`` well above the limit and to 0 well below
it, with a rounded knee of width ``w`` at the limit (``w ln 2`` at
``s = L``), so the optimiser feels a slope on both sides of the limit.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

SWR_CAP = 1000.0


def swr_penalty(swr, limit: float, softness: float):
    """Smooth penalty for SWR above a limit (softplus of the excess).

    Parameters
    ----------
    swr : array_like
        SWR at the radio [-]; values above 1000 count as 1000.
    limit : float
        Highest acceptable SWR [-].
    softness : float
        Width of the knee [SWR units], > 0.

    Returns
    -------
    ndarray
        ``softness * ln(1 + exp((swr - limit) / softness))`` [SWR units].

    References
    ----------
    .. [1] I. Goodfellow, Y. Bengio and A. Courville, *Deep Learning*,
       MIT Press 2016, sec. 3.10 (the softplus function ln(1 + e^x), a
       smoothed version of max(0, x)).
    """
    s = np.minimum(np.asarray(swr, dtype=float), SWR_CAP)
    return softness * np.logaddexp(0.0, (s - limit) / softness)


def point_cost(swr, loss_db, limit: float, *, swr_weight: float = 1.0,
               loss_weight: float = 1.0, softness: float = 0.1):
    """Cost of each frequency point: weighted SWR penalty plus total loss [dB]."""
    return swr_weight * swr_penalty(swr, limit, softness) + loss_weight * np.asarray(loss_db)


def combine_bands(band_costs, weights, how: str = "mean") -> float:
    """Weighted mean of the band costs, or the worst band of non-zero weight.

    Parameters
    ----------
    band_costs, weights : array_like, shape (nbands,)
    how : {"mean", "worst"}
    """
    c = np.asarray(band_costs, dtype=float)
    w = np.asarray(weights, dtype=float)
    if not np.any(w > 0):
        raise ValueError("every band has weight 0; give at least one band a positive weight")
    if how == "worst":
        return float(np.max(c[w > 0]))
    return float(np.sum(w * c) / np.sum(w))


@dataclass(frozen=True)
class Score:
    """The cost of one design and the terms that made it.

    Attributes
    ----------
    cost : float
        The combined cost.
    values : tuple of float
        The objectives the study minimises, in the order of ``cost.objectives``.
    bands : dict
        Band name -> {"cost", "swr_term", "loss_db", "swr_max", "weight"}.
    worst_swr : float
        Highest SWR over the points of bands with non-zero weight.
    loss_db : float
        Weighted mean over bands of the mean total loss [dB].
    """

    cost: float
    values: tuple[float, ...]
    bands: dict[str, dict[str, float]] = field(default_factory=dict)
    worst_swr: float = float("nan")
    loss_db: float = float("nan")

    def attrs(self) -> dict[str, float]:
        """Flat terms for the study's trial records (``<band>.<term>``)."""
        out = {"cost": self.cost, "worst_swr": self.worst_swr, "loss_db": self.loss_db}
        for band, terms in self.bands.items():
            for k, v in terms.items():
                out[f"{band}.{k}"] = v
        return out


def horizontal_extent(design) -> float:
    """Largest horizontal distance between any two wire ends [m] (the room the
    antenna needs between its supports)."""
    a = design.antenna
    if hasattr(a, "span"):
        return float(a.span)
    if a.shape == "inverted-v":
        drop = a.apex_height - a.end_height if a.end_height is not None else a.leg * np.sin(a.droop)
        return float(2.0 * np.sqrt(max(a.leg ** 2 - drop ** 2, 0.0)))
    pts = np.array([p for w in a.wires for p in (w.start, w.end)])[:, :2]
    return float(np.max(np.linalg.norm(pts[:, None, :] - pts[None, :, :], axis=-1)))


def score(evaluation, spec) -> Score:
    """Score an :class:`~necflow.pipeline.Evaluation` with a :class:`CostSpec`."""
    d = evaluation.design
    limit = d.goal.swr_limit
    swr = np.asarray(evaluation.system.swr, dtype=float)
    total = np.asarray(evaluation.system.loss_db["total"], dtype=float)
    pen = swr_penalty(swr, limit, spec.swr_softness)
    per_point = spec.swr_weight * pen + spec.loss_weight * total
    bands: dict[str, dict[str, float]] = {}
    costs, weights, worst, losses = [], [], [], []
    for i, band in enumerate(evaluation.bands):
        sel = evaluation.band_index == i
        terms = {"cost": float(per_point[sel].mean()), "swr_term": float(pen[sel].mean()),
                 "loss_db": float(total[sel].mean()), "swr_max": float(swr[sel].max()),
                 "weight": float(band.weight)}
        bands[band.name] = terms
        costs.append(terms["cost"])
        weights.append(band.weight)
        losses.append(terms["loss_db"])
        if band.weight > 0:
            worst.append(terms["swr_max"])
    cost = combine_bands(costs, weights, spec.combine)
    loss = combine_bands(losses, weights, "mean")
    worst_swr = float(max(worst))
    named = {"cost": cost, "worst_swr": worst_swr, "loss_db": loss}
    if "span" in spec.objectives:
        named["span"] = horizontal_extent(d)
    values = tuple(float(named[k]) for k in spec.objectives)
    return Score(cost=cost, values=values, bands=bands, worst_swr=worst_swr, loss_db=loss)
