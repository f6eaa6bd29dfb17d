"""The state at the radio end of a feed chain and the power it delivers.

The feedpoint state ``(V_N, I_N) = (Z_fp, 1)`` (``(1, 0)`` for an open
feedpoint) is carried toward the radio with each element's forward ABCD,
``[V_k, I_k] = M [V_k+1, I_k+1]``; the radio, a source of available power
``P`` in a real resistance ``z_ref`` (open-circuit RMS voltage
``E = sqrt(4 P z_ref)``), fixes the one complex factor ``E / (V_0 + z_ref I_0)``
by which every node's state is multiplied.  This is the walk from the radio
with inverse ABCDs done the well-conditioned way: the feedpoint relation
``V_N = Z_fp I_N`` holds exactly, even behind parts that shunt nearly all the
current away from the antenna.

Everything broadcasts over leading variant axes: ABCD arrays
``(..., nfreq, 2, 2)``, states ``(..., nfreq)``.  Both the power flow of one
design (:func:`necflow.analysis.powerflow.analyse`, which also keeps every
node's voltage and current) and :class:`necflow.feed.batch.FeedBatch` (many
variants at once) use it.

References
----------
.. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 2.6
   (generator and load mismatches, available power ``|E|^2 / 4 R``) and
   sec. 4.4 (ABCD matrix).
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Sequence

import numpy as np

from necflow.feed import twoport


def feedpoint_state(z_feedpoint) -> tuple[np.ndarray, np.ndarray]:
    """The unscaled state at the feedpoint: ``(Z_fp, 1)``, ``(1, 0)`` where
    ``z_feedpoint`` is infinite (an open feedpoint).

    Parameters
    ----------
    z_feedpoint : array_like
        Antenna feedpoint impedance [ohm], ``(nfreq,)``.

    Returns
    -------
    v, i : ndarray
        Complex, shaped like ``z_feedpoint``.
    """
    zfp = np.asarray(z_feedpoint, dtype=complex)
    is_open = np.isinf(zfp)
    return (np.where(is_open, 1.0 + 0j, zfp),
            np.where(is_open, 0.0, 1.0).astype(complex))


def states_toward_radio(antenna_to_radio: Sequence[np.ndarray],
                        z_feedpoint) -> Iterator[tuple[np.ndarray, np.ndarray]]:
    """The unscaled state ``(V_k, I_k)`` at every node, from the feedpoint
    (node N) to the radio terminals (node 0).

    Parameters
    ----------
    antenna_to_radio : sequence of ndarray
        The elements' ABCD arrays, antenna side first, each
        ``(nfreq, 2, 2)`` or ``(..., nfreq, 2, 2)``.
    z_feedpoint : array_like
        Antenna feedpoint impedance [ohm], ``(nfreq,)``.

    Yields
    ------
    v, i : ndarray
        Voltage and current toward the antenna at node N, N-1, ..., 0
        (``N + 1`` states), broadcast over the variant axes of the elements
        passed so far.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 4.4.
    """
    v, i = feedpoint_state(z_feedpoint)
    yield v, i
    for m in antenna_to_radio:
        v, i = twoport.apply(m, v, i)
        yield v, i


def radio_impedance(v0, i0) -> np.ndarray:
    """Impedance the radio sees, ``V_0 / I_0`` [ohm] (for an open feedpoint
    this is ``A / C`` of the whole chain)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.asarray(v0) / np.asarray(i0)


def source_scale(v0, i0, z_ref: float, power_w: float) -> np.ndarray:
    """The factor ``E / (V_0 + z_ref I_0)``, ``E = sqrt(4 P z_ref)``, that
    turns the unscaled node states into RMS volts and amperes for a radio of
    available power ``power_w`` [W] and source resistance ``z_ref`` [ohm].

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 2.6.
    """
    return math.sqrt(4.0 * power_w * z_ref) / (np.asarray(v0) + z_ref * np.asarray(i0))


def delivered_fraction(v0, i0, v_n, i_n, z_ref: float) -> np.ndarray:
    """Power delivered to the feedpoint over the radio's available power [-].

    ``P_N / P = 4 z_ref Re(V_N I_N*) / |V_0 + z_ref I_0|^2`` for the unscaled
    states at the radio (node 0) and the feedpoint (node N): the scale
    factor of :func:`source_scale` squared, times ``Re(V_N I_N*)``, over
    ``P``.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 2.6
       (available power of a generator, ``|E|^2 / 4 R``).
    """
    p_n = (np.asarray(v_n) * np.conj(i_n)).real
    with np.errstate(divide="ignore", invalid="ignore"):
        return 4.0 * z_ref * p_n / np.abs(np.asarray(v0) + z_ref * np.asarray(i0)) ** 2


def total_loss_db(fraction) -> np.ndarray:
    """Total loss ``10 log10(P / P_delivered) = -10 log10(fraction)`` [dB];
    ``inf`` where nothing (or, by rounding, less than nothing) arrives, e.g.
    into a purely reactive or open feedpoint."""
    fraction = np.asarray(fraction, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = -10.0 * np.log10(fraction)
    return np.where(fraction <= 0, np.inf, out)
