"""The split search: geometry outside, feed inside, screened then confirmed.

Only geometry parameters (``Param.geometry``) need the engine, so:

1. **Candidates.** Every geometry of the grid when all geometry parameters
   lie on a grid (``step`` or ``choices``) of at most ``max_geometries``
   points, else a seeded scrambled Sobol sample of that many.
2. **Screen.** Over Sommerfeld-Norton ground each candidate is first solved
   with the reflection-coefficient ground (about ten times cheaper per
   frequency in the engine), and its feed is searched on that response
   (:class:`necflow.optimize.inner.FeedSearch`, no solve).
3. **Confirm.** The ``top_k`` geometries by screened cost are solved over
   the design's own ground and their feeds searched again on the exact
   response; the best of them wins.  The screening error (screened against
   exact cost of the confirmed geometries) is returned with the result.
4. **Full check.** The winner is evaluated by the whole pipeline
   (:func:`necflow.chain.evaluate`, every frequency solved over the
   design's own ground, scalar power flow) and scored by
   :func:`necflow.optimize.cost.score`: that cost is the one reported.

Over other grounds there is no screening: every candidate is solved exactly.
All solves go through one :class:`~necflow.optimize.evaluator.ResponseCache`,
so a repeated or resumed search solves nothing twice, and through its
solver's ``solve_many`` (e.g. :class:`necflow.engine.parallel.ParallelSolver`)
on all cores.  Single objective (``cost``) only.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy.stats import qmc

from necflow.chain import Chain
from necflow.chain.stages import prefetch
from necflow.errors import ConfigError
from necflow.optimize.problem.constraints import margins, violations
from necflow.optimize.problem.cost import score
from necflow.optimize.strategy.inner import FeedSearch, _grid, _item


@dataclass
class SplitResult:
    """Outcome of :func:`split_search`.

    Attributes
    ----------
    values : dict
        Best value of every searched path (SI).
    cost : float
        Cost of the best design from the full pipeline over its own ground.
    confirmed : bool
        True: ``cost`` comes from a full solve of every frequency.
    evaluation : Evaluation
        The full evaluation of the best design.
    screened : list of (dict, float)
        Each candidate geometry and its screened cost.
    confirmations : list of (dict, float, float)
        Each confirmed geometry, its screened and its exact inner cost.
    screen_cost_error : float
        Largest relative difference between screened and exact cost among
        the confirmed geometries (0 without screening).
    screen_z_error : float
        Largest relative difference ``|Z_screen - Z| / |Z|`` over their
        frequencies.
    variants : int
        Feed variants scored.
    """

    values: dict[str, Any]
    cost: float
    confirmed: bool
    evaluation: Any
    screened: list = field(default_factory=list)
    confirmations: list = field(default_factory=list)
    screen_cost_error: float = 0.0
    screen_z_error: float = 0.0
    variants: int = 0


def geometry_candidates(params, max_geometries: int = 64, seed: int = 0) -> list[dict]:
    """The geometries to try: the whole grid if small enough, else a Sobol sample."""


    if not params:
        return [{}]
    grids = [_grid(p) for p in params]
    if all(g is not None for g in grids) and \
            int(np.prod([g.size for g in grids])) <= max_geometries:
        mesh = np.meshgrid(*[np.arange(g.size) for g in grids], indexing="ij")
        return [{p.path: _item(g[m.ravel()[k]]) for p, g, m in zip(params, grids, mesh)}
                for k in range(mesh[0].size)]
    u = qmc.Sobol(len(params), scramble=True, seed=seed).random(max_geometries)
    out, seen = [], set()
    for row in u:
        cand = {}
        for j, (p, g) in enumerate(zip(params, grids)):
            if g is not None:
                cand[p.path] = _item(g[min(int(row[j] * g.size), g.size - 1)])
            elif p.log:
                cand[p.path] = float(np.exp(np.log(p.low) + row[j] * np.log(p.high / p.low)))
            else:
                cand[p.path] = float(p.low + row[j] * (p.high - p.low))
        key = tuple(sorted(cand.items()))
        if key not in seen:
            seen.add(key)
            out.append(cand)
    return out


def split_search(design, space, cache, *, max_geometries: int = 64, top_k: int = 3,
                 max_variants: int = 20000, seed: int = 0, screen: bool = True,
                 on_stage: Callable[[str], None] | None = None) -> SplitResult:
    """Search geometry and feed of a design (see the module notes).

    Parameters
    ----------
    design : Design
    space : SearchSpace
    cache : ResponseCache
        All solves go through it.
    max_geometries : int
        Most candidate geometries.
    top_k : int
        Screened leaders confirmed over the design's own ground.
    max_variants : int
        Feed variants per geometry in the inner search.
    seed : int
        Seed of every sample drawn.
    screen : bool
        Screen with the reflection-coefficient ground over Sommerfeld-Norton.
    on_stage : callable, optional
        Called with a short text as each stage starts.

    Raises
    ------
    ConfigError
        When the cost has more than one objective, or no candidate is valid.
    """
    if list(design.cost.objectives) != ["cost"]:
        raise ConfigError("the split search minimises the single objective 'cost'",
                          field="cost.objectives")
    say = on_stage or (lambda text: None)
    if design.route is not None:
        raise ConfigError("the split search scores feed variants without the feed line's "
                          "common-mode path; a design with a route is searched by the trials "
                          "method", field="route")
    base = Chain(design, cache)
    bands, f, band_index = base.bands, base.frequency_hz, base.band_index
    geo = [p for p in space.params if p.geometry]
    try:
        feed = FeedSearch(design, [p for p in space.params if not p.geometry], f,
                          band_index, bands)
    except ValueError as exc:   # a feed field the batch cannot vary
        raise ConfigError(f"{exc}; the trials method searches it", field="search") from None
    cands, chains = [], []
    for g in geometry_candidates(geo, max_geometries, seed):
        try:
            c = base.variant(g)
            _ = c.models                     # built (and checked) now
            if violations(c.design, margins(c.design)):
                continue                     # outside the site's constraints
        except Exception:   # an impossible corner of the space is skipped, not fatal
            continue
        cands.append(g)
        chains.append(c)
    if not cands:
        raise ConfigError("no candidate geometry of the search space is valid", field="search")
    screening = screen and chains[0].wire_model.ground.kind == "sommerfeld" and \
        len(cands) > top_k
    variants = 0
    screened: list = []
    if screening:
        say(f"screening {len(cands)} geometries over the reflection-coefficient ground")
        quick = [c.screened("reflection") for c in chains]
        prefetch(quick)
        z_quick = [q.antenna for q in quick]
        for g, z in zip(cands, z_quick):
            r = feed.search(z, max_variants=max_variants, seed=seed)
            variants += r.evaluated
            screened.append((g, r.cost))
        order = np.argsort([c for _, c in screened], kind="stable")[:top_k]
    else:
        z_quick = None
        order = np.arange(len(cands))
    say(f"solving {len(order)} geometries over the design's own ground")
    prefetch([chains[k] for k in order])
    z_exact = [chains[k].antenna for k in order]
    confirmations, best = [], None
    z_err = 0.0
    for k, z in zip(order, z_exact):
        r = feed.search(z, max_variants=max_variants, seed=seed)
        variants += r.evaluated
        if screening:
            confirmations.append((cands[k], screened[k][1], r.cost))
            z_err = max(z_err, float(np.max(np.abs(z_quick[k] - z) / np.abs(z))))
        else:
            screened.append((cands[k], r.cost))
        if best is None or r.cost < best[1]:
            best = ({**cands[k], **r.values}, r.cost)
    say("confirming the best design with a full solve")
    values = best[0]
    evaluation = base.variant(values).evaluation
    cost = score(evaluation, design.cost).cost
    err = max((abs(e - s) / abs(e) for _, s, e in confirmations), default=0.0)
    return SplitResult(values=values, cost=cost, confirmed=True, evaluation=evaluation,
                       screened=screened, confirmations=confirmations,
                       screen_cost_error=err, screen_z_error=z_err, variants=variants)
