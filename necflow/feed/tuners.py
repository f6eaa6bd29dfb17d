"""Adjustable matching networks (antenna tuners) of lossy parts: physics only.

Three families, each listed from the source (port 1, the radio) to the load
(port 2, the antenna side):

* ``'high-pass T'``: series capacitor C1, shunt inductor L, series capacitor C2;
* ``'pi'``: shunt capacitor C1, series inductor L, shunt capacitor C2;
* the four L-networks of one inductor L and one capacitor C,
  ``'L, low-pass, shunt at load'`` (series L, shunt C), ``'L, low-pass, shunt
  at source'`` (shunt C, series L), ``'L, high-pass, shunt at load'`` (series
  C, shunt L) and ``'L, high-pass, shunt at source'`` (shunt L, series C).

Every part loses ``|X| / Q`` in series with its reactance; Q may follow a
power law in frequency (:class:`QLaw`).  Parts have ranges
(:class:`PartRange`): a variable capacitor between a minimum and a maximum
(never zero), a roller inductor up to its maximum, a tapped inductor with a
list of values, or a fixed value.

:func:`tune` finds, per frequency, the least-loss setting within the ranges
that matches the load exactly to the source resistance; where none exists it
takes the setting of least SWR within the ranges and accepts it when the SWR
is within a tolerance.  :func:`evaluate_setting` evaluates a setting given
by the user, and :func:`tuner_stress` gives each part's voltage, current and
dissipation at a power.

Conventions as :mod:`necflow.feed.twoport`: ABCD arrays ``(..., nfreq, 2, 2)``,
port 1 toward the source, RMS phasors.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import minimize

from necflow.errors import NecflowError
from necflow.feed import twoport
from necflow.feed.metrics import reflection_coefficient, swr

#: Slots of each topology from the source (port 1) to the load (port 2):
#: (part name, part kind, placement).
TOPOLOGIES: dict[str, tuple[tuple[str, str, str], ...]] = {
    "high-pass T": (("C1", "capacitor", "series"), ("L", "inductor", "shunt"),
                    ("C2", "capacitor", "series")),
    "pi": (("C1", "capacitor", "shunt"), ("L", "inductor", "series"),
           ("C2", "capacitor", "shunt")),
    "L, low-pass, shunt at load": (("L", "inductor", "series"), ("C", "capacitor", "shunt")),
    "L, low-pass, shunt at source": (("C", "capacitor", "shunt"), ("L", "inductor", "series")),
    "L, high-pass, shunt at load": (("C", "capacitor", "series"), ("L", "inductor", "shunt")),
    "L, high-pass, shunt at source": (("L", "inductor", "shunt"), ("C", "capacitor", "series")),
}

#: Points of the first scan of the load-side capacitor of a T or pi network,
#: and of each of the two refining scans around the best point.
_SCAN_POINTS = 257
_REFINE_POINTS = 65
_REFINE_LEVELS = 2
#: Bisection steps toward an exact tap (log scale: 60 halvings of a range of
#: at most e^14 leave under 1e-16 relative).
_BISECT_STEPS = 60
#: Relative mismatch |Z_in - R0| / R0 below which a setting counts as exact.
_EXACT_TOL = 1e-7
#: Near-match search: grid points per continuous part, starts polished, and
#: the iteration cap of each polish.
_NEAR_GRID = 33
_NEAR_STARTS = 4
_NEAR_MAXITER = 200
#: Relative slack on part ranges (rounding of the exact solution).
_RANGE_SLACK = 1e-9


# ------------------------------------------------------------------ parts

@dataclass(frozen=True)
class QLaw:
    """Unloaded Q of a part as a power law of frequency.

    ``Q(f) = q0 * (f / f_ref) ** exponent``; ``exponent = 0`` is a constant Q.

    Parameters
    ----------
    q0 : float
        Q at ``f_ref``.
    f_ref : float
        Reference frequency [Hz] (irrelevant when ``exponent`` is 0).
    exponent : float
        Power of the law.  An air-wound inductor's Q rises roughly as the
        square root of frequency at HF, its resistance following the skin
        effect (``R ~ sqrt(f)``) while its reactance grows as ``f``: exponent
        0.5 (common practice).  A capacitor's Q is usually given at one
        reference frequency; with exponent 0 it is taken as constant.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 6.1
       (unloaded Q, ``Q = X / R``) and sec. 2.7 (skin-effect surface
       resistance ``R_s = sqrt(omega mu / (2 sigma))``).
    """

    q0: float
    f_ref: float = 1.0e6
    exponent: float = 0.0

    def __post_init__(self):
        if not (math.isfinite(self.q0) and self.q0 > 0):
            raise ValueError(f"Q must be positive and finite, not {self.q0}")
        if not (math.isfinite(self.f_ref) and self.f_ref > 0):
            raise ValueError(f"reference frequency must be positive, not {self.f_ref}")
        if not math.isfinite(self.exponent):
            raise ValueError("Q exponent must be finite")

    def __call__(self, f) -> np.ndarray:
        """Q at frequencies ``f`` [Hz] (any shape)."""
        f = np.asarray(f, dtype=float)
        return self.q0 * (f / self.f_ref) ** self.exponent


def as_q_law(q) -> QLaw:
    """A :class:`QLaw` from a number (constant Q) or a :class:`QLaw`."""
    return q if isinstance(q, QLaw) else QLaw(float(q))


@dataclass(frozen=True)
class PartRange:
    """What values an adjustable part can take, and its loss.

    Attributes
    ----------
    kind : {'capacitor', 'inductor'}
    minimum, maximum : float
        Range of a continuously variable part [F or H]; for a part with
        discrete ``values`` their smallest and largest.
    values : tuple of float or None
        Discrete values (the taps of a tapped inductor, or one fixed value);
        None for a continuously variable part.
    q : QLaw
        Its unloaded Q.
    """

    kind: str
    minimum: float
    maximum: float
    values: tuple[float, ...] | None = None
    q: QLaw = field(default_factory=lambda: QLaw(100.0))

    def __post_init__(self):
        if self.kind not in ("capacitor", "inductor"):
            raise ValueError(f"part kind must be capacitor or inductor, not {self.kind!r}")
        if not (0 < self.minimum <= self.maximum and math.isfinite(self.maximum)):
            raise ValueError(f"part range must satisfy 0 < minimum <= maximum: "
                             f"{self.minimum}, {self.maximum}")

    @property
    def discrete(self) -> bool:
        return self.values is not None

    def contains(self, v) -> np.ndarray:
        """Whether values ``v`` are settings of this part (NaN: no)."""
        v = np.asarray(v, dtype=float)
        if self.values is None:
            return ((v >= self.minimum * (1 - _RANGE_SLACK))
                    & (v <= self.maximum * (1 + _RANGE_SLACK)))
        taps = np.asarray(self.values)
        return np.any(np.abs(v[..., None] / taps - 1.0) <= 1e-9, axis=-1)


def variable_capacitor(c_min: float, c_max: float, q=1000.0) -> PartRange:
    """A variable capacitor from ``c_min`` to ``c_max`` [F].

    A variable capacitor never reaches 0 pF: its plates' fringe field and its
    stator-to-frame capacitance leave a minimum of typically 10-30 pF (common
    practice); give it.
    """
    return PartRange("capacitor", float(c_min), float(c_max), None, as_q_law(q))


def roller_inductor(l_max: float, l_min: float = 0.1e-6, q=100.0) -> PartRange:
    """A continuously variable (roller) inductor up to ``l_max`` [H].

    ``l_min`` is what is left at the end stop; the default 0.1 uH is an
    assumption of this module (the order of magnitude of a roller's end turn
    and leads), not a measured figure.
    """
    return PartRange("inductor", float(l_min), float(l_max), None, as_q_law(q))


def tapped_inductor(taps, q=100.0) -> PartRange:
    """An inductor with discrete taps, values [H]."""
    taps = tuple(sorted(float(t) for t in taps))
    if not taps:
        raise ValueError("a tapped inductor needs at least one tap")
    return PartRange("inductor", taps[0], taps[-1], taps, as_q_law(q))


def fixed_part(kind: str, value: float, q=None) -> PartRange:
    """A part of one fixed value [F or H] (Q default: capacitor 1000,
    inductor 100)."""
    if q is None:
        q = 1000.0 if kind == "capacitor" else 100.0
    return PartRange(kind, float(value), float(value), (float(value),), as_q_law(q))


@dataclass(frozen=True)
class Tuner:
    """An adjustable network: a topology of :data:`TOPOLOGIES` and the range
    of each of its parts (keys: the topology's part names)."""

    topology: str
    parts: Mapping[str, PartRange]

    def __post_init__(self):
        if self.topology not in TOPOLOGIES:
            raise ValueError(f"unknown topology {self.topology!r}; "
                             f"one of {', '.join(TOPOLOGIES)}")
        slots = TOPOLOGIES[self.topology]
        names = {s[0] for s in slots}
        if set(self.parts) != names:
            raise ValueError(f"the {self.topology} has parts {sorted(names)}, "
                             f"not {sorted(self.parts)}")
        for name, kind, _ in slots:
            if self.parts[name].kind != kind:
                raise ValueError(f"part {name} of the {self.topology} is a {kind}")

    @property
    def slots(self):
        return TOPOLOGIES[self.topology]


# ------------------------------------------------------- network matrices

def _part_z(kind: str, value, w, q) -> np.ndarray:
    """``|X| / Q + jX`` of a capacitor or inductor (broadcast)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        x = w * value if kind == "inductor" else -1.0 / (w * value)
    return np.abs(x) / q + 1j * x


def _abcd(slots, w, values, qs) -> np.ndarray:
    """ABCD of the slots (source to load) for broadcast arrays."""
    zs = [_part_z(kind, values[name], w, qs[name]) for name, kind, _ in slots]
    shape = np.broadcast_shapes(*(z.shape for z in zs))
    total = None
    for (_, _, placement), z in zip(slots, zs):
        z = np.broadcast_to(z, shape)
        with np.errstate(divide="ignore", invalid="ignore"):
            m = (twoport.series_impedance(z) if placement == "series"
                 else twoport.shunt_admittance(1.0 / z))
        total = m if total is None else total @ m
    return total


def network_abcd(topology: str, f, values: Mapping[str, object],
                 q: Mapping[str, object]) -> np.ndarray:
    """ABCD of a tuner topology with given part values.

    Parameters
    ----------
    topology : str
        One of :data:`TOPOLOGIES`.
    f : array_like
        Frequency [Hz], ``(nfreq,)``.
    values : mapping
        Part name -> value [F or H], each broadcast against ``f``: a number,
        ``(nfreq,)`` (a setting per frequency), or ``(..., nfreq)`` /
        ``(nvar, 1)`` for a batch of settings.
    q : mapping
        Part name -> unloaded Q (number or :class:`QLaw`).

    Returns
    -------
    ndarray
        ``(..., nfreq, 2, 2)``, port 1 toward the source; the slots cascade
        as ``M_source_side @ ... @ M_load_side``.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 4.4
       (ABCD cascade, table 4.1) and sec. 6.1 (unloaded Q).
    """
    slots = TOPOLOGIES[topology]
    w = 2.0 * math.pi * np.atleast_1d(np.asarray(f, dtype=float))
    qs = {name: as_q_law(q[name])(w / (2.0 * math.pi)) for name, _, _ in slots}
    vals = {name: np.asarray(values[name], dtype=float) for name, _, _ in slots}
    return _abcd(slots, w, vals, qs)


def t_network_abcd(f, c1, l, c2, *, q_capacitor=1000.0, q_inductor=100.0) -> np.ndarray:
    """ABCD of a high-pass T: series ``c1`` [F] at the source, shunt ``l``
    [H], series ``c2`` [F] at the load; see :func:`network_abcd`.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table 4.1.
    """
    return network_abcd("high-pass T", f, {"C1": c1, "L": l, "C2": c2},
                        {"C1": q_capacitor, "L": q_inductor, "C2": q_capacitor})


def pi_network_abcd(f, c1, l, c2, *, q_capacitor=1000.0, q_inductor=100.0) -> np.ndarray:
    """ABCD of a pi: shunt ``c1`` [F] at the source, series ``l`` [H], shunt
    ``c2`` [F] at the load; see :func:`network_abcd`.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table 4.1.
    """
    return network_abcd("pi", f, {"C1": c1, "L": l, "C2": c2},
                        {"C1": q_capacitor, "L": q_inductor, "C2": q_capacitor})


def l_network_abcd(f, l, c, *, low_pass: bool = True, shunt_at_load: bool = True,
                   q_capacitor=1000.0, q_inductor=100.0) -> np.ndarray:
    """ABCD of an L-network of inductor ``l`` [H] and capacitor ``c`` [F]:
    low-pass (series L, shunt C) or high-pass (series C, shunt L), the shunt
    part at the load or at the source; see :func:`network_abcd`.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 5.1
       and table 4.1.
    """
    return network_abcd(l_topology(low_pass, shunt_at_load), f, {"L": l, "C": c},
                        {"L": q_inductor, "C": q_capacitor})


def l_topology(low_pass: bool, shunt_at_load: bool) -> str:
    """Name of an L-network topology."""
    return (f"L, {'low' if low_pass else 'high'}-pass, "
            f"shunt at {'load' if shunt_at_load else 'source'}")


def _evaluate(slots, w, zl, values, qs):
    """Input impedance and loss [dB] (power in over power into the load)."""
    m = _abcd(slots, w, values, qs)
    zl = np.broadcast_to(zl, m.shape[:-2])
    v1, i1 = twoport.apply(m, zl, np.ones_like(zl))
    with np.errstate(divide="ignore", invalid="ignore"):
        return v1 / i1, 10.0 * np.log10((v1 * i1.conj()).real / zl.real)


# ------------------------------------------------- exact two-part solutions

def _sorted_roots(qa, qb, qc):
    """Real roots of ``qa t^2 + qb t + qc = 0`` (``qa > 0``), smaller first,
    NaN when complex; computed without cancellation."""
    d = qb * qb - 4.0 * qa * qc
    with np.errstate(invalid="ignore", divide="ignore"):
        q = -0.5 * (qb + np.copysign(np.sqrt(d), qb))
        t1, t2 = q / qa, qc / q
    t1 = np.where(d >= 0, t1, np.nan)
    t2 = np.where(d >= 0, t2, np.nan)
    return np.stack([np.minimum(t1, t2), np.maximum(t1, t2)], axis=-1)


def _pair_solve(zp, r0, series_kind, shunt_kind, shunt_at_load, q_series, q_shunt):
    """The lossy two-part networks (one series, one shunt part) that present
    exactly ``r0`` with load ``zp``.

    Returns the series reactance ``x`` and the shunt part's lossless
    susceptance ``b = -1/X`` [S], each ``zp.shape + (2,)`` (two roots), NaN
    where a root is complex or has a part of the wrong kind.

    The series part of reactance x has impedance ``x c``, ``c = j + a``
    (``a = 1/Q`` inductor, ``-1/Q`` capacitor); the shunt part's admittance
    is ``b k``, ``k = (j + beta) / (1 + beta^2)`` (``beta = 1/Q`` capacitor,
    ``-1/Q`` inductor).  Shunt at the load: ``Z_in = x c + 1/(Y' + b k)``,
    a quadratic in b once ``x = -Im 1/(Y' + b k)``; shunt at the source:
    ``Y_in = b k + 1/(Z' + x c)``, a quadratic in x once
    ``b = -Im(1/(Z' + x c)) / Im k`` (the algebra of
    :func:`necflow.feed.matching.lossy_l_networks`, here with per-point Q).

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 5.1
       (the lossless case).
    """
    zp = np.asarray(zp, dtype=complex)
    q_series = np.asarray(q_series, dtype=float)
    q_shunt = np.asarray(q_shunt, dtype=float)
    a = (1.0 if series_kind == "inductor" else -1.0) / q_series
    beta = (1.0 if shunt_kind == "capacitor" else -1.0) / q_shunt
    c = np.asarray(1j + a, dtype=complex)
    k = np.asarray((1j + beta) / (1.0 + beta * beta), dtype=complex)
    e = (..., None)          # the roots' axis
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        if shunt_at_load:
            yp = 1.0 / zp
            u = 1.0 + 1j * a
            b = _sorted_roots(r0 * np.abs(k) ** 2,
                              2.0 * r0 * (yp * k.conj()).real - (u * k.conj()).real,
                              r0 * np.abs(yp) ** 2 - (u * yp.conj()).real)
            x = -(1.0 / (yp[e] + b * k[e])).imag
        else:
            v = 1.0 + 1j * beta
            x = _sorted_roots(np.abs(c) ** 2,
                              2.0 * (zp * c.conj()).real - r0 * (v * c.conj()).real,
                              np.abs(zp) ** 2 - r0 * (v * zp.conj()).real)
            b = -(1.0 / (zp[e] + x * c[e])).imag / k.imag[e]
        ok = (((x > 0) if series_kind == "inductor" else (x < 0))
              & ((b > 0) if shunt_kind == "capacitor" else (b < 0))
              & (zp.real[e] > 0))
    return np.where(ok, x, np.nan), np.where(ok, b, np.nan)


def _series_value(kind, x, w):
    with np.errstate(divide="ignore", invalid="ignore"):
        return x / w if kind == "inductor" else -1.0 / (w * x)


def _shunt_value(kind, b, w):
    with np.errstate(divide="ignore", invalid="ignore"):
        return b / w if kind == "capacitor" else -1.0 / (w * b)


def _pair_values(slots, zp, w, r0, qs):
    """Part values of an exact two-part network of ``slots`` into ``zp``:
    dict name -> ``zp.shape + (2,)``."""
    (n1, k1, p1), (n2, k2, _) = slots
    ser, sh = ((n1, k1), (n2, k2)) if p1 == "series" else ((n2, k2), (n1, k1))
    at_load = p1 == "series"
    x, b = _pair_solve(zp, r0, ser[1], sh[1], at_load, qs[ser[0]], qs[sh[0]])
    w2 = np.asarray(w)[..., None]
    return {ser[0]: _series_value(ser[1], x, w2), sh[0]: _shunt_value(sh[1], b, w2)}


def _family(topology, w, zl, r0, c2, qs):
    """Exact matches of a T or pi with load-side capacitor ``c2``: dict
    name -> ``broadcast(w, zl, c2).shape + (2,)`` (two roots), NaN where none.

    With C2 given, the rest of the network is a two-part network into the
    load seen through C2: series C2 in the T, shunt C2 in the pi.
    """
    slots = TOPOLOGIES[topology]
    z2 = _part_z("capacitor", c2, w, qs["C2"])
    with np.errstate(divide="ignore", invalid="ignore"):
        zp = zl + z2 if topology == "high-pass T" else 1.0 / (1.0 / zl + 1.0 / z2)
    vals = _pair_values(slots[:2], zp, w, r0, qs)
    vals["C2"] = np.broadcast_to(np.asarray(c2, dtype=float)[..., None], vals["L"].shape)
    return vals


# ------------------------------------------------------------- the result

@dataclass(frozen=True)
class TunedNetwork:
    """An adjustable network set for one load at each frequency.

    Usable as a feed-chain element (``kind='tuner'``): its ABCD is fixed for
    the frequencies it was set at.  Where it cannot match it is a through
    connection (identity matrix, NaN settings, no loss, the load's own
    impedance and SWR).

    Attributes
    ----------
    id : str
    topology : str
        One of :data:`TOPOLOGIES`.
    f : ndarray
        Frequencies [Hz], ``(nfreq,)``.
    matrices : ndarray
        ``(nfreq, 2, 2)`` ABCD, port 1 toward the source.
    can_match : ndarray of bool
        Whether the setting brings the SWR within the tolerance.
    settings : dict
        Part name -> value per frequency [F or H] (NaN where it cannot match).
    z_in : ndarray
        Impedance at port 1 with the load [ohm].
    swr : ndarray
        SWR at port 1 against ``r_source``.
    loss_db : ndarray
        Power into the network over power into the load [dB].
    reason : ndarray of str
        Why it cannot match ('' where it can).
    z_load, r_source
        The load [ohm] and the source resistance [ohm] it was set for.
    tuner : Tuner
        The topology and part ranges (with the parts' Q).
    """

    id: str
    topology: str
    f: np.ndarray
    matrices: np.ndarray
    can_match: np.ndarray
    settings: dict
    z_in: np.ndarray
    swr: np.ndarray
    loss_db: np.ndarray
    reason: np.ndarray
    z_load: np.ndarray
    r_source: float
    tuner: Tuner
    kind: str = field(default="tuner", init=False)

    @property
    def metadata(self) -> dict:
        return {"tuner": self.topology}

    def abcd(self, f) -> np.ndarray:
        f = np.atleast_1d(np.asarray(f, dtype=float))
        if f.shape != self.f.shape or not np.allclose(f, self.f, rtol=1e-12):
            raise ValueError(f"tuner '{self.id}' was set at other frequencies")
        return self.matrices


def _result(tuner, f, zl, r0, settings, ok, reason, id) -> TunedNetwork:
    """Assemble a :class:`TunedNetwork`; rows not ``ok`` become a through
    connection."""
    n = f.size
    w = 2.0 * math.pi * f
    qs = {name: p.q(f) for name, p in tuner.parts.items()}
    vals = {name: np.where(ok, settings[name], np.nan) for name in tuner.parts}
    safe = {name: np.where(ok, v, 1.0) for name, v in vals.items()}
    with np.errstate(all="ignore"):
        m = _abcd(tuner.slots, w, safe, qs)
        z_in, loss = _evaluate(tuner.slots, w, zl, safe, qs)
    m = np.where(ok[:, None, None], m, twoport.identity(n))
    z_in = np.where(ok, z_in, zl)
    return TunedNetwork(
        id=id, topology=tuner.topology, f=f, matrices=m, can_match=ok, settings=vals,
        z_in=z_in, swr=np.asarray(swr(reflection_coefficient(z_in, r0))),
        loss_db=np.where(ok, loss, 0.0), reason=np.asarray(reason, dtype=object).astype(str),
        z_load=zl, r_source=r0, tuner=tuner)


# ----------------------------------------------------------------- tuning

def _candidates_pick(n, rows, loss, ok):
    """Index of the least-loss candidate of each row (-1: none)."""
    best = np.full(n, -1)
    if rows.size == 0:
        return best
    key = np.where(ok & np.isfinite(loss), loss, np.inf)
    order = np.lexsort((key, rows))
    r_sorted = rows[order]
    first = np.r_[True, r_sorted[1:] != r_sorted[:-1]]
    idx = order[first]
    good = np.isfinite(key[idx])
    best[rows[idx[good]]] = idx[good]
    return best


def _flat_candidates(tuner, vals, w, zl, r0, qs, rows):
    """Loss and validity of flat candidates (values dict of ``(K,)``)."""
    z_in, loss = _evaluate(tuner.slots, w[rows], zl[rows], vals,
                           {k: q[rows] for k, q in qs.items()})
    ok = np.abs(z_in - r0) / r0 < _EXACT_TOL
    for name, part in tuner.parts.items():
        ok &= np.isfinite(vals[name]) & part.contains(vals[name])
    return loss, ok


def _grid_candidates(tuner, c2, w, zl, r0, qs):
    """Flat candidates of a T or pi from a per-row grid of C2 ``(n, m)``."""
    n = w.size
    fam = _family(tuner.topology, w[:, None], zl[:, None], r0, c2,
                  {k: q[:, None] for k, q in qs.items()})
    rows = np.repeat(np.arange(n), fam["L"][0].size)
    vals = {k: v.reshape(-1) for k, v in fam.items()}
    loss, ok = _flat_candidates(tuner, vals, w, zl, r0, qs, rows)
    return rows, vals, loss, ok


def _exact_continuous(tuner, w, zl, r0, qs):
    """Least-loss exact match of a T or pi whose C1 and L are continuous:
    a scan of C2 over its range (or its values), refined twice around the
    best point.  Returns settings dict of ``(n,)`` and a found mask."""
    n = w.size
    part = tuner.parts["C2"]
    grid = (np.asarray(part.values) if part.discrete
            else np.geomspace(part.minimum, part.maximum, _SCAN_POINTS))
    c2 = np.broadcast_to(grid, (n, grid.size))
    best_vals = {k: np.full(n, np.nan) for k in tuner.parts}
    best_loss = np.full(n, np.inf)
    levels = 1 if part.discrete or part.minimum == part.maximum else 1 + _REFINE_LEVELS
    for _ in range(levels):
        rows, vals, loss, ok = _grid_candidates(tuner, c2, w, zl, r0, qs)
        pick = _candidates_pick(n, rows, loss, ok)
        have = pick >= 0
        better = have & (np.where(have, loss[pick], np.inf) < best_loss)
        for k in best_vals:
            best_vals[k] = np.where(better, vals[k][pick], best_vals[k])
        best_loss = np.where(better, loss[pick], best_loss)
        # the next level: between the neighbours of the best C2 of this level
        m = c2.shape[1]
        j = np.where(have, pick % (2 * m) // 2, 0)
        lo = c2[np.arange(n), np.maximum(j - 1, 0)]
        hi = c2[np.arange(n), np.minimum(j + 1, m - 1)]
        c2 = np.exp(np.linspace(np.log(lo), np.log(hi), _REFINE_POINTS, axis=1))
    return best_vals, np.isfinite(best_loss)


def _exact_tapped(tuner, w, zl, r0, qs, discrete_name):
    """Exact matches of a T or pi whose part ``discrete_name`` (C1 or L)
    takes discrete values and whose C2 is continuous: for each value, the
    C2 where the exact family passes through it (bisection on a scan)."""
    n = w.size
    part = tuner.parts["C2"]
    taps = np.asarray(tuner.parts[discrete_name].values)
    grid = np.geomspace(part.minimum, part.maximum, _SCAN_POINTS)
    fam = _family(tuner.topology, w[:, None], zl[:, None], r0, grid[None, :],
                  {k: q[:, None] for k, q in qs.items()})
    with np.errstate(divide="ignore", invalid="ignore"):
        g = np.log(fam[discrete_name][..., None] / taps)      # (n, m, 2, T)
    cross = np.isfinite(g[:, :-1]) & np.isfinite(g[:, 1:]) & (
        np.sign(g[:, :-1]) != np.sign(g[:, 1:]))
    row, j, root, t = np.nonzero(cross)
    lo, hi = np.log(grid[j]), np.log(grid[j + 1])
    g_lo = g[row, j, root, t]
    q_rows = {k: q[row] for k, q in qs.items()}
    for _ in range(_BISECT_STEPS):
        mid = 0.5 * (lo + hi)
        v = _family(tuner.topology, w[row], zl[row], r0, np.exp(mid), q_rows)
        with np.errstate(divide="ignore", invalid="ignore"):
            g_mid = np.log(v[discrete_name][np.arange(row.size), root] / taps[t])
        same = np.sign(g_mid) == np.sign(g_lo)
        lo, hi = np.where(same, mid, lo), np.where(same, hi, mid)
        g_lo = np.where(same, g_mid, g_lo)
    c2 = np.exp(0.5 * (lo + hi))
    v = _family(tuner.topology, w[row], zl[row], r0, c2, q_rows)
    vals = {k: x[np.arange(row.size), root] for k, x in v.items()}
    vals[discrete_name] = taps[t]
    loss, ok = _flat_candidates(tuner, vals, w, zl, r0, qs, row)
    pick = _candidates_pick(n, row, loss, ok)
    have = pick >= 0
    if not row.size:
        return {k: np.full(n, np.nan) for k in tuner.parts}, have
    return {k: np.where(have, vals[k][np.maximum(pick, 0)], np.nan) for k in tuner.parts}, have


def _exact_pair(tuner, w, zl, r0, qs):
    """Least-loss exact match of a two-part L-network (at most two)."""
    n = w.size
    v = _pair_values(tuner.slots, zl, w, r0, qs)
    rows = np.repeat(np.arange(n), 2)
    vals = {k: x.reshape(-1) for k, x in v.items()}
    loss, ok = _flat_candidates(tuner, vals, w, zl, r0, qs, rows)
    pick = _candidates_pick(n, rows, loss, ok)
    have = pick >= 0
    return {k: np.where(have, vals[k][np.maximum(pick, 0)], np.nan) for k in tuner.parts}, have


def _exact(tuner, w, zl, r0, qs):
    """Least-loss exact match within the ranges, where the parts allow one:
    settings dict of ``(n,)`` and a found mask."""
    n = w.size
    if len(tuner.slots) == 2:
        return _exact_pair(tuner, w, zl, r0, qs)
    discrete = [k for k in ("C1", "L") if tuner.parts[k].discrete]
    c2_discrete = tuner.parts["C2"].discrete
    if not discrete:
        return _exact_continuous(tuner, w, zl, r0, qs)
    if len(discrete) == 1 and not c2_discrete:
        return _exact_tapped(tuner, w, zl, r0, qs, discrete[0])
    # more discrete parts than the two match conditions leave free
    return {k: np.full(n, np.nan) for k in tuner.parts}, np.zeros(n, dtype=bool)


def _near_match(tuner, f_i, zl_i, r0):
    """The setting of least SWR within the ranges at one frequency: a grid
    over all parts, its best points polished in log values of the continuous
    parts (bounded).  Returns (settings dict of floats, |gamma|)."""
    names = [s[0] for s in tuner.slots]
    parts = [tuner.parts[k] for k in names]
    axes = [np.asarray(p.values) if p.discrete
            else np.geomspace(p.minimum, p.maximum, _NEAR_GRID) for p in parts]
    mesh = [a.reshape(-1) for a in np.meshgrid(*axes, indexing="ij")]
    w = 2.0 * math.pi * f_i
    qs = {k: p.q(f_i) for k, p in zip(names, parts)}

    def gamma(vals):
        z, _ = _evaluate(tuner.slots, w, zl_i, vals, qs)
        g = np.abs((z - r0) / (z + r0))
        return np.where(np.isfinite(g), g, 1.0)

    g = gamma(dict(zip(names, mesh)))
    starts = np.argsort(g)[:_NEAR_STARTS]
    best = (dict(zip(names, (m[starts[0]] for m in mesh))), float(g[starts[0]]))
    cont = [i for i, p in enumerate(parts) if not p.discrete and p.minimum < p.maximum]
    if not cont:
        return best
    bounds = [(math.log(parts[i].minimum), math.log(parts[i].maximum)) for i in cont]
    for s in starts:
        fixed = {k: m[s] for k, m in zip(names, mesh)}

        def objective(u, fixed=fixed):
            vals = dict(fixed)
            for i, ui in zip(cont, u):
                vals[names[i]] = math.exp(ui)
            return float(np.ravel(gamma(vals))[0]) ** 2

        x0 = [math.log(fixed[names[i]]) for i in cont]
        res = minimize(objective, x0, method="L-BFGS-B", bounds=bounds,
                       options={"maxiter": _NEAR_MAXITER})
        if math.sqrt(max(res.fun, 0.0)) < best[1]:
            vals = dict(fixed)
            for i, ui in zip(cont, res.x):
                vals[names[i]] = math.exp(ui)
            best = (vals, math.sqrt(max(res.fun, 0.0)))
    return best


def format_value(kind: str, v: float) -> str:
    """A part value as text: ``'120 pF'``, ``'3.2 uH'``."""
    return f"{v * 1e12:.4g} pF" if kind == "capacitor" else f"{v * 1e6:.4g} uH"


def _diagnose(tuner, f_i, zl_i, r0, near_swr, tol):
    """Why a load cannot be matched at one frequency: which part's range
    runs out, from the exact matches with the ranges lifted."""
    if not zl_i.real > 0:
        return "the load takes no power (its resistance is not positive)"
    w = 2.0 * math.pi * f_i
    qs = {k: p.q(f_i) for k, p in tuner.parts.items()}
    if len(tuner.slots) == 2:
        vals = _pair_values(tuner.slots, np.asarray(zl_i), w, r0, qs)
    else:
        p = tuner.parts["C2"]
        grid = np.geomspace(p.minimum * 1e-3, p.maximum * 1e3, 601)
        vals = _family(tuner.topology, w, zl_i, r0, grid, qs)
    vals = {k: np.asarray(v).reshape(-1) for k, v in vals.items()}
    finite = np.all([np.isfinite(v) for v in vals.values()], axis=0)
    if not finite.any():
        return f"no setting of the {tuner.topology} matches this load"
    excess = {}
    for k, p in tuner.parts.items():
        with np.errstate(divide="ignore", invalid="ignore"):
            excess[k] = np.maximum(0.0, np.maximum(np.log(vals[k] / p.maximum),
                                                   np.log(p.minimum / vals[k])))
    total = np.where(finite, sum(excess.values()), np.inf)
    i = int(np.argmin(total))
    if total[i] <= 1e-6:
        return (f"no setting within the ranges comes within SWR {tol:g} "
                f"(nearest SWR {near_swr:.3g})")
    out = []
    for name, kind, _ in tuner.slots:
        if excess[name][i] > 1e-6:
            p = tuner.parts[name]
            v = vals[name][i]
            side = (f"above its maximum {format_value(kind, p.maximum)}" if v > p.maximum
                    else f"below its minimum {format_value(kind, p.minimum)}")
            out.append(f"{name} would need {format_value(kind, v)}, {side}")
    return "range runs out: " + "; ".join(out)


def tune(tuner: Tuner, f, z_load, r_source: float = 50.0, *, swr_tolerance: float = 1.1,
         id: str = "tuner", near_match: bool = True) -> TunedNetwork:
    """Set an adjustable network for the least loss that matches the load.

    Parameters
    ----------
    tuner : Tuner
        Topology and part ranges.
    f : array_like
        Frequency [Hz], ``(nfreq,)``.
    z_load : array_like
        Impedance at the network's output [ohm], ``(nfreq,)`` or a number.
    r_source : float
        Resistance to present to the source [ohm].
    swr_tolerance : float
        Highest SWR accepted for a near match (1.0: exact matches only).
    id : str
        Element id in a chain.
    near_match : bool
        Search a near match (step 2 below) and diagnose the points that
        cannot match; False (a batch of many variants) skips both: such a
        point cannot match, its reason is "no exact match within the ranges".

    Returns
    -------
    TunedNetwork

    Notes
    -----
    The rule, per frequency:

    1. Exact matches within the ranges, least loss first.  An L-network has
       at most two exact settings (the lossy quadratic of
       :func:`_pair_solve`).  A T or pi has two match conditions and three
       parts: a one-parameter family.  It is followed along the load-side
       capacitor C2: for each C2 the rest is a two-part network solved
       exactly; C2 is scanned over its range (257 points, log spaced) and the
       scan refined twice between the neighbours of the best point (65
       points each), so the least-loss member is found to about 1e-5 of C2
       even where it lies against a range limit.  When C1 or the inductor
       takes discrete values (taps, a fixed part), the C2 at which the family
       passes through each value is found by bisection.
    2. Where no exact match lies within the ranges: the setting of least SWR
       within the ranges (a grid of every part, its best points polished by
       bounded L-BFGS-B), accepted when its SWR is at most
       ``swr_tolerance``.  This is a near match, chosen for SWR, not loss.
    3. Otherwise the network cannot match and is a through connection; the
       reason names the part whose range runs out (from the exact family
       with the ranges lifted: C2 scanned 1000 times beyond its range each
       way), or says that the parts are in range but discrete.

    The work is bounded: fixed scan sizes, fixed bisection steps, and at most
    4 polishes of at most 200 iterations per frequency for near matches.

    With the T, loss falls as C2 grows (less circulating current in the
    shunt inductor), so the least-loss member is at the largest C2 the load
    and the other parts' ranges allow (common practice).

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 5.1
       (L-network matching) and sec. 4.4 (ABCD).
    .. [2] ARRL Antenna Book, impedance-matching chapter (from memory: the T's
       family of settings and its least-loss member at the largest output
       capacitance).
    """
    f = np.atleast_1d(np.asarray(f, dtype=float))
    zl = np.broadcast_to(np.asarray(z_load, dtype=complex), f.shape).copy()
    r0 = float(r_source)
    if not swr_tolerance >= 1.0:
        raise ValueError("swr_tolerance must be at least 1")
    w = 2.0 * math.pi * f
    qs = {name: p.q(f) for name, p in tuner.parts.items()}
    with np.errstate(all="ignore"):
        settings, ok = _exact(tuner, w, zl, r0, qs)
        reason = np.full(f.size, "", dtype=object)
        if not near_match:
            reason[~ok] = "no exact match within the ranges"
        for i in np.nonzero(~ok)[0] if near_match else ():
            if not zl[i].real > 0:
                reason[i] = _diagnose(tuner, f[i], zl[i], r0, np.inf, swr_tolerance)
                continue
            vals, g = _near_match(tuner, f[i], zl[i], r0)
            near_swr = (1 + g) / (1 - g) if g < 1 else np.inf
            if near_swr <= swr_tolerance:
                for k in settings:
                    settings[k][i] = vals[k]
                ok[i] = True
            else:
                reason[i] = _diagnose(tuner, f[i], zl[i], r0, near_swr, swr_tolerance)
        return _result(tuner, f, zl, r0, settings, ok, reason, id)


def evaluate_setting(tuner: Tuner, f, z_load, settings: Mapping[str, object],
                     r_source: float = 50.0, *, swr_tolerance: float = 1.1,
                     id: str = "tuner") -> TunedNetwork:
    """A network at a setting given by the user.

    Parameters
    ----------
    tuner : Tuner
    f : array_like
        Frequency [Hz], ``(nfreq,)``.
    z_load : array_like
        Load impedance [ohm].
    settings : mapping
        Part name -> value [F or H], a number or ``(nfreq,)``.
    r_source : float
        Source resistance [ohm] (for the SWR).
    swr_tolerance : float
        ``can_match`` is True where the SWR is at most this.
    id : str

    Returns
    -------
    TunedNetwork
        The network is applied at every frequency (also where the SWR is
        above the tolerance, whose ``reason`` says so).

    Raises
    ------
    NecflowError
        A value outside its part's range (or not one of its taps).
    """
    f = np.atleast_1d(np.asarray(f, dtype=float))
    zl = np.broadcast_to(np.asarray(z_load, dtype=complex), f.shape).copy()
    r0 = float(r_source)
    vals = {}
    for name, kind, _ in tuner.slots:
        if name not in settings:
            raise NecflowError(f"tuner setting: {name} is missing")
        v = np.broadcast_to(np.asarray(settings[name], dtype=float), f.shape).copy()
        bad = ~tuner.parts[name].contains(v)
        if bad.any():
            p = tuner.parts[name]
            fmt = format_value
            allowed = (f"its taps {', '.join(fmt(kind, t) for t in p.values)}" if p.discrete
                       else f"{fmt(kind, p.minimum)} to {fmt(kind, p.maximum)}")
            raise NecflowError(f"tuner setting: {name} = {format_value(kind, v[bad][0])} is not a "
                               f"setting of the part ({allowed})")
        vals[name] = v
    w = 2.0 * math.pi * f
    qs = {name: p.q(f) for name, p in tuner.parts.items()}
    with np.errstate(all="ignore"):
        m = _abcd(tuner.slots, w, vals, qs)
        z_in, loss = _evaluate(tuner.slots, w, zl, vals, qs)
    s = np.asarray(swr(reflection_coefficient(z_in, r0)))
    ok = s <= swr_tolerance
    reason = np.where(ok, "", [f"SWR {x:.3g} above the tolerance {swr_tolerance:g}" for x in s])
    return TunedNetwork(id=id, topology=tuner.topology, f=f, matrices=m, can_match=ok,
                        settings=vals, z_in=z_in, swr=s, loss_db=loss,
                        reason=reason.astype(str), z_load=zl, r_source=r0, tuner=tuner)


# ----------------------------------------------------------------- stress

@dataclass(frozen=True)
class TunerStress:
    """Voltages, currents and dissipation of a network's parts at a power.

    Attributes
    ----------
    p_in, p_out : ndarray
        Power into the network and into the load [W], ``(nfreq,)``.
    v_peak : dict
        Part name -> peak voltage across the part [V] (sqrt(2) times RMS).
    i_rms : dict
        Part name -> RMS current through the part [A].
    dissipation : dict
        Part name -> power lost in the part, ``I^2 ESR`` [W].
    """

    p_in: np.ndarray
    p_out: np.ndarray
    v_peak: dict
    i_rms: dict
    dissipation: dict


def tuner_stress(net: TunedNetwork, power: float, *, power_is: str = "available") -> TunerStress:
    """Each part's voltage, current and dissipation at a power.

    Parameters
    ----------
    net : TunedNetwork
        A tuned or evaluated network (its load and source resistance are used).
    power : float
        Power [W]: available from a source of resistance ``net.r_source``
        (``power_is='available'``; source EMF ``E = sqrt(4 P R0)`` RMS) or
        delivered into the network (``power_is='input'``).
    power_is : {'available', 'input'}

    Returns
    -------
    TunerStress
        Parts' values NaN where the network cannot match (a through
        connection); ``p_out = p_in`` there.

    Notes
    -----
    The port-1 voltage and current are walked through the parts from the
    source: a series part carries the current and drops ``I Z``, a shunt
    part sees the voltage and draws ``V / Z``.  The dissipations then sum to
    ``p_in - p_out`` (Tellegen's theorem; the tests check it).  A T or pi
    set for a high-impedance load or into a low resistance can put several
    kilovolts peak across a capacitor at legal-limit power: the capacitor's
    voltage rating is the first thing to check, and the network must never
    be touched while transmitting (high RF voltage).

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 4.4
       (ABCD, port voltages and currents) and sec. 2.1 (power into a load,
       ``P = Re(V I*)`` for RMS phasors).
    """
    if power_is not in ("available", "input"):
        raise ValueError("power_is must be 'available' or 'input'")
    f, r0 = net.f, net.r_source
    w = 2.0 * math.pi * f
    # the parts are in the circuit wherever the settings are numbers
    ok = np.isfinite(np.asarray([net.settings[s[0]] for s in net.tuner.slots])).all(axis=0)
    safe = {k: np.where(ok, np.asarray(v, dtype=float), 1.0) for k, v in net.settings.items()}
    qs = {k: p.q(f) for k, p in net.tuner.parts.items()}
    with np.errstate(all="ignore"):
        z_in, _ = _evaluate(net.tuner.slots, w, net.z_load, safe, qs)
        z_in = np.where(ok, z_in, net.z_load)
        if power_is == "available":
            i = math.sqrt(4.0 * power * r0) / (r0 + z_in)
        else:
            i = np.sqrt(power / z_in.real) + 0j
        v = i * z_in
        p_in = (v * i.conj()).real
        v_peak, i_rms, diss = {}, {}, {}
        for name, kind, placement in net.tuner.slots:
            z = _part_z(kind, safe[name], w, qs[name])
            if placement == "series":
                vp, ip = i * z, i
                v = v - vp
            else:
                vp, ip = v, v / z
                i = i - ip
            v_peak[name] = np.where(ok, math.sqrt(2.0) * np.abs(vp), np.nan)
            i_rms[name] = np.where(ok, np.abs(ip), np.nan)
            diss[name] = np.where(ok, np.abs(ip) ** 2 * z.real, np.nan)
        p_out = np.where(ok, (v * i.conj()).real, p_in)
    return TunerStress(p_in=p_in, p_out=p_out, v_peak=v_peak, i_rms=i_rms, dissipation=diss)


def part_stress(net: TunedNetwork, v1, i1) -> dict:
    """Each part's voltage, current and dissipation for a given state at
    the network's radio side (port 1).

    Parameters
    ----------
    net : TunedNetwork
    v1, i1 : array_like
        RMS voltage [V] and current toward the load [A] at port 1,
        ``(nfreq,)`` (the power flow of the chain the network sits in).

    Returns
    -------
    dict
        Part name -> {"kind", "v_peak" [V], "i_rms" [A], "p_diss_w" [W]},
        arrays ``(nfreq,)``, NaN where the network is a through connection
        (cannot match).

    Notes
    -----
    The walk of :func:`tuner_stress` from a known port-1 state: a series
    part carries the current and drops ``I Z``, a shunt part sees the
    voltage and draws ``V / Z``; each part dissipates ``I^2 ESR``.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 4.4.
    """
    f = net.f
    w = 2.0 * math.pi * f
    ok = np.isfinite(np.asarray([net.settings[s[0]] for s in net.tuner.slots])).all(axis=0)
    safe = {k: np.where(ok, np.asarray(v, dtype=float), 1.0) for k, v in net.settings.items()}
    v = np.asarray(v1, dtype=complex).copy()
    i = np.asarray(i1, dtype=complex).copy()
    out = {}
    with np.errstate(all="ignore"):
        for name, kind, placement in net.tuner.slots:
            z = _part_z(kind, safe[name], w, net.tuner.parts[name].q(f))
            if placement == "series":
                vp, ip = i * z, i
                v = v - vp
            else:
                vp, ip = v, v / z
                i = i - ip
            out[name] = {"kind": kind,
                         "v_peak": np.where(ok, math.sqrt(2.0) * np.abs(vp), np.nan),
                         "i_rms": np.where(ok, np.abs(ip), np.nan),
                         "p_diss_w": np.where(ok, np.abs(ip) ** 2 * z.real, np.nan)}
    return out
