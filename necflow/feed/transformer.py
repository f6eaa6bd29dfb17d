"""Impedance transformers and baluns: ideal ratio plus matched loss."""

from __future__ import annotations

import math

import numpy as np

from necflow.feed import twoport


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


def transformer_abcd(f, ratio: float, loss_db: float, r_radio: float,
                     loss_model: str = "series") -> np.ndarray:
    """A transformer or balun: loss element (radio side) then ideal ratio.

    Parameters
    ----------
    f : array_like
        Frequency [Hz] (the model is frequency independent).
    ratio : float
        Impedance ratio, antenna side : radio side.
    loss_db : float
        Insertion loss with matched terminations [dB].
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
        ``(nfreq, 2, 2)``.

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
        loss = series_loss_abcd(nf, loss_db, r_radio)
    elif loss_model == "pad":
        loss = matched_attenuator_abcd(nf, loss_db, r_radio)
    else:
        raise ValueError(f"loss_model is one of {LOSS_MODELS}, not {loss_model!r}")
    return loss @ ideal_transformer_abcd(nf, ratio)
