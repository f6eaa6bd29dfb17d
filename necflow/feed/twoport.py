"""ABCD two-port helpers, broadcast over frequency and over variants.

Convention: every two-port is a complex array shaped ``(nfreq, 2, 2)``, or
``(..., nfreq, 2, 2)`` for a batch of variants (leading axes, broadcast
like numpy arrays); port 1 faces the radio, port 2 the antenna; RMS phasors
with ``V1 = A V2 + B I2``, ``I1 = C V2 + D I2`` and ``I2`` flowing out of
port 2 toward the antenna.  A chain listed from the antenna toward the radio
cascades as ``M_radio_side @ ... @ M_antenna_side``.

References
----------
.. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 4.4
   (ABCD matrix, cascade, table 4.1 of canonical two-ports).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np


def identity(nfreq) -> np.ndarray:
    """The through connection, shaped ``(nfreq, 2, 2)`` (``nfreq`` an int),
    or ``shape + (2, 2)`` for a tuple ``shape``."""
    shape = (nfreq,) if np.ndim(nfreq) == 0 else tuple(nfreq)
    out = np.zeros(shape + (2, 2), dtype=complex)
    out[..., 0, 0] = 1.0
    out[..., 1, 1] = 1.0
    return out


def series_impedance(z) -> np.ndarray:
    """ABCD of an impedance ``z`` [ohm] in series: ``[[1, Z], [0, 1]]``.

    ``z`` is ``(nfreq,)`` or ``(..., nfreq)``; the result is ``z.shape + (2, 2)``.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., table 4.1.
    """
    z = np.atleast_1d(np.asarray(z, dtype=complex))
    out = identity(z.shape)
    out[..., 0, 1] = z
    return out


def shunt_admittance(y) -> np.ndarray:
    """ABCD of an admittance ``y`` [S] across the line: ``[[1, 0], [Y, 1]]``.

    ``y`` is ``(nfreq,)`` or ``(..., nfreq)``; the result is ``y.shape + (2, 2)``.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., table 4.1.
    """
    y = np.atleast_1d(np.asarray(y, dtype=complex))
    out = identity(y.shape)
    out[..., 1, 0] = y
    return out


def cascade(antenna_to_radio: Sequence[np.ndarray], nfreq: int | None = None) -> np.ndarray:
    """Cascade two-ports listed from the antenna toward the radio.

    Parameters
    ----------
    antenna_to_radio : sequence of ndarray
        ABCD arrays ``(nfreq, 2, 2)`` or ``(..., nfreq, 2, 2)``, the first at
        the antenna; leading variant axes broadcast.
    nfreq : int, optional
        Number of frequencies, needed only when the sequence is empty.

    Returns
    -------
    ndarray
        ``M_last @ ... @ M_first``, shaped ``(..., nfreq, 2, 2)``.
    """
    if not antenna_to_radio:
        if nfreq is None:
            raise ValueError("an empty cascade needs nfreq")
        return identity(nfreq)
    total = np.array(antenna_to_radio[0], dtype=complex)
    for m in antenna_to_radio[1:]:
        total = m @ total
    return total


def input_impedance(abcd: np.ndarray, z_load) -> np.ndarray:
    """Impedance at port 1 with port 2 loaded by ``z_load``.

    ``Zin = (A ZL + B) / (C ZL + D)``; an infinite ``z_load`` (open) gives
    ``A / C``.

    Parameters
    ----------
    abcd : ndarray
        ``(nfreq, 2, 2)`` or ``(..., nfreq, 2, 2)``.
    z_load : array_like
        Load impedance [ohm], scalar, ``(nfreq,)`` or broadcast against
        ``abcd.shape[:-2]``.

    Returns
    -------
    ndarray
        ``abcd.shape[:-2]`` complex [ohm].
    """
    zl = np.broadcast_to(np.asarray(z_load, dtype=complex), abcd.shape[:-2])
    a, b, c, d = abcd[..., 0, 0], abcd[..., 0, 1], abcd[..., 1, 0], abcd[..., 1, 1]
    with np.errstate(invalid="ignore", divide="ignore"):
        out = (a * zl + b) / (c * zl + d)
    is_open = np.isinf(zl)
    if np.any(is_open):
        out = np.where(is_open, a / c, out)
    return out


def step_forward(abcd: np.ndarray, v1, i1) -> tuple[np.ndarray, np.ndarray]:
    """Port-2 voltage and current from port-1 ones (inverse ABCD step).

    Solves ``[V1, I1] = M [V2, I2]`` for ``V2, I2`` at every frequency.

    Parameters
    ----------
    abcd : ndarray
        ``(..., nfreq, 2, 2)``.
    v1, i1 : ndarray
        Port-1 voltage [V] and current [A], ``(..., nfreq)``.

    Returns
    -------
    v2, i2 : ndarray
        Port-2 voltage [V] and current into the next element [A].
    """
    v1, i1 = np.broadcast_arrays(np.asarray(v1, dtype=complex), np.asarray(i1, dtype=complex))
    shape = np.broadcast_shapes(abcd.shape[:-2], v1.shape)
    rhs = np.stack([np.broadcast_to(v1, shape), np.broadcast_to(i1, shape)], axis=-1)[..., None]
    out = np.linalg.solve(np.broadcast_to(abcd, shape + (2, 2)), rhs)[..., 0]
    return out[..., 0], out[..., 1]


def apply(abcd: np.ndarray, v2, i2) -> tuple[np.ndarray, np.ndarray]:
    """Port-1 voltage and current from port-2 ones: ``[V1, I1] = M [V2, I2]``.

    ``abcd`` is ``(..., nfreq, 2, 2)``, ``v2`` and ``i2`` broadcast against
    ``abcd.shape[:-2]``; leading variant axes broadcast.
    """
    v2 = np.asarray(v2, dtype=complex)
    i2 = np.asarray(i2, dtype=complex)
    return (abcd[..., 0, 0] * v2 + abcd[..., 0, 1] * i2,
            abcd[..., 1, 0] * v2 + abcd[..., 1, 1] * i2)
