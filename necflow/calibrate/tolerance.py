"""Tolerance: seeded Monte Carlo over the stated tolerances of a design.

The cases are drawn by :mod:`necflow.config.tolerances`:

Each case draws every toleranced feed field uniformly within its +- range
(a percentage of the nominal value, or an amount in the field's unit) and
one of a small set of geometry states: each toleranced antenna field, and
the ground between its dry- and wet-season surfaces (permittivity linear,
conductivity logarithmic), takes ``levels`` values at the centres of
equal-probability bins of its range; the combinations (a seeded subset
beyond ``max_states``) are solved once each and shared by every case that
draws them, while the feed variants cost no solve.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from necflow.calibrate.response import Responder
from necflow.chain.cases import evaluate_cases
from necflow.config.schema import Design
from necflow.config.tolerances import parse_tolerances, scenarios
from necflow.errors import ConfigError
from necflow.report import plots


@dataclass(frozen=True)
class ToleranceResult:
    """Monte Carlo outcome.

    Attributes
    ----------
    bands : list of Band
    frequency_hz, band_index : ndarray
        The evaluated points.
    swr : ndarray, shape (cases, points)
        SWR at the radio of every case.
    loss_db : ndarray, shape (cases, points)
        Total system loss [dB].
    nominal_swr : ndarray, shape (points,)
    swr_limit : float
    states : int
        Geometry states solved.
    seed : int
    """

    bands: list
    frequency_hz: np.ndarray
    band_index: np.ndarray
    swr: np.ndarray
    loss_db: np.ndarray
    nominal_swr: np.ndarray
    swr_limit: float
    states: int
    seed: int

    def band_table(self) -> list[dict]:
        """Per band: share of cases within the limit over the whole band, mean
        share of the band within it, and loss percentiles (5, 50, 95) [dB]."""
        out = []
        for i, b in enumerate(self.bands):
            sel = self.band_index == i
            s, l = self.swr[:, sel], self.loss_db[:, sel].mean(axis=1)
            out.append({"band": b.name,
                        "yield": float(np.mean(np.all(s <= self.swr_limit, axis=1))),
                        "within_mean": float(np.mean(s <= self.swr_limit)),
                        "loss_p5": float(np.percentile(l, 5)),
                        "loss_p50": float(np.percentile(l, 50)),
                        "loss_p95": float(np.percentile(l, 95)),
                        "swr_max_p95": float(np.percentile(s.max(axis=1), 95))})
        return out


def monte_carlo(design: Design, *, samples: int | None = None, seed: int | None = None,
                responder: Responder | None = None,
                on_step: Callable[[int, int | None, str], None] | None = None
                ) -> ToleranceResult:
    """Run the tolerance Monte Carlo of a design (see the module notes):
    the cases through :func:`necflow.chain.cases.evaluate_cases`, each
    geometry state solved once, the feed variants of a state in one batch;
    ``on_step(done, total, text)`` before each solve (a command's progress)."""
    tols = parse_tolerances(design)
    if not tols and design.tolerances.ground is None:
        raise ConfigError("no tolerances: give 'tolerances.fields' (e.g. "
                          "{feed.cap.value: 10 %, antenna.height: 50 cm}) or "
                          "'tolerances.ground'", field="tolerances")
    seed = design.tolerances.seed if seed is None else seed
    cases = scenarios(design, tols, samples=samples, seed=seed)
    responder = responder or Responder(design)
    chain = responder.chain(design)
    if on_step is not None:
        chain.solve(lambda done, total, text: on_step(done, total, f"nominal design: {text}"))
    result = evaluate_cases(chain, cases, on_step)
    nominal = chain.system.swr
    return ToleranceResult(bands=chain.bands, frequency_hz=chain.frequency_hz,
                           band_index=chain.band_index, swr=result.swr,
                           loss_db=result.loss_db, nominal_swr=np.asarray(nominal),
                           swr_limit=design.goal.swr_limit, states=responder.solves - 1,
                           seed=seed)


def tolerance_figure(result: ToleranceResult, title: str = ""):
    """SWR spread per band (:func:`necflow.report.plots.tolerance_figure`)."""
    return plots.tolerance_figure(result, title)
