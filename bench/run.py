"""necflow benchmark (``make bench``): three search problems side by side, one run.

The problems (``--problems`` runs a subset):

* ``demo``: ``configs/demo.yaml`` with its ``route`` removed (the feed line
  not in the engine model) and its search space rebuilt: one geometry field
  (``antenna.span``, a 17-point grid) and two feed fields;
* ``off-centre``: ``bench/problems/off-centre.yaml``, an off-centre-fed wire
  on 80, 40 and 20 m: three geometry fields (span, feed position, height)
  and two feed fields (window-line length, series capacitor);
* ``inverted-v``: ``bench/problems/inverted-v.yaml``, an inverted-V on 40,
  20 and 15 m: three geometry fields (apex height, leg, droop) and the
  window-line length, with a site constraint (``min_height``) that makes
  the low corner of the space infeasible.

Every problem is over Sommerfeld-Norton ground.  For each, in this order:

1. **Reference optimum, by a long method computed here at the start.**
   The candidate geometries are the whole geometry grid when every geometry
   field is gridded and the grid is small (the demo: 17 spans), else a
   scrambled Sobol sample of ``--reference-samples`` geometries (default
   64, seed 0) in the unit cube of the geometry fields.  Each candidate
   that can be built and meets the site constraints is solved at every
   frequency over the design's own ground (``Chain(variant).antenna``
   through one :class:`~necflow.engine.response.ResponseCache` on a
   :class:`~necflow.engine.parallel.ParallelSolver` with ``--workers``
   processes), and its feed is found by
   ``FeedSearch(...).search(z, max_variants=10**5)`` (exhaustive on these
   feed grids: the exact best feed of that geometry).  On a sample (not a
   grid) the best ``--polish-starts`` geometries are then polished by
   scipy's Nelder-Mead in the unit cube of the geometry fields (bounded;
   default 3 starts, at most ``--polish-evals`` = 40 evaluations each),
   every evaluation a full solve plus the inner search.  The winner is confirmed by the full
   pipeline: :func:`necflow.optimize.problem.cost.score` of
   ``Chain(variant).evaluation``; that cost is the reference.  On the grid
   the reference is the exact optimum of the discrete search space; on a
   sample it is the best point found, not a proven optimum (a search may
   end below it, which counts as reaching the band).
2. **The nested method**: :func:`~necflow.optimize.strategy.study.run_study`
   with method ``nested`` in a fresh folder (its own ``solves.sqlite`` as a
   study has it), **one worker process**, seed 1, stopped at the first
   finished trial whose cost comes from a full solve and lies within 0.5 %
   of the reference (a trial with the user attribute ``necflow.screening``
   counts only when its ``confirmed`` is true; without that attribute every
   COMPLETE trial is a full solve), or at ``--nested-budget`` seconds
   (default: the plain budget).  Timed from the call (study creation
   included).
3. **A plain optuna loop**: TPE (multivariate, seed 1) over every field,
   geometry and feed, **one process** like the nested study; every
   frequency of every trial solved, no cache; a variant that cannot be
   built or breaks a site constraint fails its trial unsolved (as a study
   does); stopped in the band or at ``--plain-budget`` seconds (default
   300).

The nested study and the plain loop run one after the other, never side by
side, each a single process (the reference's solver pool is closed before
they start).  The ratio is the plain loop's time to the band over the
nested method's.
When the plain loop does not reach the band within its budget the ratio is
a lower bound (budget over the nested time) and is reported as such; when
the nested method does not reach the band there is no ratio.

Solves per trial are engine frequency points per solved (COMPLETE) trial:
for the plain loop counted in its solver; for the nested study from the
trial user attribute ``necflow.solves`` (``{"screen": n, "full": n}``, the local
refinement's screened estimates counted in ``screen``) when
present, else counted in the solver handed to ``run_study`` (one worker:
every solve of the study goes through it).  The screening error (relative
cost error of a confirmed trial, screened estimate against full solve:
``necflow.screening["error"]``) and the interpolation error estimate
(``necflow.screening["interp_error"]``) are reported as max and median
over the trials that carry them, "-" when none does.

Also measured once, on the demo only (the cheapest): resident memory after
100 and after ``--evaluations`` (10,000) full-pipeline scorings of feed
and span variants whose antenna responses come from the reference's cache
(the steady state of a study); the engine share of a plain sweep of the
demo; the engine time per point with the demo's feed line in the model
against an ideal line; engine points per second.

Writes ``bench.json`` (a section per problem, ratios and whether each is a
lower bound) and prints one table.  Not a test: times measured in one run
on one machine.
"""

