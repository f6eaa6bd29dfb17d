"""Fit uncertain fields of a design to measured sweeps.

The residual is the difference of model and measured reflection at every
measured frequency: real and imaginary parts where the sweep carries phase,
the magnitude |Gamma| where it gives SWR or return loss only.  Reflection
(rather than impedance) keeps each residual bounded (|dGamma| <= 2), so a
point near an anti-resonance cannot swamp the rest.  The fit runs
:func:`scipy.optimize.least_squares` (trust-region reflective, bounds,
robust ``soft_l1`` loss) in normalised coordinates from several seeded
starts: every start is scored first (one solve each) and the best few are
polished.  Parameter uncertainties come from the Jacobian at the solution,
``cov = s^2 (J^T J)^-1`` with ``s^2`` the residual variance.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import least_squares

from necflow.calibrate.response import Responder, gammas
from necflow.config.fields import Param, current_value, from_unit, set_values, to_unit, unit_scale
from necflow.config.schema import Design
from necflow.errors import ConfigError, ModelError
from necflow.measure.types import Measurement

#: What a sweep of SWR (or return loss) alone cannot tell.
SWR_ONLY_NOTE = (
    "SWR alone carries no phase: R + jX and R - jX give the same SWR, so it cannot tell "
    "the sign of the reactance (which side of resonance a frequency lies), and a lossy "
    "feed line or ground lowers SWR just as a better match does; fields that trade "
    "against each other that way stay uncertain")


@dataclass(frozen=True)
class FitResult:
    """Outcome of :func:`fit_design`.

    Attributes
    ----------
    params : list of Param
        The fitted fields.
    start : dict
        Their values before the fit [SI].
    values : dict
        Fitted values [SI].
    sigma : dict
        One-standard-deviation uncertainty of each [SI]; inf when the data
        do not determine the field.
    at_bound : dict
        True where a fitted value sits at its range's end (the true value may
        lie beyond).
    rms_before, rms_after : float
        Root-mean-square residual [in |Gamma| units] at the start and after.
    design : Design
        The calibrated design.
    solves : int
        Antenna solves (frequency sets) the fit needed.
    complex_data : bool
        True when every sweep carried phase.
    correlation : ndarray
        Correlation matrix of the fitted fields.
    notes : list of str
        What the data cannot tell, fields at bounds.
    """

    params: list[Param]
    start: dict[str, float]
    values: dict[str, float]
    sigma: dict[str, float]
    at_bound: dict[str, bool]
    rms_before: float
    rms_after: float
    design: Design
    solves: int
    complex_data: bool
    correlation: np.ndarray
    notes: list[str] = field(default_factory=list)


def residuals(model_gammas: list, measurements: list[Measurement]) -> np.ndarray:
    """Stacked residuals: [Re dG, Im dG] for sweeps with phase, d|G| otherwise."""
    out = []
    for g, m in zip(model_gammas, measurements):
        if m.complex:
            d = g - m.gamma
            out += [d.real, d.imag]
        else:
            out.append(np.abs(g) - m.gamma_mag)
    return np.concatenate(out)


def _covariance(jac: np.ndarray, r: np.ndarray) -> np.ndarray:
    """``s^2 (J^T J)^-1`` with ``s^2 = |r|^2 / (m - n)``; directions the data
    do not see get infinite variance.

    References
    ----------
    .. [1] W. H. Press et al., *Numerical Recipes*, 3rd ed., Cambridge 2007,
       sec. 15.5 (covariance of nonlinear least-squares parameters).
    """
    m, n = jac.shape
    s2 = float(r @ r) / max(m - n, 1)
    _, sv, vt = np.linalg.svd(jac, full_matrices=False)
    tiny = sv <= sv.max(initial=0.0) * 1e-8 if sv.size else np.array([], bool)
    inv = np.where(tiny, 0.0, 1.0 / np.where(tiny, 1.0, sv) ** 2)
    cov = (vt.T * inv) @ vt * s2
    if np.any(tiny):
        blind = np.abs(vt[tiny]).max(axis=0) > 1e-3
        cov[blind, :] = np.inf
        cov[:, blind] = np.inf
    return cov


def fit_design(design: Design, measurements: list[Measurement], params: list[Param], *,
               starts: int = 4, polish: int = 2, seed: int = 0, loss: str = "soft_l1",
               f_scale: float = 0.05, responder: Responder | None = None,
               max_nfev: int = 40,
               on_step: Callable[[int, int | None, str], None] | None = None) -> FitResult:
    """Fit ``params`` of ``design`` to the sweeps.

    Parameters
    ----------
    design : Design
    measurements : list of Measurement
    params : list of Param
        Bounded fields (:func:`necflow.calibrate.params.build_params`).
    starts : int
        Starting points scored: the design's own values plus ``starts - 1``
        seeded uniform draws in the ranges.
    polish : int
        How many of the best starts are run to convergence.
    seed : int
        Seed of the draws.
    loss, f_scale
        Robust loss of :func:`scipy.optimize.least_squares`; residuals
        smaller than ``f_scale`` (in |Gamma|) count quadratically.
    responder : Responder, optional
        Shared solver cache.
    max_nfev : int
        Residual evaluations per polished start.
    on_step : callable, optional
        ``on_step(done, total, text)`` before each residual evaluation (a
        command's progress): the starts are counted, a refinement's
        evaluations are not known in advance.

    Raises
    ------
    ConfigError
        No parameters, or a sweep without points.
    """
    if not params:
        raise ConfigError("nothing to fit: name the uncertain fields in the design's "
                          "'uncertain' section or with --vary PATH=LOW,HIGH", field="uncertain")
    responder = responder or Responder(design, measurements)
    n_points = sum(len(m.frequency_hz) * (2 if m.complex else 1) for m in measurements)
    if n_points <= len(params):
        raise ConfigError(f"{n_points} measured values cannot determine {len(params)} "
                          "fields; measure more frequencies or fit fewer fields",
                          field="uncertain")
    start = {p.path: float(current_value(design, p.path)) for p in params}
    bad_residual = np.full(n_points, 2.0)
    phase = {"done": 0, "total": None, "text": ""}

    def fun(u):
        if on_step is not None:
            on_step(phase["done"], phase["total"], phase["text"])
            phase["done"] += 1
        try:
            variant = set_values(design, from_unit(params, u))
            return residuals(gammas(responder, variant, measurements), measurements)
        except (ConfigError, ModelError):
            return bad_residual

    def rho_cost(r):
        z = (r / f_scale) ** 2
        return float(np.sum(2.0 * (np.sqrt(1.0 + z) - 1.0)) * f_scale ** 2 / 2.0)

    rng = np.random.default_rng(seed)
    u0 = to_unit(params, start)
    candidates = [u0] + [rng.uniform(0.0, 1.0, len(params)) for _ in range(max(starts - 1, 0))]
    phase.update(total=len(candidates), text="scoring the starting points")
    r0 = fun(u0)
    scored = [(rho_cost(r0), 0)] + [(rho_cost(fun(u)), i) for i, u in
                                    enumerate(candidates[1:], start=1)]
    scored.sort()
    best = None
    chosen = scored[:max(polish, 1)]
    for k, (_, i) in enumerate(chosen):
        phase.update(done=0, total=None, text=f"refining start {k + 1} of {len(chosen)}")
        res = least_squares(fun, candidates[i], bounds=(0.0, 1.0), loss=loss,
                            f_scale=f_scale, diff_step=1e-2, x_scale=1.0, max_nfev=max_nfev,
                            xtol=1e-6, ftol=1e-10, gtol=1e-10)
        if best is None or res.cost < best.cost:
            best = res
    values = from_unit(params, best.x)
    r = best.fun
    cov_u = _covariance(best.jac, r)
    scale = unit_scale(params, values)
    with np.errstate(invalid="ignore"):
        sd_u = np.sqrt(np.diag(cov_u))
        corr = cov_u / np.outer(sd_u, sd_u)
    sigma = {p.path: float(sd_u[k] * abs(scale[k])) for k, p in enumerate(params)}
    at_bound = {p.path: bool(best.x[k] < 1e-3 or best.x[k] > 1 - 1e-3)
                for k, p in enumerate(params)}
    notes = []
    complex_data = all(m.complex for m in measurements)
    if not complex_data:
        notes.append(SWR_ONLY_NOTE)
    for p in params:
        if at_bound[p.path]:
            notes.append(f"{p.path} ended at an end of its range: the data want a value "
                         "beyond it, or another field is wrong")
        if not np.isfinite(sigma[p.path]):
            notes.append(f"{p.path} is not determined by the data (its effect is zero or "
                         "the same as another field's)")
    calibrated = set_values(design, values)
    return FitResult(params=params, start=start, values=values, sigma=sigma,
                     at_bound=at_bound, rms_before=float(np.sqrt(np.mean(r0 ** 2))),
                     rms_after=float(np.sqrt(np.mean(r ** 2))), design=calibrated,
                     solves=responder.solves, complex_data=complex_data,
                     correlation=corr, notes=notes)
