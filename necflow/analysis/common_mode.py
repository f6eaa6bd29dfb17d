"""Common-mode current on the feed line: currents at the radio's power, the
heat in chokes, and the loss budget that still adds up.

The engine gives the current at each probe of the common-mode path per volt
of differential drive at the feed point (:func:`necflow.engine.pynec_adapter.solve_routed`).
The feed chain's power flow gives that drive: the RMS voltage the line's
differential mode delivers at the feed point.  The network is linear, so
the probe currents at the radio's power are the per-volt currents times that
voltage, and a load of impedance ``Z`` dissipates ``|I|^2 Re(Z)``.  That
heat comes out of the power delivered to the feed point: the budget gains
one term per load, and the total loss runs from the radio's available power
to what is left for the antenna (radiation, wire and ground loss).

References
----------
.. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 2.6
   (power in a load, ``P = |I|^2 Re(Z)`` for RMS phasors).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np

from necflow.analysis.powerflow import ElementStress, SystemResponse, db_ratio

#: Suffix of the budget and stress entries of a common-mode load.
SUFFIX = " (common mode)"


@dataclass(frozen=True)
class CommonMode:
    """Common-mode figures over frequency at the radio's power.

    Attributes
    ----------
    currents : dict of str to ndarray
        RMS current [A] at each probe (a choke's id, 'entry'), complex.
    load_impedance : dict of str to ndarray
        Impedance [ohm] of each load on the path (chokes, the entry's
        resistance), complex.
    load_power_w : dict of str to ndarray
        Heat in each load [W].
    p_feed_w : ndarray
        Power the line's differential mode delivers at the feed point [W].
    p_antenna_w : ndarray
        What the loads leave for the antenna and the line's outside:
        radiation, wire and ground loss [W].
    """

    currents: dict[str, np.ndarray]
    load_impedance: dict[str, np.ndarray]
    load_power_w: dict[str, np.ndarray]
    p_feed_w: np.ndarray
    p_antenna_w: np.ndarray


def common_mode(system: SystemResponse, per_volt: dict[str, np.ndarray],
                load_impedance: dict[str, np.ndarray]) -> CommonMode:
    """Probe currents and load heat at the power of ``system``.

    Parameters
    ----------
    system : SystemResponse
        The feed chain's power flow (its last node is the feed point).
    per_volt : dict of str to ndarray
        Current [A] per volt of differential drive at each probe, ``(nf,)``.
    load_impedance : dict of str to ndarray
        Impedance [ohm] of each load, keyed by its probe's name, ``(nf,)``.
    """
    v_feed = system.node_v[:, -1]
    currents = {k: np.asarray(v, dtype=complex) * v_feed for k, v in per_volt.items()}
    power = {k: np.abs(currents[k]) ** 2 * np.asarray(z, dtype=complex).real
             for k, z in load_impedance.items()}
    total = sum(power.values()) if power else np.zeros(v_feed.shape)
    return CommonMode(currents=currents,
                      load_impedance={k: np.asarray(z, dtype=complex)
                                      for k, z in load_impedance.items()},
                      load_power_w=power, p_feed_w=system.p_delivered_w,
                      p_antenna_w=system.p_delivered_w - total)


def with_common_mode(system: SystemResponse, cm: CommonMode) -> SystemResponse:
    """``system`` with the heat of the common-mode loads in its budget.

    Each load adds a loss term ``10 log10(P_before / P_after)`` (in the order
    of the loads), its dissipation and a stress entry (named with
    :data:`SUFFIX`); the power delivered and the total loss then run to what
    the loads leave.  Mismatch, the elements and the loads still add up to
    the total, and the powers to the radio's available power.
    """
    if not cm.load_power_w:
        return system
    loss = {k: v for k, v in system.loss_db.items() if k != "total"}
    diss = dict(system.p_dissipated_w)
    stress = dict(system.stress)
    remaining = system.p_delivered_w.copy()
    for name, p in cm.load_power_w.items():
        key = name + SUFFIX
        after = remaining - p
        loss[key] = db_ratio(remaining, after)
        diss[key] = p
        i = cm.currents[name]
        z = cm.load_impedance[name]
        stress[key] = ElementStress(
            id=key, kind="common-mode", v_peak=math.sqrt(2.0) * np.abs(i * z),
            i_rms=np.abs(i), p_diss_w=p, p_in_w=remaining, p_out_w=after,
            v_rms_in=np.abs(i * z), v_rms_out=np.zeros_like(p), i_rms_in=np.abs(i),
            i_rms_out=np.abs(i))
        remaining = after
    loss["total"] = db_ratio(np.full(remaining.shape, system.power_available_w), remaining)
    return dataclasses.replace(system, loss_db=loss, p_dissipated_w=diss, stress=stress,
                               p_delivered_w=remaining,
                               delivered_fraction=remaining / system.power_available_w)


def common_mode_cautions(cm: CommonMode, f, current_limit: float, heat_limit: float,
                         ratings: dict[str, float] | None = None) -> list[str]:
    """One-line cautions: a common-mode current at the station entry above
    ``current_limit`` [A RMS]; a choke heated above ``heat_limit`` [W] or
    above its own power rating (``ratings``: load name -> W)."""
    f = np.asarray(f, dtype=float)
    out = []
    entry = cm.currents.get("entry")
    if entry is not None and np.abs(entry).max() > current_limit:
        k = int(np.argmax(np.abs(entry)))
        out.append(f"common-mode current of {abs(entry[k]):.2g} A RMS on the line's outside at "
                   f"the station entry at {f[k] / 1e6:.4g} MHz (above {current_limit:g} A): "
                   "RF in the shack; a choke at the feed point or the entry reduces it")
    for name, p in cm.load_power_w.items():
        limit = (ratings or {}).get(name, heat_limit)
        if name != "entry" and p.max() > limit:
            k = int(np.argmax(p))
            what = "its power rating" if name in (ratings or {}) else "the caution level"
            out.append(f"choke '{name}' dissipates {p[k]:.3g} W at {f[k] / 1e6:.4g} MHz, above "
                       f"{what} ({limit:g} W): it may overheat; a choke of higher resistive "
                       "impedance dissipates less")
    return out


__all__ = ["CommonMode", "SUFFIX", "common_mode", "common_mode_cautions", "with_common_mode"]