from __future__ import annotations

import argparse
import gc
import json
import os
import platform
import resource
import signal
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

BAND = 0.005        # "within 0.5 % of the reference optimum"
PROBLEMS = {
    "demo": ROOT / "configs" / "demo.yaml",
    "off-centre": ROOT / "bench" / "problems" / "off-centre.yaml",
    "inverted-v": ROOT / "bench" / "problems" / "inverted-v.yaml",
}
#: A geometry grid up to this size is the reference's candidate set (else a Sobol sample).
GRID_MAX = 1024
#: Feed variants per geometry in the reference's inner search.
REF_VARIANTS = 10**5
SCREENING = "necflow.screening"
SOLVES = "necflow.solves"


def rss_mb() -> float:
    """Current resident set size of this process [MB] (Linux /proc)."""
    with open("/proc/self/status") as fh:
        for line in fh:
            if line.startswith("VmRSS:"):
                return int(line.split()[1]) / 1024.0
    return float("nan")


def peak_mb() -> float:
    """Peak resident size of this process [MB] (workers not included)."""
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


class TimedSolver:
    """The engine adapter, with the time spent inside it and the points solved."""

    def __init__(self):
        from necflow.engine import pynec_adapter
        self._solve = pynec_adapter.solve_feedpoint
        self.seconds = 0.0
        self.solves = 0

    def __call__(self, model, f):
        t0 = time.perf_counter()
        z = self._solve(model, f)
        self.seconds += time.perf_counter() - t0
        self.solves += len(f)
        return z


# ----------------------------------------------------------------------------
# The problems


def load_problem(name: str):
    """``(design, space)`` of a benchmark problem (the demo without its route)."""
    from necflow.optimize.problem.space import build_space, load_study_design

    design, space = load_study_design(PROBLEMS[name])
    if design.route is not None:
        # the searches compare methods on the antenna with an ideal line; without
        # the route the feed fields are feed fields again, so the space is rebuilt
        design = design.model_copy(update={"route": None})
        space = build_space(design)
    return design, space


def shape_of(space) -> dict:
    geo = [p.path for p in space.params if p.geometry]
    feed = [p.path for p in space.params if not p.geometry]
    return {"geometry_fields": geo, "feed_fields": feed}


# ----------------------------------------------------------------------------
# The reference


