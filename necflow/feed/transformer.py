"""Impedance transformers and baluns: ideal ratio plus matched loss."""

from __future__ import annotations

import math

import numpy as np


def ideal_transformer_abcd(nfreq: int, ratio: float) -> np.ndarray:
    """ABCD of an ideal transformer of impedance ratio ``ratio``.

    ``ratio`` is antenna side : radio side, so the turns ratio is
    ``N = sqrt(ratio)``, ``V2 = N V1``, ``I2 = I1 / N`` and the matrix is
    ``[[1/N, 0], [0, N]]``; a load ``ZL`` at port 2 reads ``ZL / ratio``.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table
       4.1 (ideal transformer).
    """
    n = math.sqrt(ratio)
    out = np.zeros((nfreq, 2, 2), dtype=complex)
    out[:, 0, 0] = 1.0 / n
    out[:, 1, 1] = n
    return out


def matched_attenuator_abcd(nfreq: int, loss_db: float, r0: float) -> np.ndarray:
    """ABCD of a matched resistive attenuator of loss ``loss_db`` in ``r0``.

    Equivalent to a real-impedance line of ``Zc = r0`` and ``gamma l = a``,
    ``a = loss_db / 20 log10(e)`` nepers:
    ``[[cosh a, r0 sinh a], [sinh a / r0, cosh a]]``.  Terminated in ``r0``
    it reads ``r0`` and passes ``10^(-loss_db/10)`` of the power.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table 4.1
       (line section with real ``Z0``, here with a real propagation constant).
    """
    a = loss_db * math.log(10.0) / 20.0
    out = np.empty((nfreq, 2, 2), dtype=complex)
    out[:, 0, 0] = math.cosh(a)
    out[:, 0, 1] = r0 * math.sinh(a)
    out[:, 1, 0] = math.sinh(a) / r0
    out[:, 1, 1] = math.cosh(a)
    return out


def series_loss_abcd(nfreq: int, loss_db: float, r0: float) -> np.ndarray:
    """ABCD of a series resistance that dissipates ``loss_db`` between ``r0`` ends.

    ``R = r0 (10^(loss_db/10) - 1)``: with a load ``r0`` the element takes in
    ``|I|^2 (r0 + R)`` and passes ``|I|^2 r0``, so ``P_in / P_out`` is exactly
    ``10^(loss_db/10)``.  ``[[1, R], [0, 1]]``.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table 4.1
       (series impedance).
    """
    out = np.zeros((nfreq, 2, 2), dtype=complex)
    out[:, 0, 0] = 1.0
    out[:, 1, 1] = 1.0
    out[:, 0, 1] = r0 * (10.0 ** (loss_db / 10.0) - 1.0)
    return out


#: Loss models of a transformer: where its matched loss is dissipated.
LOSS_MODELS = ("series", "pad")


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
    The result is the product ``L @ T`` of the loss element ``L``
    (:func:`series_loss_abcd` or :func:`matched_attenuator_abcd`) and the
    ideal transformer ``T = [[1/N, 0], [0, N]]``
    (:func:`ideal_transformer_abcd`), ``N = sqrt(ratio)``, written out:
    ``[[L11 / N, L12 N], [L21 / N, L22 N]]``.

    A real balun's loss depends on the load, the core and the common-mode
    current it has to choke; the two models bracket the differential-mode
    behaviour and common-mode current is not modelled.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table 4.1.
    """
    nf = np.atleast_1d(np.asarray(f)).size
    loss = np.asarray(loss_db, dtype=float)
    if loss_model == "series":
        ch, sh_r, sh_g = 1.0, r_radio * (_each(lambda v: 10.0 ** v, loss / 10.0) - 1.0), 0.0
    elif loss_model == "pad":
        a = loss * math.log(10.0) / 20.0
        ch, sh = _each(math.cosh, a), _each(math.sinh, a)
        sh_r, sh_g = r_radio * sh, sh / r_radio
    else:
        raise ValueError(f"loss_model is one of {LOSS_MODELS}, not {loss_model!r}")
    n = np.sqrt(np.asarray(ratio, dtype=float))
    inv_n = 1.0 / n
    shape = np.broadcast_shapes(np.shape(sh_r), n.shape) + (nf,)
    out = np.empty(shape + (2, 2), dtype=complex)
    out[..., 0, 0] = (ch * inv_n)[..., None]
    out[..., 0, 1] = (sh_r * n)[..., None]
    out[..., 1, 0] = (sh_g * inv_n)[..., None]
    out[..., 1, 1] = (ch * n)[..., None]
    return out
