"""Feedpoint impedance across a band from a few solved frequencies.

Over one amateur band (a few per cent of bandwidth) the feedpoint impedance
of a wire antenna is dominated by at most one nearby resonance, series or
parallel.  Near a series resonance ``Z ~ R + j(aω - b/ω)``; near a parallel
one ``Z ~ 1 / (G + j(cω - d/ω))``.  Both are, to first order in the
normalised frequency ``x``, the ratio of two first-degree polynomials
(a bilinear, or Möbius, map of ``x``); so is any one-pole expansion of the
impedance around the band (the classical Foster/Padé argument: Pozar,
*Microwave Engineering*, 4th ed., section 6.1 on resonators, and the
rational fits of frequency responses by Levy, "Complex-curve fitting",
IRE Trans. Automatic Control, 1959).

:func:`rational_fit` fits ``Z(x) = (a0 + a1 x) / (1 + b1 x)`` to solved
points by Levy's linearised least squares; :func:`band_estimate` fits it to
``k`` anchor frequencies of a band and estimates its error by leaving each
interior anchor out in turn: the fit through the others predicts it, and
the largest relative miss ``|Z_pred - Z| / |Z|`` is the estimate.  The
estimate is conservative: the final fit uses every anchor.  A caller solves
every point of the band when the estimate is above its threshold.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["ANCHORS", "THRESHOLD", "BandEstimate", "anchor_indices", "band_estimate",
           "rational_fit", "rational_eval"]

#: Solved frequencies per band (ends, and evenly spread between).
ANCHORS = 4
#: Largest held-out relative error of the impedance accepted [-].
THRESHOLD = 0.02


def _normalise(f: np.ndarray, lo: float, hi: float) -> np.ndarray:
    mid, half = 0.5 * (lo + hi), 0.5 * (hi - lo)
    return (f - mid) / (half if half > 0 else 1.0)


def rational_fit(x, z, degree: int = 1) -> np.ndarray:
    """Coefficients of ``Z(x) = P(x) / (1 + x Q(x))`` fitted to points.

    Levy's linearisation: ``P(x_i) - Z_i x_i Q(x_i) = Z_i`` solved in the
    least-squares sense (complex coefficients).

    Parameters
    ----------
    x : array_like
        ``(n,)`` normalised frequencies (about -1 to 1 over the band).
    z : array_like
        ``(n,)`` complex impedances [ohm].
    degree : int
        Degree of numerator and denominator; ``2 * degree + 1`` unknowns,
        so ``n >= 2 * degree + 1``.

    Returns
    -------
    ndarray
        ``(2 * degree + 1,)``: ``a_0..a_degree`` then ``b_1..b_degree``.
    """
    x = np.asarray(x, dtype=float)
    z = np.asarray(z, dtype=complex)
    n_coef = 2 * degree + 1
    if x.size < n_coef:
        raise ValueError(f"a degree-{degree} fit needs {n_coef} points, got {x.size}")
    a = np.empty((x.size, n_coef), dtype=complex)
    for k in range(degree + 1):
        a[:, k] = x ** k
    for k in range(1, degree + 1):
        a[:, degree + k] = -z * x ** k
    coef, *_ = np.linalg.lstsq(a, z, rcond=None)
    return coef


def rational_eval(coef, x, degree: int = 1) -> np.ndarray:
    """Evaluate a :func:`rational_fit` at ``x``."""
    x = np.asarray(x, dtype=float)
    num = sum(coef[k] * x ** k for k in range(degree + 1))
    den = 1.0 + sum(coef[degree + k] * x ** k for k in range(1, degree + 1))
    return num / den


def anchor_indices(n: int, k: int = ANCHORS) -> np.ndarray:
    """Indices of ``k`` anchors among ``n`` ordered points: both ends and
    the rest evenly spread (every point when ``n <= k``)."""
    if n <= k:
        return np.arange(n)
    return np.unique(np.rint(np.linspace(0, n - 1, k)).astype(int))


@dataclass(frozen=True)
class BandEstimate:
    """Impedance over a band's points from its anchors.

    Attributes
    ----------
    z : ndarray
        ``(n,)`` impedance at every point [ohm]: solved at the anchors,
        interpolated between.
    error : float
        Held-out relative error estimate ``max |Z_pred - Z| / |Z|`` [-]
        (0 when every point is an anchor).
    anchors : ndarray
        Indices of the solved points.
    """

    z: np.ndarray
    error: float
    anchors: np.ndarray


def band_estimate(f_hz, anchors, z_anchors) -> BandEstimate:
    """Interpolate a band's impedance from solved anchor points.

    Parameters
    ----------
    f_hz : array_like
        ``(n,)`` the band's points [Hz], ascending.
    anchors : array_like of int
        Indices into ``f_hz`` of the solved points (from
        :func:`anchor_indices`).
    z_anchors : array_like
        ``(len(anchors),)`` solved impedances [ohm].

    Returns
    -------
    BandEstimate
        With the held-out error estimate: each interior anchor predicted by
        the fit through the others.
    """
    f = np.asarray(f_hz, dtype=float)
    idx = np.asarray(anchors, dtype=int)
    za = np.asarray(z_anchors, dtype=complex)
    if idx.size == f.size:
        return BandEstimate(za.copy(), 0.0, idx)
    if idx.size < 4:
        raise ValueError("interpolation needs at least 4 anchors (3 to fit, 1 held out)")
    x = _normalise(f, f[0], f[-1])
    xa = x[idx]
    err = 0.0
    for j in range(1, idx.size - 1):        # interior anchors only: no extrapolation
        keep = np.arange(idx.size) != j
        pred = rational_eval(rational_fit(xa[keep], za[keep]), xa[j])
        err = max(err, float(abs(pred - za[j]) / max(abs(za[j]), 1e-12)))
    z = rational_eval(rational_fit(xa, za), x)
    z[idx] = za                              # solved points are exact
    if not np.all(np.isfinite(z)):
        err = float("inf")
    return BandEstimate(z, err, idx)