def reference(design, space, workers: int, samples: int, starts: int, evals: int,
              say) -> dict:
    """The reference optimum by the long method of the module notes."""
    from scipy.optimize import minimize
    from scipy.stats import qmc

    from necflow.chain import Chain
    from necflow.chain.stages import prefetch
    from necflow.config.fields import ParamSet
    from necflow.engine.parallel import ParallelSolver
    from necflow.engine.response import ResponseCache
    from necflow.errors import ConfigError, ModelError
    from necflow.optimize.problem.constraints import margins, violations
    from necflow.optimize.problem.cost import score
    from necflow.optimize.strategy.inner import FeedSearch

    t0 = time.perf_counter()
    geo = ParamSet(tuple(p for p in space.params if p.geometry))
    ps = ParallelSolver(workers=workers, max_block=6)   # a band's 11 points in two blocks
    cache = ResponseCache(ps, max_entries=10**6)   # every geometry kept: none solved twice
    base = Chain(design, cache)
    fs = FeedSearch(design, [p for p in space.params if not p.geometry], base.frequency_hz,
                    base.band_index, base.bands)
    grids = [p.grid() for p in geo.params]
    on_grid = all(g is not None for g in grids) and \
        int(np.prod([g.size for g in grids])) <= GRID_MAX
    if on_grid:
        mesh = np.meshgrid(*[np.arange(g.size) for g in grids], indexing="ij")
        cands = [{p.path: float(g[m.ravel()[k]]) for p, g, m in zip(geo.params, grids, mesh)}
                 for k in range(mesh[0].size)]
        method = f"whole geometry grid ({len(cands)}), exhaustive feed"
    else:
        u = qmc.Sobol(len(geo), scramble=True, seed=0).random(samples)
        cands = [geo.values_at(row) for row in u]
        method = (f"scrambled Sobol {samples} (seed 0) + Nelder-Mead polish from the best {starts} "
                  f"(<= {evals} evaluations each), exhaustive feed")

    def shaped(values):
        """The chain of a geometry, or None when it is infeasible."""
        try:
            c = base.variant(values)
            _ = c.models
            if violations(c.design, margins(c.design)):
                return None
        except (ConfigError, ModelError):
            return None
        return c

    seen: dict[tuple, tuple[float, dict]] = {}      # geometry -> (inner cost, feed values)

    def inner(values, chain) -> float:
        key = tuple(round(float(values[p.path]), 12) for p in geo.params)
        if key not in seen:
            r = fs.search(chain.antenna, max_variants=REF_VARIANTS, seed=0)
            seen[key] = (r.cost, {**values, **r.values})
        return seen[key][0]

    chains = [shaped(c) for c in cands]
    infeasible = sum(c is None for c in chains)
    ok = [(v, c) for v, c in zip(cands, chains) if c is not None]
    say(f"  reference: solving {len(ok)} geometries at every point "
        f"({infeasible} infeasible, not solved)")
    prefetch([c for _, c in ok])
    costs = [inner(v, c) for v, c in ok]
    say(f"  reference: best of the {'grid' if on_grid else 'sample'} {min(costs):.5g} "
        f"({ps.solves} points solved)")
    sampled = len(seen)
    polish = []
    if not on_grid and ok and starts > 0:
        order = np.argsort(costs, kind="stable")[:starts]
        worst = max(costs)

        def f(x):
            values = geo.values_at(np.clip(x, 0.0, 1.0 - 1e-12))
            c = shaped(values)
            if c is None:
                return worst + 1.0           # outside the site: worse than any sample
            return inner(values, c)

        for k in order:
            x0 = geo.encode(ok[int(k)][0])
            step = 0.05
            simplex = [x0] + [np.clip(x0 + step * e, 0, 1) if x0[j] + step <= 1
                              else x0 - step * e for j, e in enumerate(np.eye(len(x0)))]
            before = len(seen)
            r = minimize(f, x0, method="Nelder-Mead", bounds=[(0.0, 1.0)] * len(x0),
                         options={"maxfev": evals, "initial_simplex": np.array(simplex),
                                  "xatol": 1e-4, "fatol": 1e-6})
            polish.append({"start_cost": float(costs[int(k)]), "end_cost": float(r.fun),
                           "evaluations": len(seen) - before})
            say(f"  reference: polish from {costs[int(k)]:.5g} to {r.fun:.5g} "
                f"({len(seen) - before} geometries)")
    best_key = min(seen, key=lambda k: seen[k][0])
    inner_cost, values = seen[best_key]
    evaluation = base.variant(values).evaluation
    cost = score(evaluation, design.cost).cost
    ps.close()
    return {"method": method, "cost": cost, "inner_cost": inner_cost, "values": values,
            "seconds": time.perf_counter() - t0, "solves": ps.solves, "workers": workers,
            "geometries": len(seen), "candidates": len(cands), "sampled": sampled,
            "infeasible": infeasible,
            "polish": polish, "cache": cache}


