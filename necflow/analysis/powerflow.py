"""Power flow through the feed chain for a radio of given available power.

The radio is a source of available power ``P`` with a real source resistance
``z_ref``: open-circuit RMS voltage ``E = sqrt(4 P z_ref)``.  The state at
every node (node 0 the radio terminals, node N the antenna feedpoint) comes
from the sweep of :mod:`necflow.feed.power`: from the feedpoint with the
forward ABCD, scaled to the source, which gives the same nodes as stepping
from the radio with inverse ABCDs but keeps full precision behind strongly
mismatched elements.  The impedance at the radio, the delivered fraction and
the total loss are those of :mod:`necflow.feed.power` too, the very figures a
batch of variants gets.  With ``P_k = Re(V_k I_k*)``:

* mismatch loss at the radio ``P - P_0`` (equals ``P |G|^2``),
* dissipation in each element ``P_in - P_out``,
* power delivered to the antenna ``P_N``,

which add up to ``P`` to rounding.  The decibel budget telescopes the same
way: ``mismatch + sum(elements) = total``.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field

import numpy as np

from necflow.feed import line as tl
from necflow.feed import metrics, power
from necflow.feed.chain import FeedChain, resolve
from necflow.feed.tuners import TunedNetwork, part_stress


@dataclass(frozen=True)
class ElementStress:
    """Voltages, currents and dissipation of one element, arrays over f.

    "in" is the radio side (port 1), "out" the antenna side (port 2).

    Attributes
    ----------
    id, kind : str
        Element id and kind ('line', 'series', 'shunt', 'transformer',
        'choke').
    v_peak : ndarray
        Peak (instantaneous) voltage [V]: across a series part
        ``sqrt2 |V1 - V2|``, across a shunt part ``sqrt2 |V1|``, anywhere
        along a line (differential), at either terminal of a transformer or
        a choke.
    i_rms : ndarray
        RMS current [A] through a part; the largest current anywhere along
        a line (a mismatched line's current peaks between its ends); the
        larger terminal current of a transformer or a choke.
    p_diss_w : ndarray
        Dissipated power [W].
    p_in_w, p_out_w : ndarray
        Real power entering at port 1 and leaving at port 2 [W].
    v_rms_in, v_rms_out, i_rms_in, i_rms_out : ndarray
        Terminal magnitudes [V RMS], [A RMS].
    peak_position_m : ndarray or None
        Lines only: distance of the voltage peak from the antenna end [m].
    current_position_m : ndarray or None
        Lines only: distance of the current peak from the antenna end [m].
    """

    id: str
    kind: str
    v_peak: np.ndarray
    i_rms: np.ndarray
    p_diss_w: np.ndarray
    p_in_w: np.ndarray
    p_out_w: np.ndarray
    v_rms_in: np.ndarray
    v_rms_out: np.ndarray
    i_rms_in: np.ndarray
    i_rms_out: np.ndarray
    peak_position_m: np.ndarray | None = None
    current_position_m: np.ndarray | None = None
    parts: dict | None = None


@dataclass(frozen=True)
class RelayStress:
    """The relay of a switched element, arrays over f.

    A series element (line, series part, transformer, tuner) is switched
    out by contacts that close across it; a shunt part by contacts in
    series with it that open.

    Attributes
    ----------
    id : str
        The element's id.
    closed : ndarray of bool
        Whether the contacts are closed.
    out : ndarray of bool
        Whether the element is out of circuit.
    v_open_peak : ndarray
        Peak voltage across the open contacts [V] (NaN where closed).
    i_closed_rms : ndarray
        RMS current through the closed contacts [A] (NaN where open).
    contacts : int
        Relays (contact sets) it takes: 1 for a part, 2 for a line, a
        transformer or a tuner (a changeover at each end).
    """

    id: str
    closed: np.ndarray
    out: np.ndarray
    v_open_peak: np.ndarray
    i_closed_rms: np.ndarray
    contacts: int


@dataclass(frozen=True)
class SystemResponse:
    """The antenna system seen from the radio, arrays over ``f``.

    Attributes
    ----------
    f : ndarray
        Frequency [Hz], ``(nfreq,)``.
    z_ref : float
        Radio reference impedance [ohm].
    power_available_w : float
        Radio available power [W].
    element_ids : tuple of str
        Element ids, antenna side first (as in the design).
    z_feedpoint, z_radio : ndarray
        Antenna feedpoint impedance and impedance seen by the radio [ohm].
    gamma : ndarray
        Reflection coefficient at the radio against ``z_ref`` [-].
    swr : ndarray
        SWR at the radio [-].
    return_loss_db : ndarray
        Return loss at the radio [dB].
    node_v, node_i : ndarray
        ``(nfreq, N+1)`` RMS voltage [V] and current toward the antenna [A];
        node 0 the radio terminals, node N the feedpoint.
    node_p_w : ndarray
        ``(nfreq, N+1)`` real power flowing toward the antenna [W].
    p_mismatch_w : ndarray
        Power reflected back to the radio (not accepted) [W].
    p_dissipated_w : dict of str to ndarray
        Dissipation per element id [W].
    p_delivered_w : ndarray
        Power delivered to the feedpoint [W].
    loss_db : dict of str to ndarray
        "mismatch", each element id, and "total" [dB]; the first ones add
        up to "total".
    delivered_fraction : ndarray
        ``p_delivered_w / power_available_w`` [-].
    stress : dict of str to ElementStress
        Per element id.
    tuners : dict of str to TunedNetwork
        Each tuner as set for its load (settings, loss, whether it matches,
        why not).
    relays : dict of str to RelayStress
        Each switched element's relay.
    """

    f: np.ndarray
    z_ref: float
    power_available_w: float
    element_ids: tuple[str, ...]
    z_feedpoint: np.ndarray
    z_radio: np.ndarray
    gamma: np.ndarray
    swr: np.ndarray
    return_loss_db: np.ndarray
    node_v: np.ndarray
    node_i: np.ndarray
    node_p_w: np.ndarray
    p_mismatch_w: np.ndarray
    p_dissipated_w: dict[str, np.ndarray]
    p_delivered_w: np.ndarray
    loss_db: dict[str, np.ndarray]
    delivered_fraction: np.ndarray
    stress: dict[str, ElementStress]
    tuners: dict = field(default_factory=dict)
    relays: dict = field(default_factory=dict)


def db_ratio(num, den) -> np.ndarray:
    """``10 log10(num/den)``; ``inf`` where nothing (or, by rounding, less than
    nothing) comes out, e.g. into a purely reactive load."""
    num, den = np.asarray(num, dtype=float), np.asarray(den, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = 10.0 * np.log10(num / den)
    return np.where((den <= 0) & (num > 0), np.inf, out)


def analyse(chain: FeedChain, f, z_feedpoint, z_ref: float = 50.0,
            power_w: float = 100.0) -> SystemResponse:
    """Impedance, match, power flow and stress of a feed chain.

    Parameters
    ----------
    chain : FeedChain
        Elements from the antenna toward the radio (may be empty).
    f : array_like
        Frequency [Hz], ``(nfreq,)``.
    z_feedpoint : array_like
        Antenna feedpoint impedance [ohm], ``(nfreq,)`` or scalar.
    z_ref : float
        Radio reference (source) resistance [ohm], real.
    power_w : float
        Radio available power [W].

    Returns
    -------
    SystemResponse

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 2.6
       (generator and load mismatches, available power ``|E|^2 / 4 R``) and
       sec. 4.4 (ABCD cascade).
    """
    f = np.atleast_1d(np.asarray(f, dtype=float))
    nf = f.size
    zfp = np.broadcast_to(np.asarray(z_feedpoint, dtype=complex), (nf,)).copy()
    chain = resolve(chain, f, zfp)    # tuners set for the load each one sees
    mats = chain.matrices(f)          # antenna side first; each computed once

    # The unscaled states from the feedpoint (node N) to the radio (node 0),
    # then every node scaled by the one complex factor the source fixes.
    n = len(mats)
    node_v = np.empty((nf, n + 1), dtype=complex)
    node_i = np.empty((nf, n + 1), dtype=complex)
    for j, (v, i) in enumerate(power.states_toward_radio(mats, zfp)):
        node_v[:, n - j], node_i[:, n - j] = v, i
    v0, i0, vn, i_n = node_v[:, 0], node_i[:, 0], node_v[:, n], node_i[:, n]
    z_radio = power.radio_impedance(v0, i0)
    gamma = metrics.reflection_coefficient(z_radio, z_ref)
    fraction = power.delivered_fraction(v0, i0, vn, i_n, z_ref)
    scale = power.source_scale(v0, i0, z_ref, power_w)
    node_v *= scale[:, None]
    node_i *= scale[:, None]
    node_p = (node_v * node_i.conj()).real
    p_avail = np.full(nf, float(power_w))
    p_mismatch = p_avail - node_p[:, 0]
    p_delivered = node_p[:, n]

    ids = tuple(chain.ids)
    p_diss: dict[str, np.ndarray] = {}
    loss: dict[str, np.ndarray] = {"mismatch": db_ratio(p_avail, node_p[:, 0])}
    stress: dict[str, ElementStress] = {}
    relays: dict[str, RelayStress] = {}
    for k, el in enumerate(reversed(chain.elements)):
        v1, i1, v2, i2 = node_v[:, k], node_i[:, k], node_v[:, k + 1], node_i[:, k + 1]
        p_in, p_out = node_p[:, k], node_p[:, k + 1]
        p_diss[el.id] = p_in - p_out
        loss[el.id] = db_ratio(p_in, p_out)
        st = _stress(el, f, v1, i1, v2, i2, p_in, p_out)
        out = chain.out_mask(el.id, f)
        if out.any():
            relays[el.id] = _relay(el, out, v1, i1, v2, i2)
            st = _switched_out(st, out)
        stress[el.id] = st
    loss["total"] = power.total_loss_db(fraction)
    # Present dissipation and losses in design order (antenna side first).
    p_diss = {i: p_diss[i] for i in ids}
    loss = {"mismatch": loss["mismatch"], **{i: loss[i] for i in ids}, "total": loss["total"]}
    stress = {i: stress[i] for i in ids}
    return SystemResponse(
        f=f, z_ref=float(z_ref), power_available_w=float(power_w), element_ids=ids,
        z_feedpoint=zfp, z_radio=z_radio, gamma=gamma, swr=metrics.swr(gamma),
        return_loss_db=metrics.return_loss_db(gamma), node_v=node_v, node_i=node_i,
        node_p_w=node_p, p_mismatch_w=p_mismatch, p_dissipated_w=p_diss,
        p_delivered_w=p_delivered, loss_db=loss, delivered_fraction=fraction,
        stress=stress, relays={i: relays[i] for i in ids if i in relays},
        tuners={e.id: e for e in chain.elements if isinstance(e, TunedNetwork)})


def unmatched(system: SystemResponse) -> np.ndarray:
    """``(nfreq,)`` True where a tuner in circuit cannot match its load."""
    tuners, relays = getattr(system, "tuners", {}), getattr(system, "relays", {})
    out = np.zeros(np.shape(system.swr), dtype=bool)
    for tid, net in tuners.items():
        off = (np.asarray(relays[tid].out, dtype=bool) if tid in relays
               else np.zeros(out.shape, dtype=bool))
        out |= ~np.asarray(net.can_match, dtype=bool) & ~off
    return out


def _switched_out(st: ElementStress, out: np.ndarray) -> ElementStress:
    """The stress of an element with nothing across or through it where a
    relay takes it out of circuit (its dissipation there is exactly 0)."""
    def zero(a):
        return None if a is None else np.where(out, 0.0, a)
    parts = None if st.parts is None else {
        k: {n: (zero(a) if n != "kind" else a) for n, a in p.items()}
        for k, p in st.parts.items()}
    return dataclasses.replace(st, v_peak=zero(st.v_peak), i_rms=zero(st.i_rms), parts=parts)


def _relay(el, out, v1, i1, v2, i2) -> RelayStress:
    """The relay that switches ``el`` out on the frequencies of ``out``."""
    r2 = math.sqrt(2.0)
    if el.kind == "shunt":              # contacts in series with the part
        closed = ~out
        v_open = np.where(out, r2 * np.abs(v1), np.nan)
        i_closed = np.where(closed, np.abs(i1 - i2), np.nan)
        contacts = 1
    else:                               # contacts across the element
        closed = out
        v_open = np.where(~out, r2 * np.abs(v1 - v2), np.nan)
        i_closed = np.where(closed, np.abs(i1), np.nan)
        contacts = 1 if el.kind == "series" else 2
    return RelayStress(el.id, closed, out, v_open, i_closed, contacts)


def _stress(el, f, v1, i1, v2, i2, p_in, p_out) -> ElementStress:
    r2 = math.sqrt(2.0)
    av1, av2, ai1, ai2 = np.abs(v1), np.abs(v2), np.abs(i1), np.abs(i2)
    pos = ipos = None
    if el.kind == "series":
        v_peak, i_rms = r2 * np.abs(v1 - v2), ai1
    elif el.kind == "shunt":
        v_peak, i_rms = r2 * av1, np.abs(i1 - i2)
    elif el.kind == "line":
        gamma, zc = el.propagation(f)
        vmax, pos = tl.peak_voltage(gamma, zc, v2, i2, el.length)
        imax, ipos = tl.peak_current(gamma, zc, v2, i2, el.length)
        v_peak, i_rms = r2 * vmax, imax
    elif el.kind == "tuner":
        parts = part_stress(el, v1, i1)
        v_peak = np.fmax.reduce([p["v_peak"] for p in parts.values()])
        i_rms = np.fmax.reduce([p["i_rms"] for p in parts.values()])
        # a tuner that cannot match is a through connection: its terminals
        v_peak = np.where(np.isfinite(v_peak), v_peak, r2 * np.maximum(av1, av2))
        i_rms = np.where(np.isfinite(i_rms), i_rms, np.maximum(ai1, ai2))
        return ElementStress(id=el.id, kind=el.kind, v_peak=v_peak, i_rms=i_rms,
                             p_diss_w=p_in - p_out, p_in_w=p_in, p_out_w=p_out,
                             v_rms_in=av1, v_rms_out=av2, i_rms_in=ai1, i_rms_out=ai2,
                             parts=parts)
    else:
        # transformer, and choke: terminal figures.  A choke passes the
        # differential mode unchanged (identity matrix), so its terminals
        # agree and it dissipates nothing here; its common-mode current is
        # not part of this model.
        v_peak, i_rms = r2 * np.maximum(av1, av2), np.maximum(ai1, ai2)
    return ElementStress(id=el.id, kind=el.kind, v_peak=v_peak, i_rms=i_rms,
                         p_diss_w=p_in - p_out, p_in_w=p_in, p_out_w=p_out,
                         v_rms_in=av1, v_rms_out=av2, i_rms_in=ai1, i_rms_out=ai2,
                         peak_position_m=pos, current_position_m=ipos)
