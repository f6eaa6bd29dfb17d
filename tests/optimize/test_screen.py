"""Fewer solves per geometry: interpolation over frequency and screening.

* the rational interpolation reproduces closed-form impedances (series
  R-L-C, Pozar, *Microwave Engineering*, 4th ed., eq. 6.1-6.3) and its
  held-out error estimate bounds the true error computed here from the closed
  form; a band with a parallel resonance inside it is flagged and solved in
  full;
* on the demo doublet (real engine, Sommerfeld-Norton ground) the estimate
  bounds the error against a full solve of every point;
* the correction learned from one full solve brings the screened response of
  a neighbouring geometry closer to its own full solve (made here);
* a nested study over Sommerfeld-Norton ground, screening on, reaches the
  optimum of an exhaustive evaluation made here with full solves, and its
  best trial is a confirmed one.
"""

from __future__ import annotations

import itertools

import numpy as np
import optuna
import pytest
from optuna.trial import TrialState

from necflow.chain import Chain, load_design_text
from necflow.config.fields import apply
from necflow.engine.interpolate import THRESHOLD, anchor_indices, band_estimate
from necflow.engine.response import ResponseCache
from necflow.optimize.problem.cost import score_design
from necflow.optimize.problem.space import build_space, load_study_design
from necflow.optimize.storage.bookkeeping import CORRECTION, trial_values
from necflow.optimize.strategy.screen import Screening
from necflow.optimize.strategy.study import REFINE, SCREENING, SOLVES, StudyOptions, run_study
from tests.conftest import demo_text_without_route
from tests.optimize.helpers import write_study

optuna.logging.set_verbosity(optuna.logging.WARNING)


def _series_rlc(f, r=40.0, f0=14.15e6, q=12.0):
    """Series R-L-C: Z = R + j(wL - 1/(wC)), Q = w0 L / R (Pozar eq. 6.1-6.3)."""
    w, w0 = 2 * np.pi * f, 2 * np.pi * f0
    L = q * r / w0
    C = 1 / (w0 ** 2 * L)
    return r + 1j * (w * L - 1 / (w * C))


def _tank(f, r=3000.0, f0=14.2e6, q=40.0):
    """Parallel R-L-C: Y = 1/R + j(wC - 1/(wL)), Q = R / (w0 L) (Pozar eq. 6.17-6.19)."""
    w, w0 = 2 * np.pi * f, 2 * np.pi * f0
    L = r / (q * w0)
    C = 1 / (w0 ** 2 * L)
    return 1 / (1 / r + 1j * (w * C - 1 / (w * L)))


def test_interpolation_of_a_series_resonance_and_its_error_estimate():
    f = np.linspace(14.0e6, 14.35e6, 11)
    z = _series_rlc(f)
    idx = anchor_indices(f.size)
    est = band_estimate(f, idx, z[idx])
    true = np.max(np.abs(est.z - z) / np.abs(z))
    assert idx.tolist() == [0, 3, 7, 10]
    assert np.array_equal(est.z[idx], z[idx])        # solved points are kept as solved
    assert true < 2e-3                               # a one-pole band is fitted closely
    assert true <= est.error < THRESHOLD             # the estimate bounds the true error


def _two_tanks(f):
    """Two parallel resonances inside 14.0-14.35 MHz (Q 40 each)."""
    return _tank(f, f0=14.08e6) + _tank(f, f0=14.26e6)


def test_two_resonances_inside_the_band_are_flagged():
    """Two antiresonances between the anchors: no one-pole fit holds; the
    estimate says so."""
    f = np.linspace(14.0e6, 14.35e6, 11)
    z = _two_tanks(f)
    idx = anchor_indices(f.size)
    est = band_estimate(f, idx, z[idx])
    true = np.max(np.abs(est.z - z) / np.abs(z))
    assert est.error > THRESHOLD
    assert true > THRESHOLD          # and it is right to: the fit is poor


def test_a_flagged_band_is_solved_at_every_point():
    """Chain.antenna_estimate on a stand-in whose 20 m band holds two
    antiresonances and whose 40 m band is one smooth resonance."""
    def solver(model, f):
        f = np.asarray(f, dtype=float)
        hi = f > 10e6
        out = _series_rlc(f, f0=7.1e6, q=10.0)
        out[hi] = _two_tanks(f[hi])
        return out

    text = demo_text_without_route().replace(
        "bands: [80m, 40m, 20m, 17m, 10m]", "bands: [40m, 20m]")
    chain = Chain(load_design_text(text), ResponseCache(solver))
    est = chain.antenna_estimate()
    f = chain.frequency_hz
    n40, n20 = (chain.band_index == 0).sum(), (chain.band_index == 1).sum()
    assert est.full == (1,)
    assert est.solved == 4 + n20                    # 40 m from 4 anchors, 20 m in full
    assert est.error[0] < THRESHOLD < est.error[1]
    hi = f > 10e6
    assert np.allclose(est.z[hi], _two_tanks(f[hi]), rtol=1e-12)
    assert np.allclose(est.z[~hi], _series_rlc(f[~hi], f0=7.1e6, q=10.0), rtol=2e-3)
    assert n40 > 4


@pytest.mark.engine
def test_error_estimate_against_a_full_solve_of_the_demo():
    """The demo doublet over its own Sommerfeld-Norton ground: each band from
    4 solved frequencies against all its points solved."""
    chain = Chain(load_design_text(demo_text_without_route()))
    est = chain.antenna_estimate(threshold=np.inf)        # interpolate every band
    full = chain.antenna
    for i, band in enumerate(chain.bands):
        k = chain.band_index == i
        true = float(np.max(np.abs(est.z[k] - full[k]) / np.abs(full[k])))
        assert true <= est.error[i], band.name
        assert true < 0.01, band.name
    assert est.solved == 4 * len(chain.bands) < full.size