# ----------------------------------------------------------------------------
# The two searches


def trial_stats(trials) -> dict:
    """Solves, screening and interpolation errors of a nested study's trials."""
    from optuna.trial import TrialState

    done = [t for t in trials if t.state == TrialState.COMPLETE]
    solves = [t.user_attrs.get(SOLVES) for t in done]
    screen = [t.user_attrs.get(SCREENING) for t in done]
    errors = [s["error"] for s in screen
              if s and s.get("confirmed") and s.get("error") is not None]
    interp = [s["interp_error"] for s in screen if s and s.get("interp_error") is not None]

    def spread(x):
        return None if not x else {"max": float(np.max(x)), "median": float(np.median(x)),
                                   "n": len(x)}

    out = {"complete": len(done), "confirmed": sum(1 for s in screen
                                                   if s is None or s.get("confirmed")),
           "screening_error": spread(errors), "interp_error": spread(interp),
           "solves_attr": None}
    if any(s is not None for s in solves):
        scr = sum(int(s.get("screen", 0)) for s in solves if s)
        full = sum(int(s.get("full", 0)) for s in solves if s)
        out["solves_attr"] = {"screen": scr, "full": full}
    return out


def nested_study(design, space, target: float, budget_s: float, store_dir: Path,
                 seed: int = 1) -> dict:
    """``necflow optimize``'s default method (nested trials), one worker
    process: the time from the call to the first finished trial with a
    full-solve cost within the band of the reference."""
    from necflow.engine.parallel import ParallelSolver
    from necflow.optimize.strategy.study import StudyOptions, run_study

    opts = StudyOptions(out=store_dir, study_name="bench-nested", trials=None,
                        timeout_s=budget_s, workers=1, seed=seed, method="nested")
    counter = ParallelSolver(workers=1)       # the engine, in this process, counted
    state = {"reached": None, "best": float("inf"), "trials": 0, "trials_at": None}

    def on_trial(study, number, trial_state, reason):
        state["trials"] += 1
        t = study.get_trials(deepcopy=False)[number]
        scr = t.user_attrs.get(SCREENING)
        full = scr is None or bool(scr.get("confirmed"))
        if t.values is not None and full:
            state["best"] = min(state["best"], t.values[0])
        if state["reached"] is None and state["best"] <= target:
            state["reached"] = time.perf_counter() - t0
            state["trials_at"] = state["trials"]
            os.kill(os.getpid(), signal.SIGINT)          # the study stops cleanly

    t0 = time.perf_counter()
    try:
        study, why = run_study(design, space, opts, solver=counter, on_trial=on_trial)
    except KeyboardInterrupt:
        why, study = "interrupted", None
    elapsed = time.perf_counter() - t0
    stats = trial_stats(study.get_trials(deepcopy=False)) if study is not None else {}
    attr = stats.get("solves_attr")
    points = (attr["screen"] + attr["full"]) if attr else counter.solves
    return {"reached_s": state["reached"], "budget_s": budget_s, "trials": state["trials"],
            "trials_to_band": state["trials_at"], "best": state["best"],
            "elapsed_s": elapsed, "stopped": why, "workers": 1,
            "solves": points, "solves_counted": counter.solves,
            "solves_source": "trial attribute necflow.solves" if attr else "counted solver",
            "solves_per_trial": points / max(1, stats.get("complete", 0)), **stats}


