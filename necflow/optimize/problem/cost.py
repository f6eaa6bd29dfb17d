"""The cost of a design: a smooth SWR penalty plus the total system loss.

Per frequency point ``i`` of a band, with SWR ``s_i`` at the radio, the
goal's limit ``L``, the knee width ``w`` (``cost.swr_softness``) and the
total loss ``T_i`` in dB between the radio and the feed point (mismatch at
the radio plus every element's dissipation)::

    swr_term_i  = w * ln(1 + exp((min(s_i, 1000) - L) / w))   # softplus
    point_i     = a * swr_term_i + b * T_i + u * N_i          # a = swr_weight, b = loss_weight

With a tuner in the chain ``s_i`` is the SWR the radio sees through it and
``T_i`` includes its loss (both follow from the chain); ``N_i`` is 1 where a
tuner in circuit cannot match its load within its parts' ranges, else 0,
and ``u`` is ``cost.unmatched_weight``.

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

from necflow.analysis.powerflow import unmatched
from necflow.chain import Chain
from necflow.model import geometry

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
    antenna needs between its supports), from the wires the model is built
    of (:func:`necflow.model.geometry`)."""
    spans, _ = geometry(design)
    pts = np.array([p for w in spans for p in (w.start, w.end)], dtype=float)[:, :2]
    return float(np.max(np.linalg.norm(pts[:, None, :] - pts[None, :, :], axis=-1)))


@dataclass(frozen=True)
class ArrayScores:
    """The cost terms of many variants at once, each ``(nvar,)`` or
    ``(nvar, nbands)``.

    Attributes
    ----------
    cost : ndarray
        Combined cost per variant.
    band_cost, swr_term, band_loss_db, swr_max : ndarray
        ``(nvar, nbands)`` per-band terms (mean over the band's points).
    worst_swr : ndarray
        Highest SWR over the points of bands with non-zero weight.
    loss_db : ndarray
        Weighted mean over bands of the mean total loss [dB].
    """

    cost: np.ndarray
    band_cost: np.ndarray
    swr_term: np.ndarray
    band_loss_db: np.ndarray
    swr_max: np.ndarray
    worst_swr: np.ndarray
    loss_db: np.ndarray


def score_arrays(swr, loss_db, band_index, weights, limit: float, spec,
                 common_mode_a=None, unmatched=None) -> ArrayScores:
    """The cost of each variant (see the README section "Cost").

    ``point_i = a * swr_term_i + b * T_i`` with ``swr_term`` the smooth
    penalty :func:`swr_penalty`; a band's cost is the mean over its points;
    the bands combine by weighted mean or as the worst band
    (:func:`combine_bands`).  One formula for a single design
    (:func:`score`), the inner feed search and robust scoring.

    Parameters
    ----------
    swr, loss_db : array_like
        ``(nvar, nfreq)`` SWR at the radio [-] and total loss [dB].
    band_index : array_like of int
        ``(nfreq,)`` band of each point.
    weights : array_like
        ``(nbands,)`` band weights.
    limit : float
        SWR limit [-].
    spec : CostSpec
    common_mode_a : array_like, optional
        ``(nvar, nfreq)`` RMS common-mode current at the station entry [A]
        (with a route); adds ``c * |I|`` per point, ``c`` the spec's
        ``common_mode_weight``.
    unmatched : array_like of bool, optional
        ``(nvar, nfreq)`` or ``(nfreq,)``: where a tuner in the chain
        cannot match; adds ``u`` (``unmatched_weight``) per such point.
    """
    swr = np.atleast_2d(np.asarray(swr, dtype=float))
    total = np.atleast_2d(np.asarray(loss_db, dtype=float))
    band_index = np.asarray(band_index)
    w = np.asarray(weights, dtype=float)
    if not np.any(w > 0):
        raise ValueError("every band has weight 0; give at least one band a positive weight")
    pen = swr_penalty(swr, limit, spec.swr_softness)
    point = spec.swr_weight * pen + spec.loss_weight * total
    if unmatched is not None and spec.unmatched_weight:
        point = point + spec.unmatched_weight * np.atleast_2d(unmatched).astype(float)
    if common_mode_a is not None and spec.common_mode_weight:
        point = point + spec.common_mode_weight * np.abs(np.atleast_2d(common_mode_a))
    sel = [band_index == k for k in range(w.size)]
    band_cost = np.stack([point[:, m].mean(axis=1) for m in sel], axis=1)
    swr_term = np.stack([pen[:, m].mean(axis=1) for m in sel], axis=1)
    band_loss = np.stack([total[:, m].mean(axis=1) for m in sel], axis=1)
    swr_max = np.stack([swr[:, m].max(axis=1) for m in sel], axis=1)
    live = w > 0
    if spec.combine == "worst":
        cost = band_cost[:, live].max(axis=1)
    else:
        cost = band_cost @ w / w.sum()
    return ArrayScores(cost=cost, band_cost=band_cost, swr_term=swr_term,
                       band_loss_db=band_loss, swr_max=swr_max,
                       worst_swr=swr_max[:, live].max(axis=1), loss_db=band_loss @ w / w.sum())


def objective_values(arrays: ArrayScores, spec, span: float | np.ndarray | None = None
                     ) -> np.ndarray:
    """``(nvar, nobjectives)``: the objectives of ``spec.objectives`` per variant."""
    named = {"cost": arrays.cost, "worst_swr": arrays.worst_swr, "loss_db": arrays.loss_db}
    if "span" in spec.objectives:
        named["span"] = np.broadcast_to(np.asarray(span, dtype=float), arrays.cost.shape)
    return np.stack([np.asarray(named[k], dtype=float) for k in spec.objectives], axis=1)


def score(evaluation, spec) -> Score:
    """Score an :class:`~necflow.chain.Evaluation` with a :class:`CostSpec`."""
    d = evaluation.design
    cm = getattr(evaluation, "common_mode", None)
    entry = None if cm is None else cm.currents.get("entry")
    a = score_arrays(evaluation.system.swr, evaluation.system.loss_db["total"],
                     evaluation.band_index, [b.weight for b in evaluation.bands],
                     d.goal.swr_limit, spec, common_mode_a=entry,
                     unmatched=unmatched(evaluation.system))
    return score_from_arrays(a, 0, evaluation.bands, spec,
                             horizontal_extent(d) if "span" in spec.objectives else None)


def score_from_arrays(a: ArrayScores, k: int, bands, spec, span=None) -> Score:
    """Variant ``k`` of :func:`score_arrays` as a :class:`Score`."""
    terms = {b.name: {"cost": float(a.band_cost[k, i]), "swr_term": float(a.swr_term[k, i]),
                      "loss_db": float(a.band_loss_db[k, i]), "swr_max": float(a.swr_max[k, i]),
                      "weight": float(b.weight)} for i, b in enumerate(bands)}
    values = tuple(float(v) for v in objective_values(a, spec, span)[k])
    return Score(cost=float(a.cost[k]), values=values, bands=terms,
                 worst_swr=float(a.worst_swr[k]), loss_db=float(a.loss_db[k]))


def score_design(design, responses=None):
    """Evaluate and score one design through a :class:`~necflow.chain.Chain`
    on ``responses`` (a shared ResponseCache, or a solver); returns
    ``(Evaluation, Score)``."""
    evaluation = Chain(design, responses).evaluation
    return evaluation, score(evaluation, design.cost)
