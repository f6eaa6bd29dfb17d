"""A matching unit (antenna tuner) as a lossy L-network of one coil and one capacitor.

A buildable L-network holds one inductor and one capacitor: low-pass (series
inductor, shunt capacitor) or high-pass (series capacitor, shunt inductor),
each with its shunt part at the load or at the source -- four topologies.
For each topology the part kinds fix where each part's loss goes (ESR =
reactance / unloaded Q), and the network that presents exactly the source
resistance follows from a quadratic equation (:func:`lossy_l_networks`);
roots whose parts come out of the wrong kind are dropped.  Of the networks
left, the one with the least loss is kept at each frequency, as an automatic
tuner would choose.  A load whose SWR against the source resistance exceeds
the unit's matching range, or that no such network matches, cannot be
matched: the unit is then a through connection and says so.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from necflow.feed import twoport
from necflow.feed.metrics import reflection_coefficient, swr

#: Topology names, by (low-pass?, shunt at load?).
TOPOLOGIES = {
    (True, True): "low-pass, shunt at load",
    (True, False): "low-pass, shunt at source",
    (False, True): "high-pass, shunt at load",
    (False, False): "high-pass, shunt at source",
}
#: Order of the topologies on the candidate axis of :func:`lossy_l_networks`.
TOPOLOGY_ORDER = ((True, True), (False, True), (True, False), (False, False))
#: Newton steps that polish the closed-form roots to rounding.
_POLISH_STEPS = 2
#: Relative mismatch below which a network counts as matching.
_MATCH_TOL = 1e-9


def lossless_l_networks(z_load, r_source: float) -> tuple[np.ndarray, np.ndarray]:
    """Series reactance and shunt susceptance of the four lossless L-networks.

    Solutions 0, 1 put the shunt susceptance at the load (the series
    reactance toward the source; possible when ``R_L^2 + X_L^2 > R0 R_L``,
    i.e. load conductance below ``1/R0``),
    solutions 2, 3 put the series reactance at the load (possible when
    ``R_L < R0``).  Impossible ones are NaN.  Solution 0 always has a
    positive (inductive) series reactance and solution 1 a negative one;
    solution 2 always has a positive (capacitive) shunt susceptance and
    solution 3 a negative one.  Whether the other part is of the other kind
    (a buildable one-coil-one-capacitor network) depends on the load.

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
    x = np.full((zl.size, 4), np.nan)
    b = np.full((zl.size, 4), np.nan)
    with np.errstate(invalid="ignore", divide="ignore"):
        # Shunt at the load, in admittance form (the same solutions as
        # Pozar's eqs. 5.3a/b, written without 1/B so that a zero shunt
        # part stays finite): with Y_L = G + jB, the shunt part makes the
        # admittance G + jt with Re 1/(G + jt) = R0, t = +-sqrt(G/R0 - G^2),
        # and the series part cancels the rest: x = R0 t / G.
        yl = 1.0 / zl
        g, bl = yl.real, yl.imag
        ok = (g < 1.0 / z0) & (r > 0)
        root = np.sqrt(g / z0 - g * g)
        for j, s in enumerate((1.0, -1.0)):
            b[:, j] = np.where(ok, s * root - bl, np.nan)
            x[:, j] = np.where(ok, z0 * s * root / g, np.nan)
        ok2 = (r < z0) & (r > 0)
        root2 = np.sqrt(r * (z0 - r))
        for j, s in enumerate((1.0, -1.0)):
            x[:, 2 + j] = np.where(ok2, s * root2 - xl, np.nan)
            b[:, 2 + j] = np.where(ok2, s * np.sqrt((z0 - r) / r) / z0, np.nan)
    return x, b


def _factors(low, q_l: float, q_c: float):
    """Series factor ``c`` and shunt factor ``k`` of a topology's lossy parts.

    The series part of reactance x has impedance ``x c``, ``c = j + a``,
    ``a = 1/Q_L`` for an inductor (x > 0, ESR = X/Q_L) and ``a = -1/Q_C``
    for a capacitor (x < 0, ESR = |X|/Q_C).  The shunt part whose lossless
    susceptance is b has reactance ``X = -1/b`` and impedance
    ``|X|/Q + jX``, so its admittance is ``b k``,
    ``k = (j + beta) / (1 + beta^2)``, ``beta = 1/Q_C`` for a capacitor
    (b > 0) and ``-1/Q_L`` for an inductor (b < 0).
    """
    low = np.asarray(low, dtype=bool)
    a = np.where(low, 1.0 / q_l, -1.0 / q_c)
    beta = np.where(low, 1.0 / q_c, -1.0 / q_l)
    return a + 1j, (1j + beta) / (1.0 + beta * beta)


