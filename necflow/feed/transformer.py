"""Impedance transformers and baluns: ideal ratio plus matched loss.

One design or a batch of variants: ``ratio`` and ``loss_db`` may be arrays of
the variant axes alone (``(nvar,)`` for one axis); the ABCD arrays are then
``(..., nfreq, 2, 2)``.
"""

from __future__ import annotations

import math

import numpy as np


def _each(fn, x) -> np.ndarray:
    """``fn`` (a :mod:`math` function of one float) at every entry of ``x``.

    The C library's value, entry by entry: numpy's vectorised ``cosh``,
    ``sinh`` and ``power`` may differ from it in the last bit, and one design
    and each entry of a batch must give the same numbers.
    """
    x = np.asarray(x, dtype=float)
    if x.ndim == 0:
        return np.asarray(fn(float(x)))
    return np.frompyfunc(fn, 1, 1)(x).astype(float)


def _matrix(nfreq: int, a, b, c, d) -> np.ndarray:
    """``[[a, b], [c, d]]`` (entries numbers or arrays of variant axes, the
    same at every frequency) as ``(..., nfreq, 2, 2)``."""
    a, b, c, d = np.broadcast_arrays(*(np.asarray(x, dtype=complex) for x in (a, b, c, d)))
    out = np.empty(a.shape + (nfreq, 2, 2), dtype=complex)
    for (j, k), x in zip(((0, 0), (0, 1), (1, 0), (1, 1)), (a, b, c, d)):
        out[..., j, k] = x[..., None]
    return out


def ideal_transformer_abcd(nfreq: int, ratio) -> np.ndarray:
    """ABCD of an ideal transformer of impedance ratio ``ratio``.

    ``ratio`` is antenna side : radio side, so the turns ratio is
    ``N = sqrt(ratio)``, ``V2 = N V1``, ``I2 = I1 / N`` and the matrix is
    ``[[1/N, 0], [0, N]]``; a load ``ZL`` at port 2 reads ``ZL / ratio``.
    ``(nfreq, 2, 2)``, or ``(..., nfreq, 2, 2)`` for an array ``ratio`` of
    variant axes.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table
       4.1 (ideal transformer).
    """
    n = np.sqrt(np.asarray(ratio, dtype=float))
    return _matrix(nfreq, 1.0 / n, 0.0, 0.0, n)


def matched_attenuator_abcd(nfreq: int, loss_db, r0: float) -> np.ndarray:
    """ABCD of a matched resistive attenuator of loss ``loss_db`` in ``r0``.

    Equivalent to a real-impedance line of ``Zc = r0`` and ``gamma l = a``,
    ``a = loss_db / 20 log10(e)`` nepers:
    ``[[cosh a, r0 sinh a], [sinh a / r0, cosh a]]``.  Terminated in ``r0``
    it reads ``r0`` and passes ``10^(-loss_db/10)`` of the power.
    ``(nfreq, 2, 2)``, or ``(..., nfreq, 2, 2)`` for an array ``loss_db``
    of variant axes.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table 4.1
       (line section with real ``Z0``, here with a real propagation constant).
    """
    a = np.asarray(loss_db, dtype=float) * math.log(10.0) / 20.0
    ch, sh = _each(math.cosh, a), _each(math.sinh, a)
    return _matrix(nfreq, ch, r0 * sh, sh / r0, ch)


def series_loss_abcd(nfreq: int, loss_db, r0: float) -> np.ndarray:
    """ABCD of a series resistance that dissipates ``loss_db`` between ``r0`` ends.

    ``R = r0 (10^(loss_db/10) - 1)``: with a load ``r0`` the element takes in
    ``|I|^2 (r0 + R)`` and passes ``|I|^2 r0``, so ``P_in / P_out`` is exactly
    ``10^(loss_db/10)``.  ``[[1, R], [0, 1]]``; ``(nfreq, 2, 2)``, or
    ``(..., nfreq, 2, 2)`` for an array ``loss_db`` of variant axes.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table 4.1
       (series impedance).
    """
    r = r0 * (_each(lambda x: 10.0 ** x, np.asarray(loss_db, dtype=float) / 10.0) - 1.0)
    return _matrix(nfreq, 1.0, r, 0.0, 1.0)


#: Loss models of a transformer: where its matched loss is dissipated.
LOSS_MODELS = ("series", "pad")


def transformer_abcd(f, ratio, loss_db, r_radio: float,
                     loss_model: str = "series") -> np.ndarray:
    """A transformer or balun: loss element (radio side) then ideal ratio.

    Parameters
    ----------
    f : array_like
        Frequency [Hz] (the model is frequency independent).
    ratio : float or array_like
        Impedance ratio, antenna side : radio side; per variant as an array
        of the variant axes alone (``(nvar,)`` for one axis).
    loss_db : float or array_like
        Insertion loss with matched terminations [dB]; per variant as
        ``ratio``.
    r_radio : float
        Reference impedance on the radio side [ohm]; the antenna side's is
        ``ratio * r_radio``.  With those terminations the loss is exactly
        ``loss_db``.
    loss_model : {"series", "pad"}
        ``series``: the loss is winding (conductor) resistance in series, the
        differential-mode loss of a current (choke) balun or a line-wound
        transformer; it stays small into a high-impedance load.  ``pad``:
        a matched resistive attenuator, part of the loss in a shunt
        resistance as core loss of a voltage transformer; into a nearly
        reactive high-impedance load its loss grows large.

    Returns
    -------
    ndarray
        ``(nfreq, 2, 2)``, or ``(..., nfreq, 2, 2)`` with the variant axes of
        ``ratio`` and ``loss_db`` broadcast.

    Notes
    -----
    A real balun's loss depends on the load, the core and the common-mode
    current it has to choke; the two models bracket the differential-mode
    behaviour and common-mode current is not modelled.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table 4.1.
    """
    nf = np.atleast_1d(np.asarray(f)).size
    if loss_model == "series":
        loss = series_loss_abcd(1, loss_db, r_radio)
    elif loss_model == "pad":
        loss = matched_attenuator_abcd(1, loss_db, r_radio)
    else:
        raise ValueError(f"loss_model is one of {LOSS_MODELS}, not {loss_model!r}")
    # frequency independent: one product per variant, repeated over f
    return np.repeat(loss @ ideal_transformer_abcd(1, ratio), nf, axis=-3)
