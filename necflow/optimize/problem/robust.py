"""Robust design: a trial scored over the tolerance cases of its own design.

With ``cost.robust`` set, a study draws the tolerance cases once
(:func:`necflow.calibrate.tolerance.perturbations`, seeded by
``tolerances.seed``, ``tolerances.samples`` of them) and applies the same
cases to every trial's design: a toleranced field moves by its share of the
tolerance around the trial's own value (a percentage of that value, or the
stated amount), and the season ground states replace the ground.  The
trial's objectives are the mean (``how: expected``) or the largest
(``how: worst``) of each objective of :func:`necflow.optimize.cost.score`
over the cases.

Cases of one geometry state share an antenna response: all states of a
trial (and the trial's nominal design) are looked up in one
:meth:`~necflow.optimize.evaluator.ResponseCache.lookup_many` call, so a
design needs at most one solve per distinct state, and cases that differ
only in feed fields cost no solve.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from necflow.chain import Chain
from necflow.chain.cases import evaluate_cases
from necflow.config.tolerances import base_values, parse_tolerances, perturbations
from necflow.errors import ConfigError
from necflow.optimize.problem.cost import horizontal_extent, objective_values, score, score_arrays


@dataclass(frozen=True)
class RobustPlan:
    """The fixed scenario set of a study.

    Attributes
    ----------
    how : {"expected", "worst"}
    tolerances : list of Tolerance
    cases : list of Case
        The same for every trial.
    """

    how: str
    tolerances: list
    cases: list


@dataclass(frozen=True)
class RobustScore:
    """A design's robust score.

    Attributes
    ----------
    values : tuple of float
        Mean or largest of each objective over the cases (what the study
        minimises).
    nominal : Score
        Score of the design itself.
    case_values : ndarray, shape (cases, objectives)
    case_costs : ndarray, shape (cases,)
        Combined cost of each case.
    worst_case : int
        Index of the case of highest cost.
    states : int
        Distinct geometry states among the cases.
    how : str
    """

    values: tuple[float, ...]
    nominal: object
    case_values: np.ndarray
    case_costs: np.ndarray
    worst_case: int
    states: int
    how: str
    worst_values: dict = field(default_factory=dict)

    @property
    def cost(self) -> float:
        """Mean or largest combined cost over the cases."""
        return _combine(self.case_costs, self.how)

    def attrs(self) -> dict:
        """Plain data for the trial's user attribute ``necflow.robust``."""
        return {"how": self.how, "cases": int(self.case_costs.size), "states": self.states,
                "nominal_cost": float(self.nominal.cost), "robust_cost": self.cost,
                "worst_case": self.worst_case,
                "worst_case_cost": float(self.case_costs[self.worst_case]),
                "worst_case_values": self.worst_values}


def _combine(x: np.ndarray, how: str):
    return float(np.mean(x)) if how == "expected" else float(np.max(x))


def robust_plan(design, space=None) -> RobustPlan | None:
    """The study's scenario set, or None when ``cost.robust`` is not set.

    Raises
    ------
    ConfigError
        When there are no tolerances to draw from, or the season ground
        would overwrite a searched ground constant.
    """
    spec = design.cost.robust
    if spec is None:
        return None
    tols = parse_tolerances(design)
    if not tols and design.tolerances.ground is None:
        raise ConfigError("robust design needs tolerances: give 'tolerances.fields' (e.g. "
                          "{feed.cap.value: 5 %, antenna.height: 50 cm}) or "
                          "'tolerances.ground'", field="cost.robust")
    searched = [p.path for p in space.params] if space is not None else list(design.search)
    ground = [p for p in searched if p.startswith("ground.")]
    if design.tolerances.ground is not None and ground:
        raise ConfigError(f"'tolerances.ground' sets the ground of every case, so the searched "
                          f"{', '.join(ground)} would have no effect; drop one of them",
                          field="cost.robust")
    return RobustPlan(spec.how, tols, perturbations(design, tols))


def robust_score(design, plan: RobustPlan, cache) -> RobustScore:
    """Score ``design`` over the plan's cases applied to it.

    The cases go through :func:`necflow.chain.cases.evaluate_cases` (one
    antenna response per geometry state, the feed fields of a state in one
    batch) and are scored by the one cost formula,
    :func:`necflow.optimize.cost.score_arrays`.

    Parameters
    ----------
    design : Design
        A trial's variant (or any design with the toleranced fields).
    plan : RobustPlan
    cache : ResponseCache
        Shared with the rest of the study.

    Raises
    ------
    ConfigError, ModelError
        When a case's design is invalid (e.g. an absolute tolerance takes a
        field to zero); the message names the case.
    """
    chain = Chain(design, cache)
    base = base_values(design, plan.tolerances)
    values = [case.values(base) for case in plan.cases]
    states = {case.geometry_key() for case in plan.cases}
    result = evaluate_cases(chain, values)
    spec = design.cost
    weights = [b.weight for b in chain.bands]
    arrays = score_arrays(result.swr, result.loss_db, chain.band_index, weights,
                          design.goal.swr_limit, spec, common_mode_a=result.common_mode_a)
    span = None
    if "span" in spec.objectives:
        span = np.array([horizontal_extent(c.design) for c in result.chains])
    vals = objective_values(arrays, spec, span)
    costs = np.asarray(arrays.cost, dtype=float)
    nominal = score(chain.evaluation, spec)
    worst = int(np.argmax(costs))
    agg = tuple(_combine(vals[:, j], plan.how) for j in range(vals.shape[1]))
    return RobustScore(values=agg, nominal=nominal, case_values=vals, case_costs=costs,
                       worst_case=worst, states=len(states), how=plan.how,
                       worst_values=values[worst])


def robust_cost(design, cases: list, cache, how: str = "expected") -> float:
    """Cost of a design over a scenario set: the mean ("expected") or the
    largest ("worst") of the optimiser's cost over the cases applied to it
    (cases from :func:`necflow.config.tolerances.perturbations`)."""
    if how not in ("expected", "worst"):
        raise ValueError("how is 'expected' or 'worst'")
    return robust_score(design, RobustPlan(how, parse_tolerances(design), cases), cache).cost