@pytest.mark.engine
def test_learned_correction_brings_the_screen_close_to_a_full_solve():
    """Span 28 m solved in full teaches the correction; the screen of span
    28.5 m (reflection-coefficient ground, interpolated) corrected by it is
    compared with a full Sommerfeld-Norton solve of 28.5 m made here."""
    design = load_design_text(demo_text_without_route())
    space = build_space(design)
    geo = [p for p in space.params if p.geometry]
    screening = Screening(geo)
    base = Chain(design)
    a, b = base.variant({"antenna.span": 28.0}), base.variant({"antenna.span": 28.5})
    sa = screening.screen(a, {"antenna.span": 28.0})
    assert not sa.corrected and sa.ground == "reflection"
    screening.learn({"antenna.span": 28.0}, sa, a.antenna)
    sb = screening.screen(b, {"antenna.span": 28.5})
    assert sb.corrected
    full = b.antenna
    raw = np.abs(sb.z_screen - full) / np.abs(full)
    corrected = np.abs(sb.z - full) / np.abs(full)
    assert np.max(corrected) < 0.5 * np.max(raw)
    assert np.median(corrected) < 0.01


SOMMERFELD_STUDY = """\
name: screened-engine
bands: [{name: 40m, points: 7}, {name: 20m, points: 7}]
antenna: {shape: doublet, span: 20 m, height: 8 m, wire: {diameter: 2 mm, material: copper}}
ground: {model: sommerfeld, surface: medium-dry}
feed:
  - {id: ladder, line: window-450, length: 8 m}
  - {id: coax, line: rg-213, length: 10 m}
goal: {swr_limit: 2.0}
search:
  antenna.span: {range: [18 m, 22 m], step: 1 m}
  feed.ladder.length: {range: [4 m, 16 m], step: 1 m}
"""


@pytest.mark.engine
def test_screened_nested_study_reaches_the_exhaustive_optimum(tmp_path):
    design, space = load_study_design(write_study(tmp_path, SOMMERFELD_STUDY))
    cache = ResponseCache()
    ranked = sorted(
        (score_design(apply(design, {"antenna.span": float(s), "feed.ladder.length": float(x)}),
                      cache)[1].cost, float(s), float(x))
        for s, x in itertools.product(*(p.grid() for p in space.params)))
    best_cost = ranked[0][0]
    opts = StudyOptions(out=tmp_path / "run", study_name="s", trials=12, seed=3)
    study, why = run_study(design, space, opts)
    assert why == "trial budget reached"
    done = study.get_trials(states=(TrialState.COMPLETE,))
    best = study.best_trial
    assert best.user_attrs[SCREENING]["confirmed"] is True
    assert best.value == pytest.approx(best_cost, rel=1e-9)
    assert trial_values(best) == pytest.approx({"antenna.span": ranked[0][1],
                                                "feed.ladder.length": ranked[0][2]})
    n = sum(7 for _ in design.bands)
    for t in done:
        rec, solves = t.user_attrs[SCREENING], t.user_attrs[SOLVES]
        # the first screen, each estimate of a local refinement, the refined geometry's
        refined = t.user_attrs.get(REFINE, {}).get("evaluations", -1)
        assert solves["screen"] <= n * (2 + refined)
        if rec["confirmed"]:
            assert solves["full"] == n
        else:
            assert solves["full"] == 0 and t.value == rec["estimate"]
            assert t.value > best.value      # an unconfirmed trial is never the best


@pytest.mark.engine
def test_corrections_are_stored_and_learned_by_a_resumed_session(tmp_path):
    design, space = load_study_design(write_study(tmp_path, SOMMERFELD_STUDY))
    opts = StudyOptions(out=tmp_path / "run", study_name="s", trials=2, seed=3)
    study, _ = run_study(design, space, opts)
    confirmed = [t for t in study.get_trials(states=(TrialState.COMPLETE,))
                 if t.user_attrs[SCREENING]["confirmed"]]
    assert confirmed
    first = confirmed[0]
    # the stored correction is the full solve minus the screen, both made again here
    geometry = {"antenna.span": trial_values(first)["antenna.span"]}
    chain = Chain(apply(design, geometry))
    screen = chain.screened("reflection").antenna_estimate().z
    stored = first.user_attrs[CORRECTION]
    dz = np.asarray(stored["re"]) + 1j * np.asarray(stored["im"])
    assert dz == pytest.approx(chain.antenna - screen, rel=1e-9, abs=1e-9)
    # a second session (a fresh worker, nothing learned in memory) screens with it
    study, _ = run_study(design, space, StudyOptions(out=tmp_path / "run", study_name="s",
                                                     trials=4, seed=3))
    later = [t for t in study.get_trials(states=(TrialState.COMPLETE,)) if t.number >= 2]
    assert later and all(t.user_attrs[SCREENING]["corrected"] for t in later)


def test_absorbed_corrections_are_learned_once():
    params = [p for p in build_space(load_design_text(demo_text_without_route())).params
              if p.geometry]
    s = Screening(params)
    path = params[0].path
    dz = np.array([1 + 2j, 3 - 1j])
    assert s.correction(np.array([0.5])) is None
    assert s.absorb([(7, {path: params[0].from_unit(0.5)}, dz, 0.01)]) == 1
    assert s.absorb([(7, {path: params[0].from_unit(0.5)}, dz, 0.01)]) == 0
    assert s.correction(s.position({path: params[0].from_unit(0.5)})) == pytest.approx(dz)
    assert s.errors == [0.01]
