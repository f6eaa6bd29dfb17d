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

import matplotlib
import numpy as np
from matplotlib.figure import Figure

from necflow.calibrate.response import Responder
from necflow.chain.cases import evaluate_cases
from necflow.config.schema import Design
from necflow.config.tolerances import parse_tolerances, scenarios
from necflow.errors import ConfigError


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
    """SWR spread per band (5-95 % of cases shaded, median, nominal, limit)."""
    matplotlib.use("Agg", force=False)

    n = len(result.bands)
    cols = min(n, 3)
    rows = int(np.ceil(n / cols))
    fig = Figure(figsize=(4.2 * cols, 3.0 * rows), layout="constrained")
    top = 3.0 * result.swr_limit
    for i, b in enumerate(result.bands):
        ax = fig.add_subplot(rows, cols, i + 1)
        sel = result.band_index == i
        fm = result.frequency_hz[sel] / 1e6
        s = np.minimum(result.swr[:, sel], top)
        ax.fill_between(fm, np.percentile(s, 5, axis=0), np.percentile(s, 95, axis=0),
                        alpha=0.3, label="5-95 % of cases")
        ax.plot(fm, np.median(s, axis=0), lw=1.5, label="median")
        ax.plot(fm, np.minimum(result.nominal_swr[sel], top), "k--", lw=1, label="nominal")
        ax.axhline(result.swr_limit, color="tab:red", lw=1)
        ax.set_ylim(1.0, top)
        ax.set_title(f"{b.name}", fontsize=10)
        ax.set_xlabel("frequency [MHz]")
        ax.set_ylabel("SWR at the radio")
        ax.grid(alpha=0.3)
        if i == 0:
            ax.legend(fontsize=7)
    fig.suptitle(title or f"tolerance: {result.swr.shape[0]} cases, seed {result.seed}",
                 fontsize=11)
    return fig
