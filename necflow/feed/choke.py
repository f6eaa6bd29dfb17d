"""Common-mode impedance of a choke, ``Z_cm(f) = R + jX``.

A choke is given in one of three ways (``necflow.config.schema.ChokeSpec``):
measured points (frequency, R, X), interpolated in the logarithm of the
frequency; a parallel R-L-C; or the name of a catalog choke
(:mod:`necflow.catalog.chokes`), itself a parallel R-L-C.

The differential mode passes a choke unchanged (the feed chain's ``choke``
element is an identity two-port); this impedance is what the choke puts in
the path of common-mode current on the outside of the feed line, used when
the feed line is modelled as a conductor.
"""

from __future__ import annotations

import math

import numpy as np

from necflow.catalog.chokes import CHOKE_TYPES, ChokeType
from necflow.config.schema import ChokeSpec

#: Relative slack at the ends of measured points: a frequency this close to
#: the first or last point counts as inside (rounding of unit conversion).
_EDGE_SLACK = 1e-9


def _per_variant(x) -> np.ndarray:
    """A number or an array of variant axes, with a frequency axis appended."""
    return np.asarray(x, dtype=float)[..., None]


def parallel_rlc_impedance(f, r, l, c) -> np.ndarray:
    """Impedance of a resistance, an inductance and a capacitance in parallel.

    Parameters
    ----------
    f : array_like
        Frequency [Hz], ``(nfreq,)``; positive.
    r : float or array_like
        Parallel resistance [ohm]; per variant as an array of the variant
        axes (``(nvar,)`` for one axis).
    l : float or array_like
        Parallel inductance [H], as ``r``.
    c : float or array_like
        Parallel capacitance [F], as ``r``.

    Returns
    -------
    ndarray
        ``Z = 1 / (1/R + 1/(j w L) + j w C)`` [ohm], complex, ``(nfreq,)``
        for scalars, ``(..., nfreq)`` for per-variant arguments.

    Notes
    -----
    At resonance, ``f0 = 1 / (2 pi sqrt(L C))``, the reactive admittances
    cancel and ``Z = R``; below it the inductance dominates (``X > 0``),
    above it the capacitance (``X < 0``).  The quality factor is
    ``Q = R sqrt(C / L) = R / (w0 L)``.

    References
    ----------
    .. [1] From memory of D. M. Pozar, *Microwave Engineering*, 4th ed.,
       Wiley 2012, sec. 6.1 (series and parallel resonant circuits).
    """
    w = 2.0 * math.pi * np.atleast_1d(np.asarray(f, dtype=float))
    y = 1.0 / _per_variant(r) + 1.0 / (1j * w * _per_variant(l)) + 1j * w * _per_variant(c)
    return 1.0 / y


def interpolated_impedance(f, freqs, r, x) -> np.ndarray:
    """Impedance between measured points, linear in the logarithm of frequency.

    Parameters
    ----------
    f : array_like
        Frequency [Hz], ``(nfreq,)``; within the points' span.
    freqs : array_like
        Frequencies of the points [Hz], ``(npts,)``, at least two, distinct
        (any order).
    r, x : array_like
        Resistance and reactance at those points [ohm], ``(npts,)``.

    Returns
    -------
    ndarray
        ``R(f) + j X(f)`` [ohm], ``(nfreq,)``: R and X each interpolated
        linearly in ``log f`` between the neighbouring points.

    Raises
    ------
    ValueError
        For fewer than two points, repeated frequencies, or a frequency
        outside the points' span.  Measured points say nothing outside their
        span: a ferrite choke's impedance falls on both sides of its
        resistive region, so holding the end values would overstate it.

    Notes
    -----
    Linear in ``log f`` suits points spaced by frequency ratios (1.8, 3.5,
    7, 14, 28 MHz), as choke measurements usually are.  Between points it is
    an approximation; give points closer together than the choke's features
    (two or three per octave near a sharp resonance).

    References
    ----------
    .. [1] Common practice: choke impedance tables are read on a logarithmic
       frequency axis.
    """
    f = np.atleast_1d(np.asarray(f, dtype=float))
    fp = np.asarray(freqs, dtype=float).ravel()
    rp = np.asarray(r, dtype=float).ravel()
    xp = np.asarray(x, dtype=float).ravel()
    if fp.size < 2 or fp.shape != rp.shape or fp.shape != xp.shape:
        raise ValueError("choke points need at least two (frequency, R, X) points")
    order = np.argsort(fp)
    fp, rp, xp = fp[order], rp[order], xp[order]
    if np.any(fp <= 0) or np.any(np.diff(fp) <= 0):
        raise ValueError("choke points need positive, distinct frequencies")
    lo, hi = fp[0] * (1.0 - _EDGE_SLACK), fp[-1] * (1.0 + _EDGE_SLACK)
    outside = (f < lo) | (f > hi)
    if np.any(outside):
        bad = f[outside]
        raise ValueError(f"choke impedance asked at {bad.min() / 1e6:.6g}"
                         f"{'' if bad.size == 1 else f'-{bad.max() / 1e6:.6g}'} MHz, outside "
                         f"its measured points ({fp[0] / 1e6:.6g}-{fp[-1] / 1e6:.6g} MHz)")
    lf, lfp = np.log(np.clip(f, fp[0], fp[-1])), np.log(fp)
    return np.interp(lf, lfp, rp) + 1j * np.interp(lf, lfp, xp)


def choke_impedance(f, spec) -> np.ndarray:
    """Common-mode impedance of a choke, ``Z_cm(f) = R + jX`` [ohm].

    Parameters
    ----------
    f : array_like
        Frequency [Hz], ``(nfreq,)``.
    spec : ChokeSpec, ChokeType or str
        A design's choke (``catalog``, ``points`` or ``parallel``), a catalog
        entry, or a catalog name.

    Returns
    -------
    ndarray
        Complex impedance [ohm], ``(nfreq,)``.

    Raises
    ------
    KeyError
        For a catalog name that does not exist.
    ValueError
        For measured points that do not span ``f`` (see
        :func:`interpolated_impedance`), or a spec of another type.

    References
    ----------
    .. [1] From memory of D. M. Pozar, *Microwave Engineering*, 4th ed.,
       Wiley 2012, sec. 6.1 (parallel resonant circuit), for the catalog
       chokes and ``parallel``.
    """
    if isinstance(spec, str):
        spec = CHOKE_TYPES[spec]
    if isinstance(spec, ChokeType):
        return parallel_rlc_impedance(f, spec.r, spec.l, spec.c)
    if not isinstance(spec, ChokeSpec):
        raise ValueError(f"not a choke: {type(spec).__name__}")
    if spec.catalog is not None:
        return choke_impedance(f, CHOKE_TYPES[spec.catalog])
    if spec.parallel is not None:
        p = spec.parallel
        return parallel_rlc_impedance(f, p.r, p.l, p.c)
    pts = spec.points or []
    return interpolated_impedance(f, [p.frequency for p in pts], [p.r for p in pts],
                                  [p.x for p in pts])