def plain_loop(design, space, target: float, budget_s: float, seed: int = 1) -> dict:
    """optuna TPE over every field; each trial solves all its frequencies."""
    import optuna

    from necflow.chain import evaluate
    from necflow.config.fields import apply
    from necflow.model import check_variant
    from necflow.optimize.problem.constraints import margins, violations
    from necflow.optimize.problem.cost import score
    from necflow.optimize.strategy.study import enqueue_start

    optuna.logging.set_verbosity(optuna.logging.WARNING)
    solver = TimedSolver()
    study = optuna.create_study(sampler=optuna.samplers.TPESampler(seed=seed,
                                                                   multivariate=True))
    enqueue_start(study, design, space)
    t0 = time.perf_counter()
    best, reached, trace, complete, infeasible, trials = float("inf"), None, [], 0, 0, 0
    while time.perf_counter() - t0 < budget_s:
        trial = study.ask()
        trials += 1
        try:
            v = apply(design, space.suggest(trial))
            check_variant(v)
            broken = violations(v, margins(v))
        except Exception:
            broken = "cannot be built"
        if broken:
            infeasible += 1
            study.tell(trial, state=optuna.trial.TrialState.FAIL)
            continue
        try:
            c = score(evaluate(v, solver=solver), design.cost).cost
        except Exception:
            study.tell(trial, state=optuna.trial.TrialState.FAIL)
            continue
        study.tell(trial, c)
        complete += 1
        best = min(best, c)
        trace.append((time.perf_counter() - t0, best))
        if best <= target:
            reached = time.perf_counter() - t0
            break
    return {"reached_s": reached, "budget_s": budget_s, "trials": trials,
            "complete": complete, "infeasible": infeasible, "best": best,
            "elapsed_s": time.perf_counter() - t0, "solves": solver.solves,
            "solves_per_trial": solver.solves / max(1, complete), "workers": 1,
            "engine_s": solver.seconds, "trace_tail": trace[-5:]}


def ratio_of(nest: dict, plain: dict) -> dict:
    """Plain time to the band over nested time to the band, and how to read it."""
    if nest["reached_s"] is None:
        return {"ratio": None, "lower_bound": False,
                "text": "- (nested method did not reach the band)"}
    if plain["reached_s"] is not None:
        r = plain["reached_s"] / nest["reached_s"]
        return {"ratio": r, "lower_bound": False, "text": f"{r:.1f}"}
    r = plain["budget_s"] / nest["reached_s"]
    return {"ratio": r, "lower_bound": True, "text": f">= {r:.1f} (lower bound)"}


# ----------------------------------------------------------------------------
# Measures on the demo only


def sweep_overhead(design_path: Path) -> dict:
    """Evaluate the demo design twice (the first run pays for imports and
    first-use set-up); the second's engine share is the figure.  With an
    ideal line: the timed solver stands for the impedance solve only."""
    from necflow.chain import evaluate, load_design

    runs = []
    for _ in range(2):
        solver = TimedSolver()
        t0 = time.perf_counter()
        design = load_design(design_path).model_copy(update={"route": None})
        evaluate(design, solver=solver)
        total = time.perf_counter() - t0
        runs.append({"total_s": total, "engine_s": solver.seconds, "solves": solver.solves,
                     "overhead_fraction": 1.0 - solver.seconds / total})
    return {"first": runs[0], "warm": runs[1]}


def route_cost(design) -> dict:
    """Engine time per frequency point with the feed line in the model (the
    design's route) against the same design with an ideal line, in one run:
    every band's model solved at its band's points."""
    from necflow.chain import Chain
    from necflow.engine import pynec_adapter

    out = {}
    for name, d, solve in (
            ("ideal_line", design.model_copy(update={"route": None}),
             pynec_adapter.solve_feedpoint),
            ("route", design, pynec_adapter.solve_routed)):
        chain = Chain(d)
        seconds, points = 0.0, 0
        for i, m in enumerate(chain.models):
            f = chain.frequency_hz[chain.band_index == i]
            t0 = time.perf_counter()
            solve(m, f)
            seconds += time.perf_counter() - t0
            points += f.size
        out[name] = {"engine_s": seconds, "points": points,
                     "segments": max(sum(w.segments for w in m.wires) for m in chain.models),
                     "s_per_point": seconds / points}
    out["ratio"] = out["route"]["s_per_point"] / out["ideal_line"]["s_per_point"]
    return out


