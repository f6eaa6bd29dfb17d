"""Lumped capacitors, inductors and resistors, with loss from Q or ESR.

One design or a batch of variants: a part's value, Q and ESR may be arrays of
the variant axes alone (``(nvar,)`` for one axis); a frequency axis is
appended to them and the results are ``(..., nfreq)`` impedances and
``(..., nfreq, 2, 2)`` ABCD arrays.
"""

from __future__ import annotations

import math

import numpy as np

from necflow.feed import twoport

#: Unloaded Q assumed when a design gives neither Q nor ESR (common practice:
#: typical of good air-variable or mica capacitors and of air-wound coils).
DEFAULT_Q = {"capacitor": 1000.0, "inductor": 200.0}


def _per_variant(x) -> np.ndarray:
    """A number or an array of variant axes, with a frequency axis appended."""
    return np.asarray(x, dtype=float)[..., None]


def part_impedance(f, kind: str, value, q=None, esr=None) -> np.ndarray:
    """Impedance of a lumped part.

    Parameters
    ----------
    f : array_like
        Frequency [Hz], ``(nfreq,)``.
    kind : {'capacitor', 'inductor', 'resistor'}
        The part.
    value : float or array_like
        Capacitance [F], inductance [H] or resistance [ohm]; per variant as
        an array of the variant axes.
    q : float or array_like, optional
        Unloaded Q, constant over frequency: ``ESR = |X| / Q``.
    esr : float or array_like, optional
        Equivalent series resistance [ohm] (instead of Q; it takes precedence
        over ``q``).  With neither, :data:`DEFAULT_Q` applies (capacitor
        1000, inductor 200).

    Returns
    -------
    ndarray
        ``ESR + jX`` [ohm], ``(nfreq,)`` for one design, ``(..., nfreq)`` for
        per-variant arguments (variant axes broadcast).

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 6.1
       (unloaded Q of a resonator, ``Q = X / R``).
    """
    w = 2.0 * math.pi * np.atleast_1d(np.asarray(f, dtype=float))
    value = _per_variant(value)
    if kind == "resistor":
        return np.broadcast_to(value, np.broadcast_shapes(value.shape, w.shape)).astype(complex)
    if kind == "capacitor":
        x = -1.0 / (w * value)
    elif kind == "inductor":
        x = w * value
    else:
        raise ValueError(f"unknown part kind {kind!r}")
    if esr is None:
        r = np.abs(x) / _per_variant(q if q is not None else DEFAULT_Q[kind])
    else:
        r = _per_variant(esr)
    return r + 1j * x


def part_abcd(f, placement: str, kind: str, value, q=None, esr=None) -> np.ndarray:
    """ABCD of a part in series (``[[1, Z], [0, 1]]``) or across the line
    (``[[1, 0], [1/Z, 1]]``); arguments as :func:`part_impedance`.

    Returns
    -------
    ndarray
        ``(nfreq, 2, 2)``, or ``(..., nfreq, 2, 2)`` for per-variant arguments.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table 4.1.
    """
    z = part_impedance(f, kind, value, q, esr)
    if placement == "series":
        return twoport.series_impedance(z)
    if placement == "shunt":
        return twoport.shunt_admittance(1.0 / z)
    raise ValueError(f"unknown placement {placement!r}")
