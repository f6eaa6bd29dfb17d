"""Glue of ``necflow optimize --method split``: run the split search and
record its confirmed best design as a trial of the study, so the outputs,
the leaderboard and later resumes see it like any other trial."""

from __future__ import annotations

from typing import TextIO


def distribution(p):
    """The optuna distribution :meth:`Param.suggest` samples from."""
    from optuna.distributions import CategoricalDistribution, FloatDistribution

    if p.choices is not None:
        return CategoricalDistribution(list(p.choices))
    return FloatDistribution(p.low, p.high, log=p.log, step=p.step)


def run_split(design, space, options, study, err: TextIO, solver=None) -> str:
    """Split search with ``options.workers`` processes; returns why it stopped."""
    from optuna.trial import create_trial

    from necflow.engine.cache import SolveStore
    from necflow.engine.parallel import ParallelSolver
    from necflow.optimize.cost import score
    from necflow.engine.response import ResponseCache
    from necflow.optimize.split import split_search

    def say(text: str) -> None:
        print(f"necflow: {text}", file=err, flush=True)

    store = SolveStore(options.out) if options.cache else None
    with ParallelSolver(workers=options.workers, solver=solver) as ps:
        cache = ResponseCache(ps, store=store)
        res = split_search(design, space, cache, seed=options.seed or 0, on_stage=say)
    sc = score(res.evaluation, design.cost)
    params = {p.path: res.values[p.path] for p in space.params}
    attrs = {"necflow.method": "split", "necflow.confirmed": res.confirmed,
             "necflow.screen_cost_error": res.screen_cost_error,
             "necflow.terms": {"cost": sc.cost, "worst_swr": sc.worst_swr,
                               "loss_db": sc.loss_db}}
    attrs.update({f"band:{b}": t for b, t in sc.bands.items()})
    study.add_trial(create_trial(params=params, value=sc.cost, user_attrs=attrs,
                                 distributions={p.path: distribution(p)
                                                for p in space.params}))
    screened = len(res.screened)
    if res.confirmations:
        say(f"split search: {screened} geometries screened over the reflection-coefficient "
            f"ground, {len(res.confirmations)} confirmed over the design's own ground "
            f"(screening error of the cost up to {100 * res.screen_cost_error:.1f} %); "
            f"{res.variants} feed variants scored; {ps.solves} frequency points solved")
    else:
        say(f"split search: {screened} geometries solved over the design's own ground; "
            f"{res.variants} feed variants scored; {ps.solves} frequency points solved")
    say(f"best design confirmed with a full solve of every frequency: cost {sc.cost:.4g}")
    return "split search finished (best design confirmed with a full solve)"