def solve_rate(design, workers: int) -> dict:
    """Engine points per second: one process, then ``workers`` processes."""
    from necflow.catalog.bands import resolve_bands
    from necflow.chain import band_points
    from necflow.config.fields import apply
    from necflow.engine.parallel import ParallelSolver
    from necflow.model import build_model

    f, _ = band_points(resolve_bands(design))
    models = [build_model(apply(design, {"antenna.span": 27.0 + 0.25 * k}), f.max())
              for k in range(2 * workers)]
    out = {}
    for n in sorted({1, workers}):
        with ParallelSolver(workers=n) as ps:
            ps.solve_many(models[:n], [f[:2]] * n)      # start the pool before timing
            t0 = time.perf_counter()
            ps.solve_many(models, [f] * len(models))
            dt = time.perf_counter() - t0
        out[n] = len(models) * f.size / dt
    return {"one_process": out[1], "all_workers": out[workers], "workers": workers,
            "per_core": out[workers] / workers}


def memory_growth(design, space, cache, n_total: int = 10_000, seed: int = 3) -> dict:
    """Resident memory after 100 and after ``n_total`` scored variants (full
    pipeline, antenna responses from the cache: the steady state of a study)."""
    from necflow.config.fields import apply
    from necflow.optimize.problem.cost import score_design

    rng = np.random.default_rng(seed)
    geo = [p for p in space.params if p.geometry]
    spans = list(geo[0].grid()) if geo and geo[0].grid() is not None else []
    feed = [p for p in space.params if not p.geometry]
    marks = {}
    t0 = time.perf_counter()
    for k in range(1, n_total + 1):
        vals = {}
        if spans:
            vals[geo[0].path] = float(spans[rng.integers(len(spans))])
        for p in feed:
            if p.choices is not None:
                vals[p.path] = p.choices[rng.integers(len(p.choices))]
            else:
                vals[p.path] = float(rng.uniform(p.low, p.high))
        score_design(apply(design, vals), cache)
        if k in (100, n_total):
            gc.collect()
            marks[k] = rss_mb()
    return {"rss_after_100_mb": marks[100], f"rss_after_{n_total}_mb": marks[n_total],
            "memory_growth_mb": marks[n_total] - marks[100], "evaluations": n_total,
            "seconds": time.perf_counter() - t0, "cache_misses": cache.misses,
            "problem": "demo"}


# ----------------------------------------------------------------------------
# The table


def _per_trial(nest: dict) -> str:
    """Points per solved trial of the nested study (screen + full when recorded)."""
    attr, n = nest.get("solves_attr"), max(1, nest.get("complete") or 0)
    if not attr:
        return f"{nest['solves_per_trial']:.1f}"
    return f"{nest['solves_per_trial']:.1f} ({attr['screen'] / n:.1f} + {attr['full'] / n:.1f})"


def _fmt_spread(s) -> str:
    return "-" if not s else f"{100 * s['max']:.2f} / {100 * s['median']:.2f} %"