def _roots(qa, qb, qc):
    """Both real roots of ``qa t^2 + qb t + qc = 0`` (``qa > 0``), NaN when
    complex; the cancellation-free form."""
    d = qb * qb - 4.0 * qa * qc
    with np.errstate(invalid="ignore", divide="ignore"):
        q = -0.5 * (qb + np.copysign(np.sqrt(d), qb))
        return np.where(d >= 0, q / qa, np.nan), np.where(d >= 0, qc / q, np.nan)


def lossy_l_networks(z_load, r_source: float, q_inductor: float,
                     q_capacitor: float) -> tuple[np.ndarray, np.ndarray]:
    """The L-networks of one lossy inductor and one lossy capacitor that
    present exactly ``r_source``.

    Parameters
    ----------
    z_load : array_like
        Load impedance [ohm], ``(nfreq,)``.
    r_source : float
        Resistance to match to [ohm].
    q_inductor, q_capacitor : float
        Unloaded Q of the inductor and the capacitor (ESR = reactance / Q).

    Returns
    -------
    x, b : ndarray
        ``(nfreq, 4, 2)``: topology (in :data:`TOPOLOGY_ORDER`) by root.
        ``x`` is the series part's reactance [ohm] (inductor when > 0,
        capacitor when < 0), ``b`` the shunt part's susceptance without its
        loss, ``-1/X`` [S] (capacitor when > 0, inductor when < 0).  A root
        that is complex or whose parts are not of the topology's kinds is
        NaN.

    Notes
    -----
    With the factors ``c``, ``k`` of :func:`_factors` (``a = Re c``,
    ``beta = Re k / Im k``):

    * shunt at the load: ``Z_in = x c + 1/Y``, ``Y = Y_L + b k``.  The
      imaginary part vanishes when ``x = -Im(1/Y)``, and then
      ``Re((1 + j a)/Y) = R0``: a quadratic in b,
      ``R0 |k|^2 b^2 + (2 R0 Re(Y_L k*) - Re((1 + j a) k*)) b
      + R0 |Y_L|^2 - Re((1 + j a) Y_L*) = 0``;
    * shunt at the source: ``Y_in = 1/Z' + b k``, ``Z' = Z_L + x c``.  The
      imaginary part vanishes when ``b = -Im(1/Z') / Im k``, and then
      ``Re((1 + j beta)/Z') = 1/R0``: a quadratic in x,
      ``|c|^2 x^2 + (2 Re(Z_L c*) - R0 Re((1 + j beta) c*)) x
      + |Z_L|^2 - R0 Re((1 + j beta) Z_L*) = 0``.

    With lossless parts (``a = beta = 0``) the roots are those of
    :func:`lossless_l_networks`.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 5.1
       (lumped-element L-network matching; the lossless case).
    """
    zl = np.atleast_1d(np.asarray(z_load, dtype=complex))[:, None]
    r0 = float(r_source)
    low = np.array([t[0] for t in TOPOLOGY_ORDER])
    at_load = np.array([t[1] for t in TOPOLOGY_ORDER])
    c, k = _factors(low, q_inductor, q_capacitor)
    x = np.full((zl.shape[0], 4, 2), np.nan)
    b = np.full((zl.shape[0], 4, 2), np.nan)
    with np.errstate(invalid="ignore", divide="ignore"):
        # shunt at the load: quadratic in b
        yl = 1.0 / zl
        u = (1.0 + 1j * c.real) * np.ones_like(zl)
        bb = _roots(r0 * abs(k) ** 2 * np.ones_like(zl.real),
                    2.0 * r0 * (yl * k.conj()).real - (u * k.conj()).real,
                    r0 * abs(yl) ** 2 - (u * yl.conj()).real)
        # shunt at the source: quadratic in x
        v = (1.0 + 1j * k.real / k.imag) * np.ones_like(zl)
        xx = _roots(abs(c) ** 2 * np.ones_like(zl.real),
                    2.0 * (zl * c.conj()).real - r0 * (v * c.conj()).real,
                    abs(zl) ** 2 - r0 * (v * zl.conj()).real)
        for i in range(2):
            x_a = -(1.0 / (yl + bb[i] * k)).imag
            b_s = -(1.0 / (zl + xx[i] * c)).imag / k.imag
            x[:, :, i] = np.where(at_load, x_a, xx[i])
            b[:, :, i] = np.where(at_load, bb[i], b_s)
        sgn = np.where(low, 1.0, -1.0)[None, :, None]
        kinds = (sgn * x > 0) & (sgn * b > 0) & (zl.real[:, :, None] > 0)
    return np.where(kinds, x, np.nan), np.where(kinds, b, np.nan)


