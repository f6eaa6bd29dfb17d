"""A matching unit (antenna tuner) as a lossy L-network.

For each frequency the four L-networks that match a load to the source
resistance (shunt element at the load or at the source, each with two
signs) are designed lossless in closed form, then each is corrected so that
it matches exactly with its lossy parts (inductor and capacitor ESR from
their unloaded Q), and the one with the least loss is kept: the topology is
chosen per frequency, as an automatic tuner would.  A load whose SWR
against the source resistance exceeds the unit's matching range cannot be
matched: the unit is then a through connection and says so.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from necflow.analysis.metrics import reflection_coefficient, swr
from necflow.feed import twoport

#: Newton steps of the lossy correction (quadratic convergence from the
#: lossless design; 8 reach rounding for Q above about 5).
_NEWTON_STEPS = 8


def lossless_l_networks(z_load, r_source: float) -> tuple[np.ndarray, np.ndarray]:
    """Series reactance and shunt susceptance of the four lossless L-networks.

    Solutions 0, 1 put the shunt susceptance at the load (the series
    reactance toward the source; possible when ``R_L^2 + X_L^2 > R0 R_L``),
    solutions 2, 3 put the series reactance at the load (possible when
    ``R_L < R0``).  Impossible ones are NaN.

    Parameters
    ----------
    z_load : array_like
        Load impedance [ohm], ``(nfreq,)``.
    r_source : float
        Resistance to match to [ohm].

    Returns
    -------
    x, b : ndarray
        ``(nfreq, 4)`` series reactance [ohm] and shunt susceptance [S].

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 5.1
       (lumped-element L-network matching, eqs. 5.3a/b and 5.6a/b).
    """
    zl = np.atleast_1d(np.asarray(z_load, dtype=complex))
    r, xl, z0 = zl.real, zl.imag, float(r_source)
    m2 = r * r + xl * xl
    x = np.full((zl.size, 4), np.nan)
    b = np.full((zl.size, 4), np.nan)
    with np.errstate(invalid="ignore", divide="ignore"):
        root = np.sqrt(r / z0) * np.sqrt(m2 - z0 * r)
        ok = (m2 - z0 * r > 0) & (r > 0)
        for j, s in enumerate((1.0, -1.0)):
            bb = (xl + s * root) / m2
            xx = 1.0 / bb + xl * z0 / r - z0 / (bb * r)
            b[:, j] = np.where(ok, bb, np.nan)
            x[:, j] = np.where(ok, xx, np.nan)
        ok2 = (r < z0) & (r > 0)
        root2 = np.sqrt(r * (z0 - r))
        for j, s in enumerate((1.0, -1.0)):
            x[:, 2 + j] = np.where(ok2, s * root2 - xl, np.nan)
            b[:, 2 + j] = np.where(ok2, s * np.sqrt((z0 - r) / r) / z0, np.nan)
    return x, b


def _lossy(x, b, q_l: float, q_c: float) -> tuple[np.ndarray, np.ndarray]:
    """Series impedance and shunt admittance of lossy parts of reactance x
    and susceptance b (inductor when x > 0 or b < 0)."""
    zs = np.abs(x) / np.where(x > 0, q_l, q_c) + 1j * x
    xsh = -1.0 / b
    zsh = np.abs(xsh) / np.where(xsh > 0, q_l, q_c) + 1j * xsh
    return zs, 1.0 / zsh


def _abcd(x, b, shunt_at_load: bool, q_l: float, q_c: float) -> np.ndarray:
    zs, ysh = _lossy(x, b, q_l, q_c)
    s, p = twoport.series_impedance(zs), twoport.shunt_admittance(ysh)
    return s @ p if shunt_at_load else p @ s


def _z_in(x, b, shunt_at_load, zl, q_l, q_c):
    return twoport.input_impedance(_abcd(x, b, shunt_at_load, q_l, q_c), zl)


def _correct(x, b, shunt_at_load, zl, r0, q_l, q_c):
    """Newton steps on (x, b) so that the lossy network presents exactly r0."""
    for _ in range(_NEWTON_STEPS):
        e = _z_in(x, b, shunt_at_load, zl, q_l, q_c) - r0
        hx = 1e-7 * np.maximum(np.abs(x), 1e-3)
        hb = 1e-7 * np.maximum(np.abs(b), 1e-9)
        dx = (_z_in(x + hx, b, shunt_at_load, zl, q_l, q_c) - r0 - e) / hx
        db = (_z_in(x, b + hb, shunt_at_load, zl, q_l, q_c) - r0 - e) / hb
        det = dx.real * db.imag - db.real * dx.imag
        with np.errstate(invalid="ignore", divide="ignore"):
            sx = (e.real * db.imag - db.real * e.imag) / det
            sb = (dx.real * e.imag - e.real * dx.imag) / det
        x, b = x - sx, b - sb
    return x, b


def network_loss_db(abcd: np.ndarray, z_load) -> np.ndarray:
    """Power into a two-port over power out of it into ``z_load`` [dB]."""
    zl = np.asarray(z_load, dtype=complex)
    v1, i1 = twoport.apply(abcd, zl, np.ones_like(zl))
    with np.errstate(divide="ignore", invalid="ignore"):
        return 10.0 * np.log10((v1 * i1.conj()).real / zl.real)


@dataclass(frozen=True)
class MatchingUnit:
    """A lossy L-network tuned to one load at each frequency.

    Usable as a feed-chain element (``kind='matching'``): its ABCD is fixed
    for the frequencies it was tuned at.

    Attributes
    ----------
    id : str
    f : ndarray
        Frequencies it was tuned at [Hz].
    matrices : ndarray
        ``(nfreq, 2, 2)`` ABCD, port 1 toward the source.
    can_match : ndarray of bool
        False where the load is outside the matching range (the unit is
        then a through connection).
    topology : ndarray of str
        'shunt at load' or 'series at load' ('' where it cannot match).
    inductance_h, capacitance_f : ndarray
        Values of the inductor [H] and capacitor [F] used (NaN if none).
    loss_db : ndarray
        Its own loss, input over output power [dB].
    """

    id: str
    f: np.ndarray
    matrices: np.ndarray
    can_match: np.ndarray
    topology: np.ndarray
    inductance_h: np.ndarray
    capacitance_f: np.ndarray
    loss_db: np.ndarray
    kind: str = field(default="matching", init=False)

    @property
    def metadata(self) -> dict:
        return {"matching_unit": "lossy L-network"}

    def abcd(self, f) -> np.ndarray:
        f = np.atleast_1d(np.asarray(f, dtype=float))
        if f.shape != self.f.shape or not np.allclose(f, self.f, rtol=1e-12):
            raise ValueError(f"matching unit '{self.id}' was tuned at other frequencies")
        return self.matrices


def tune_l_network(f, z_load, r_source: float = 50.0, *, q_inductor: float = 100.0,
                   q_capacitor: float = 1000.0, max_swr: float = 10.0,
                   id: str = "matching unit") -> MatchingUnit:
    """Tune a lossy L-network to match ``z_load`` to ``r_source``.

    Parameters
    ----------
    f : array_like
        Frequency [Hz], ``(nfreq,)``.
    z_load : array_like
        Impedance at the unit's output [ohm], ``(nfreq,)``.
    r_source : float
        Resistance the unit presents to its source when matched [ohm].
    q_inductor, q_capacitor : float
        Unloaded Q of the inductor and the capacitor.
    max_swr : float
        Matching range: the highest load SWR (against ``r_source``) the unit
        can match.
    id : str
        Element id in a chain.

    Returns
    -------
    MatchingUnit

    Notes
    -----
    With a lossless capacitor and an inductor of unloaded Q ``Q_U`` the loss
    is close to ``10 log10(1 + Q_L / Q_U)``, ``Q_L = sqrt(R_high / R_low - 1)``
    (the tests check this); the exact figure here comes from the power flow
    through the lossy parts.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 5.1.
    """
    f = np.atleast_1d(np.asarray(f, dtype=float))
    zl = np.broadcast_to(np.asarray(z_load, dtype=complex), f.shape).copy()
    r0 = float(r_source)
    x0, b0 = lossless_l_networks(zl, r0)
    with np.errstate(all="ignore"):
        return _tune(f, zl, r0, x0, b0, q_inductor, q_capacitor, max_swr, id)


def _tune(f, zl, r0, x0, b0, q_inductor, q_capacitor, max_swr, id) -> MatchingUnit:
    losses = np.full((f.size, 4), np.inf)
    xs, bs = np.empty_like(x0), np.empty_like(b0)
    for j in range(4):
        at_load = j < 2
        ok = np.isfinite(x0[:, j]) & np.isfinite(b0[:, j]) & (b0[:, j] != 0)
        x = np.where(ok, x0[:, j], 1.0)
        b = np.where(ok, b0[:, j], 1e-3)
        x, b = _correct(x, b, at_load, zl, r0, q_inductor, q_capacitor)
        err = np.abs(_z_in(x, b, at_load, zl, q_inductor, q_capacitor) - r0) / r0
        good = ok & np.isfinite(err) & (err < 1e-6)
        loss = network_loss_db(_abcd(x, b, at_load, q_inductor, q_capacitor), zl)
        losses[:, j] = np.where(good & np.isfinite(loss), loss, np.inf)
        xs[:, j], bs[:, j] = x, b
    best = np.argmin(losses, axis=1)
    rows = np.arange(f.size)
    load_swr = np.asarray(swr(reflection_coefficient(zl, r0)))
    matched = load_swr <= 1.0 + 1e-9           # nothing to do: a through connection
    can = (load_swr <= max_swr) & (np.isfinite(losses[rows, best]) | matched)
    losses[matched, best[matched]] = 0.0
    x, b = xs[rows, best], bs[rows, best]
    at_load = best < 2
    mats = np.where(at_load[:, None, None], _abcd(x, b, True, q_inductor, q_capacitor),
                    _abcd(x, b, False, q_inductor, q_capacitor))
    mats = np.where((can & ~matched)[:, None, None], mats, twoport.identity(f.size))
    w = 2.0 * math.pi * f
    x_sh = -1.0 / b
    ind = np.where(x > 0, x / w, np.where(x_sh > 0, x_sh / w, np.nan))
    cap = np.where(x < 0, -1.0 / (w * x), np.where(x_sh < 0, -1.0 / (w * x_sh), np.nan))
    topo = np.where(matched, "through", np.where(at_load, "shunt at load", "series at load"))
    return MatchingUnit(
        id=id, f=f, matrices=mats, can_match=can, topology=np.where(can, topo, ""),
        inductance_h=np.where(can & ~matched, ind, np.nan),
        capacitance_f=np.where(can & ~matched, cap, np.nan),
        loss_db=np.where(can, losses[rows, best], 0.0))
