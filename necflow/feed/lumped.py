"""Lumped capacitors, inductors and resistors, with loss from Q or ESR."""

from __future__ import annotations

import math

import numpy as np

from necflow.feed import twoport

#: Unloaded Q assumed when a design gives neither Q nor ESR (common practice:
#: typical of good air-variable or mica capacitors and of air-wound coils).
DEFAULT_Q = {"capacitor": 1000.0, "inductor": 200.0}


def part_impedance(f, kind: str, value: float, q: float | None = None,
                   esr: float | None = None) -> np.ndarray:
    """Impedance of a lumped part.

    Parameters
    ----------
    f : array_like
        Frequency [Hz].
    kind : {'capacitor', 'inductor', 'resistor'}
        The part.
    value : float
        Capacitance [F], inductance [H] or resistance [ohm].
    q : float, optional
        Unloaded Q, constant over frequency: ``ESR = |X| / Q``.
    esr : float, optional
        Equivalent series resistance [ohm] (instead of Q).  With neither,
        :data:`DEFAULT_Q` applies (capacitor 1000, inductor 200).

    Returns
    -------
    ndarray
        ``ESR + jX`` [ohm], ``(nfreq,)``.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 6.1
       (unloaded Q of a resonator, ``Q = X / R``).
    """
    w = 2.0 * math.pi * np.atleast_1d(np.asarray(f, dtype=float))
    if kind == "resistor":
        return np.full(w.shape, complex(value))
    if kind == "capacitor":
        x = -1.0 / (w * value)
    elif kind == "inductor":
        x = w * value
    else:
        raise ValueError(f"unknown part kind {kind!r}")
    if esr is None:
        esr = np.abs(x) / (q if q is not None else DEFAULT_Q[kind])
    return esr + 1j * x


def part_abcd(f, placement: str, kind: str, value: float, q: float | None = None,
              esr: float | None = None) -> np.ndarray:
    """ABCD of a part in series (``[[1, Z], [0, 1]]``) or across the line
    (``[[1, 0], [1/Z, 1]]``).

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
