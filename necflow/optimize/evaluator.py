"""A study's evaluation of one design: its antenna response from the
engine-owned cache (:class:`necflow.engine.response.ResponseCache`), then
the whole evaluation and its score."""

from __future__ import annotations

from necflow.engine.response import ResponseCache

__all__ = ["ResponseCache", "evaluate_cached", "score_design"]


def evaluate_cached(design, cache: ResponseCache):
    """:func:`necflow.chain.evaluate` with the antenna response from ``cache``."""
    from necflow.chain import evaluate

    return evaluate(design, solver=cache)


def score_design(design, cache: ResponseCache):
    """Evaluate and score one design; returns ``(Evaluation, Score)``."""
    from necflow.optimize.cost import score

    evaluation = evaluate_cached(design, cache)
    return evaluation, score(evaluation, design.cost)
