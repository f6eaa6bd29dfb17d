"""Component stress at the radio's power and at a worst-case power, with
margins against the ratings the design gives.

The feed chain is linear: voltages and currents scale with the square root
of the power, dissipation with the power, so the worst case needs no new
power flow.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from necflow.analysis.powerflow import SystemResponse

#: Element kinds whose power rating is compared with the power passing
#: through them (their own dissipation is not what their rating states).
THROUGH_POWER_KINDS = ("transformer", "choke", "tuner")


@dataclass(frozen=True)
class StressRow:
    """Worst figures of one element over the frequencies given.

    Voltages are peak [V], currents RMS [A], dissipation [W]; ``*_worst``
    at the worst-case power.  ``f_v_peak_hz`` and ``position_m`` say at
    which frequency (and, for a line, how far from the antenna end) the peak
    voltage occurs; ``f_i_peak_hz`` and ``i_position_m`` the same for the
    current (a line's current peaks along it, not only at its ends).  Ratings
    are None when the design gives none; ``margin`` is rating over the
    worst-case figure (below 1: exceeded), per rating.
    """

    id: str
    kind: str
    v_peak: float
    v_peak_worst: float
    f_v_peak_hz: float
    position_m: float | None
    i_rms: float
    i_rms_worst: float
    p_diss_w: float
    p_diss_worst_w: float
    ratings: dict
    margin: dict
    notes: tuple
    f_i_peak_hz: float = math.nan
    i_position_m: float | None = None


def scale_to_power(v_peak, i_rms, p_diss, p_from: float, p_to: float):
    """Stress figures at another available power: V and I scale with
    sqrt(P), dissipation with P (linear network).

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 2.6
       (available power ``|E|^2 / 4 R``: the source voltage scales as sqrt(P)).
    """
    k = math.sqrt(p_to / p_from)
    return np.asarray(v_peak) * k, np.asarray(i_rms) * k, np.asarray(p_diss) * (p_to / p_from)


def stress_rows(system: SystemResponse, ratings: dict, worst_power_w: float,
                select=None) -> list[StressRow]:
    """One row per element; ``select`` (bool mask over f) limits the points."""
    f = system.f
    sel = np.ones(f.size, bool) if select is None else np.asarray(select)
    p0 = system.power_available_w
    rows = []
    for eid, st in system.stress.items():
        v, i, p = st.v_peak[sel], st.i_rms[sel], st.p_diss_w[sel]
        k = int(np.nanargmax(v))
        vw, iw, pw = scale_to_power(v.max(), i.max(), p.max(), p0, worst_power_w)
        pos = None if st.peak_position_m is None else float(st.peak_position_m[sel][k])
        ki = int(np.nanargmax(i))
        ipos = None if st.current_position_m is None else float(st.current_position_m[sel][ki])
        rate = dict(ratings.get(eid, {}))
        got = {"voltage_rating": float(vw), "current_rating": float(iw),
               "power_rating": float(p_through(st, sel, p0, worst_power_w))
               if st.kind in THROUGH_POWER_KINDS else float(pw)}
        applicable = _applicable(st.kind)
        margin, notes = {}, []
        for name in applicable:
            if name in rate:
                margin[name] = rate[name] / got[name] if got[name] > 0 else math.inf
                if margin[name] < 1.0:
                    notes.append(f"{name.replace('_', ' ')} exceeded at "
                                 f"{worst_power_w:g} W")
            else:
                notes.append(f"no {name.replace('_', ' ')} given")
        rows.append(StressRow(eid, st.kind, float(v.max()), float(vw), float(f[sel][k]), pos,
                              float(i.max()), float(iw), float(p.max()), float(pw), rate,
                              margin, tuple(notes), float(f[sel][ki]), ipos))
        for name, part in (st.parts or {}).items():
            row = _part_row(f"{eid}.{name.lower()}", part, sel, f, ratings, p0,
                            worst_power_w)
            if row is not None:
                rows.append(row)
    return rows


def _part_row(pid: str, part: dict, sel, f, ratings: dict, p0: float,
              worst_power_w: float) -> StressRow | None:
    """The row of one part of a tuner (None where it is never in circuit)."""
    v, i, p = part["v_peak"][sel], part["i_rms"][sel], part["p_diss_w"][sel]
    if not np.isfinite(v).any():
        return None
    k, ki = int(np.nanargmax(v)), int(np.nanargmax(i))
    vw, iw, pw = scale_to_power(np.nanmax(v), np.nanmax(i), np.nanmax(p), p0, worst_power_w)
    kind = f"tuner {part['kind']}"
    rate = dict(ratings.get(pid, {}))
    got = {"voltage_rating": float(vw), "current_rating": float(iw)}
    margin, notes = {}, []
    for name in _applicable(kind):
        if name in rate:
            margin[name] = rate[name] / got[name] if got[name] > 0 else math.inf
            if margin[name] < 1.0:
                notes.append(f"{name.replace('_', ' ')} exceeded at {worst_power_w:g} W")
        else:
            notes.append(f"no {name.replace('_', ' ')} given")
    return StressRow(pid, kind, float(np.nanmax(v)), float(vw), float(f[sel][k]), None,
                     float(np.nanmax(i)), float(iw), float(np.nanmax(p)), float(pw), rate,
                     margin, tuple(notes), float(f[sel][ki]), None)


def p_through(st, sel, p0, p_to) -> float:
    """Largest power through a transformer or choke at power ``p_to`` [W]."""
    return float(np.max(st.p_in_w[sel]) * p_to / p0)


def _applicable(kind: str) -> tuple[str, ...]:
    if kind == "line":
        return ("voltage_rating",)
    if kind in THROUGH_POWER_KINDS:
        return ("voltage_rating", "power_rating")
    if kind in ("series", "shunt"):
        return ("voltage_rating", "current_rating", "power_rating")
    if kind == "common-mode":
        return ("power_rating",)
    if kind == "tuner capacitor":
        return ("voltage_rating",)
    if kind == "tuner inductor":
        return ("current_rating",)
    return ()