def _abcd(x, b, low, shunt_at_load, q_l: float, q_c: float) -> np.ndarray:
    """ABCD ``(n, 2, 2)`` of lossy L-networks given as ``(n,)`` arrays."""
    c, k = _factors(low, q_l, q_c)
    s, p = twoport.series_impedance(x * c), twoport.shunt_admittance(b * k)
    return np.where(np.asarray(shunt_at_load, dtype=bool)[:, None, None], s @ p, p @ s)


def _z_in(x, b, low, shunt_at_load, zl, q_l, q_c):
    """Input impedance and its derivatives with respect to x and b."""
    c, k = _factors(low, q_l, q_c)
    # shunt at the load: Z = x c + 1/(Y_L + b k)
    y = 1.0 / zl + b * k
    z_a = x * c + 1.0 / y
    # shunt at the source: Z = 1/(b k + 1/(Z_L + x c))
    zt = zl + x * c
    z_b = 1.0 / (b * k + 1.0 / zt)
    return (np.where(shunt_at_load, z_a, z_b),
            np.where(shunt_at_load, c, c * (z_b / zt) ** 2),
            np.where(shunt_at_load, -k / (y * y), -k * z_b * z_b))


def _polish(x, b, low, shunt_at_load, zl, r0, q_l, q_c):
    """Newton steps on (x, b) toward ``Z_in = r0`` (exact derivatives)."""
    for _ in range(_POLISH_STEPS):
        z, dx, db = _z_in(x, b, low, shunt_at_load, zl, q_l, q_c)
        e = z - r0
        det = dx.real * db.imag - db.real * dx.imag
        x = x - (e.real * db.imag - db.real * e.imag) / det
        b = b - (dx.real * e.imag - e.real * dx.imag) / det
    return x, b


def network_loss_db(abcd: np.ndarray, z_load) -> np.ndarray:
    """Power into a two-port over power out of it into ``z_load`` [dB]."""
    zl = np.asarray(z_load, dtype=complex)
    v1, i1 = twoport.apply(abcd, zl, np.ones_like(zl))
    with np.errstate(divide="ignore", invalid="ignore"):
        return 10.0 * np.log10((v1 * i1.conj()).real / zl.real)


@dataclass(frozen=True)
class MatchingUnit:
    """A lossy L-network of one inductor and one capacitor, tuned to one load
    at each frequency.

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
        False where the load is outside the matching range or no
        one-coil-one-capacitor network matches it (the unit is then a
        through connection).
    topology : ndarray of str
        One of :data:`TOPOLOGIES` ('low-pass, shunt at load', ...),
        'through' for a load already matched, '' where it cannot match.
    inductance_h, capacitance_f : ndarray
        Values of the inductor [H] and the capacitor [F] (both finite where
        it matches; NaN where it cannot match or is a through connection).
    loss_db : ndarray
        Its own loss, input over output power [dB].
    series_part : ndarray of str
        'inductor' (low-pass) or 'capacitor' (high-pass): the part in
        series; the other is the shunt part ('' where no network is used).
    shunt_at_load : ndarray of bool
        True where the shunt part is at the load side.
    """

    id: str
    f: np.ndarray
    matrices: np.ndarray
    can_match: np.ndarray
    topology: np.ndarray
    inductance_h: np.ndarray
    capacitance_f: np.ndarray
    loss_db: np.ndarray
    series_part: np.ndarray
    shunt_at_load: np.ndarray
    kind: str = field(default="matching", init=False)

    @property
    def metadata(self) -> dict:
        return {"matching_unit": "lossy L-network, one inductor and one capacitor"}

    def abcd(self, f) -> np.ndarray:
        f = np.atleast_1d(np.asarray(f, dtype=float))
        if f.shape != self.f.shape or not np.allclose(f, self.f, rtol=1e-12):
            raise ValueError(f"matching unit '{self.id}' was tuned at other frequencies")
        return self.matrices