def table(results: dict, mem: dict | None, shared: dict) -> str:
    names = list(results)
    rows: list[tuple[str, list[str], str]] = []

    def row(label, fn, target=""):
        rows.append((label, [fn(results[n]) for n in names], target))

    row("geometry + feed fields", lambda r: f"{len(r['fields']['geometry_fields'])} + "
        f"{len(r['fields']['feed_fields'])}")
    row("reference method", lambda r: "whole grid, exhaustive feed" if r["reference"]
        ["method"].startswith("whole") else f"Sobol {r['reference']['candidates']} + "
        f"{sum(p['evaluations'] for p in r['reference']['polish'])} Nelder-Mead")
    row("reference cost (full pipeline)", lambda r: f"{r['reference']['cost']:.5g}")
    row("reference time, points solved", lambda r: f"{r['reference']['seconds']:.0f} s, "
        f"{r['reference']['solves']} ({r['reference']['workers']} workers)")
    row("target (reference + 0.5 %)", lambda r: f"{r['target']:.5g}")

    def reached(x, unit_trials):
        if x["reached_s"] is None:
            return f"not in {x['budget_s']:.0f} s"
        return f"{x['reached_s']:.1f} s, {unit_trials(x)} trials"

    row("nested (1 worker): time to band", lambda r: reached(
        r["nested"], lambda x: x["trials_to_band"]))
    row("  trials, best confirmed cost", lambda r: f"{r['nested']['trials']}, "
        f"{r['nested']['best']:.5g}")
    row("plain loop (1 process): time to band", lambda r: reached(
        r["plain"], lambda x: x["trials"]))
    row("  trials, best cost", lambda r: f"{r['plain']['trials']}, {r['plain']['best']:.5g}")
    row("ratio plain / nested", lambda r: r["ratio"]["text"], ">= 100")
    row("points solved per solved trial: nested", lambda r: _per_trial(r["nested"]))
    row("  plain", lambda r: f"{r['plain']['solves_per_trial']:.1f}")
    row("screening error max / median", lambda r: _fmt_spread(r["nested"].get(
        "screening_error")))
    row("interpolation error max / median", lambda r: _fmt_spread(r["nested"].get(
        "interp_error")))
    if mem is not None:
        rows.append((f"memory, {mem['evaluations']} vs 100 evaluations (demo)",
                     [f"{mem['memory_growth_mb']:+.1f} MB" if n == "demo" else "-"
                      for n in names], "< 50 MB"))
    w = max(len(r[0]) for r in [*rows, *shared])
    cw = max(24, *(len(c) for r in rows for c in r[1]))
    lines = [f"{'measure':<{w}}  " + "  ".join(f"{n:<{cw}}" for n in names) + "  target",
             "-" * (w + (cw + 2) * len(names) + 8)]
    for label, cells, target in rows:
        lines.append(f"{label:<{w}}  " + "  ".join(f"{c:<{cw}}" for c in cells) +
                     f"  {target}")
    if shared:
        lines.append("")
        for label, value, target in shared:
            lines.append(f"{label:<{w}}  {value:<{cw}}  {target}")
    return "\n".join(lines)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--problems", default=",".join(PROBLEMS),
                    help=f"comma-separated subset of {', '.join(PROBLEMS)}")
    ap.add_argument("--workers", type=int, default=os.cpu_count() or 1,
                    help="processes of the reference's solver (the searches use one each)")
    ap.add_argument("--plain-budget", type=float, default=300.0,
                    help="seconds the plain loop may run before it is stopped")
    ap.add_argument("--nested-budget", type=float, default=None,
                    help="seconds the nested study may run (default: the plain budget)")
    ap.add_argument("--reference-samples", type=int, default=64,
                    help="Sobol geometries of the reference on a continuous space")
    ap.add_argument("--polish-starts", type=int, default=3)
    ap.add_argument("--polish-evals", type=int, default=40)
    ap.add_argument("--evaluations", type=int, default=10_000,
                    help="scored variants of the memory measure (demo)")
    ap.add_argument("--out", default=str(ROOT / "bench.json"))
    args = ap.parse_args(argv)
    names = [n.strip() for n in args.problems.split(",") if n.strip()]
    unknown = [n for n in names if n not in PROBLEMS]
    if unknown or not names:
        ap.error(f"unknown problem {', '.join(unknown) or '(none)'}; "
                 f"choose from {', '.join(PROBLEMS)}")
    nested_budget = args.plain_budget if args.nested_budget is None else args.nested_budget

    import warnings

    from necflow.chain import load_design
    from necflow.errors import NecflowWarning

    warnings.simplefilter("ignore", NecflowWarning)
    t_start = time.perf_counter()
    say = lambda s: print(f"[{time.perf_counter() - t_start:6.0f} s, load "  # noqa: E731
                          f"{os.getloadavg()[0]:4.2f}] {s}", flush=True)

    shared_doc, shared_rows = {}, []
    if "demo" in names:
        say("demo: engine share of a plain sweep, solve cost with the feed line in the model")
        sweep = sweep_overhead(PROBLEMS["demo"])
        routed_design = load_design(PROBLEMS["demo"])
        routed = route_cost(routed_design) if routed_design.route is not None else None
        rate = solve_rate(routed_design.model_copy(update={"route": None}), args.workers)
        shared_doc.update(overhead_fraction=sweep["warm"]["overhead_fraction"], sweep=sweep,
                          route_solve_cost=routed, solve_rate=rate,
                          solves_per_second=rate["all_workers"],
                          solves_per_second_per_core=rate["per_core"])
        shared_rows += [
            ("solver overhead, plain sweep of the demo (warm)",
             f"{100 * sweep['warm']['overhead_fraction']:.1f} % "
             f"({sweep['warm']['engine_s']:.2f} of {sweep['warm']['total_s']:.2f} s)", "<= 10 %"),
            ("engine time per point, line in the model / ideal line (demo)",
             "-" if routed is None else f"{routed['ratio']:.1f} x "
             f"({routed['route']['segments']} / {routed['ideal_line']['segments']} segments)",
             ""),
            ("engine points per second (demo)", f"{rate['one_process']:.1f} (1 process), "
             f"{rate['all_workers']:.1f} ({args.workers} workers)", ""),
        ]

    results, mem = {}, None
    for i, name in enumerate(names, 1):
        design, space = load_problem(name)
        tag = f"{i}/{len(names)} {name}"
        say(f"{tag}: reference optimum ({args.workers} workers)")
        ref = reference(design, space, args.workers, args.reference_samples,
                        args.polish_starts, args.polish_evals, say)
        target = ref["cost"] * (1 + BAND)
        say(f"{tag}: reference cost {ref['cost']:.5g} in {ref['seconds']:.0f} s; "
            f"nested study, 1 worker (budget {nested_budget:.0f} s)")
        with tempfile.TemporaryDirectory() as tmp:
            nest = nested_study(design, space, target, nested_budget, Path(tmp))
        say(f"{tag}: nested " + (f"reached the band in {nest['reached_s']:.1f} s"
                                 if nest["reached_s"] is not None else "did not reach the band")
            + f"; plain optuna loop, 1 process (budget {args.plain_budget:.0f} s)")
        plain = plain_loop(design, space, target, args.plain_budget)
        say(f"{tag}: plain " + (f"reached the band in {plain['reached_s']:.1f} s"
                                if plain["reached_s"] is not None
                                else "did not reach the band") + f", best {plain['best']:.5g}")
        if name == "demo":
            say(f"{tag}: memory over {args.evaluations} evaluations")
            mem = memory_growth(design, space, ref["cache"], args.evaluations)
        ref.pop("cache")
        results[name] = {"design": str(PROBLEMS[name].relative_to(ROOT)),
                         "fields": shape_of(space), "reference": ref, "target": target,
                         "nested": nest, "plain": plain, "ratio": ratio_of(nest, plain)}

    doc = {
        "problems": {n: {**r, "time_to_quality_ratio": r["ratio"]["ratio"],
                         "time_to_quality_ratio_is_lower_bound": r["ratio"]["lower_bound"]}
                     for n, r in results.items()},
        "memory": mem, "memory_growth_mb": None if mem is None else mem["memory_growth_mb"],
        **shared_doc,
        "band": BAND, "workers": {"reference": args.workers, "nested": 1, "plain": 1},
        "plain_budget_s": args.plain_budget, "nested_budget_s": nested_budget,
        "peak_memory_mb": peak_mb(),
        "machine": {"python": platform.python_version(), "cpus": os.cpu_count(),
                    "platform": platform.platform(), "load_average": os.getloadavg()},
        "total_s": time.perf_counter() - t_start,
    }
    Path(args.out).write_text(json.dumps(doc, indent=1, default=str) + "\n")
    print()
    print(table(results, mem, shared_rows))
    print(f"\nbench.json: {args.out}; total {doc['total_s']:.0f} s; load average at the end "
          f"{os.getloadavg()[0]:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