def tune_l_network(f, z_load, r_source: float = 50.0, *, q_inductor: float = 100.0,
                   q_capacitor: float = 1000.0, max_swr: float = 10.0,
                   id: str = "matching unit") -> MatchingUnit:
    """Tune a lossy L-network of one inductor and one capacitor to match
    ``z_load`` to ``r_source``.

    Parameters
    ----------
    f : array_like
        Frequency [Hz], ``(nfreq,)``.
    z_load : array_like
        Impedance at the unit's output [ohm], ``(nfreq,)``.
    r_source : float
        Resistance the unit presents to its source when matched [ohm].
    q_inductor, q_capacitor : float
        Unloaded Q of the inductor and the capacitor: each part's ESR is its
        reactance over its Q.
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
    The four topologies are low-pass (series L, shunt C) and high-pass
    (series C, shunt L), each with the shunt part at the load or at the
    source.  :func:`lossy_l_networks` gives every network of these that
    matches exactly with the lossy parts; the least lossy one is kept.
    Every load with positive resistance has a lossless one: if
    ``R_L < R0`` the series-at-load pair of [1]_ exists and one of its two
    signs has parts of different kinds, and otherwise ``G_L < 1/R0`` and
    the same holds for the shunt-at-load pair.  A load without resistance
    takes no power and has none; wherever no network matches, the unit
    cannot match.  Lossy parts usually still leave a network, at a loss:
    the matching range (``max_swr``) is what keeps the unit from absurd
    losses.

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
    with np.errstate(all="ignore"):
        return _tune(f, zl, float(r_source), q_inductor, q_capacitor, max_swr, id)


def _tune(f, zl, r0, q_l, q_c, max_swr, id) -> MatchingUnit:
    n, m = f.size, 2 * len(TOPOLOGY_ORDER)
    x, b = lossy_l_networks(zl, r0, q_l, q_c)
    # candidates flattened to (n * m,): topology-major, then root
    x, b = x.reshape(-1), b.reshape(-1)
    low = np.tile(np.repeat([t[0] for t in TOPOLOGY_ORDER], 2), n)
    at_load = np.tile(np.repeat([t[1] for t in TOPOLOGY_ORDER], 2), n)
    zc = np.repeat(zl, m)
    ok = np.isfinite(x) & np.isfinite(b)
    sgn = np.where(low, 1.0, -1.0)
    x, b = _polish(np.where(ok, x, sgn * r0), np.where(ok, b, sgn / r0), low, at_load, zc,
                   r0, q_l, q_c)
    err = np.abs(_z_in(x, b, low, at_load, zc, q_l, q_c)[0] - r0) / r0
    # still of the topology's kinds and matching after the polish
    good = ok & (sgn * x > 0) & (sgn * b > 0) & (err < _MATCH_TOL)
    mats_c = _abcd(x, b, low, at_load, q_l, q_c)
    loss_c = network_loss_db(mats_c, zc)
    losses = np.where(good & np.isfinite(loss_c), loss_c, np.inf).reshape(n, m)

    best = np.argmin(losses, axis=1)
    rows = np.arange(n)
    pick = rows * m + best
    load_swr = np.asarray(swr(reflection_coefficient(zl, r0)))
    matched = load_swr <= 1.0 + 1e-9           # nothing to do: a through connection
    tuned = (load_swr <= max_swr) & np.isfinite(losses[rows, best]) & ~matched
    xb, bb, lp, lb = x[pick], b[pick], low[pick], at_load[pick]
    w = 2.0 * math.pi * f
    ind = np.where(lp, xb / w, -1.0 / (w * bb))   # low-pass: series L; high-pass: shunt L
    cap = np.where(lp, bb / w, -1.0 / (w * xb))
    names = np.array([TOPOLOGIES[t] for t in TOPOLOGY_ORDER])[best // 2]
    return MatchingUnit(
        id=id, f=f,
        matrices=np.where(tuned[:, None, None], mats_c[pick], twoport.identity(n)),
        can_match=tuned | matched,
        topology=np.where(tuned, names, np.where(matched, "through", "")),
        inductance_h=np.where(tuned, ind, np.nan),
        capacitance_f=np.where(tuned, cap, np.nan),
        loss_db=np.where(tuned, losses[rows, best], 0.0),
        series_part=np.where(tuned, np.where(lp, "inductor", "capacitor"), ""),
        shunt_at_load=tuned & lb)
