"""The feed chain: design elements turned into two-ports.

:func:`build_chain` reads ``design.feed`` (listed from the antenna toward the
radio) and returns a :class:`FeedChain` whose elements each give their ABCD
array for a frequency vector.  The physics lives in :mod:`necflow.feed.line`,
:mod:`necflow.feed.lumped`, :mod:`necflow.feed.transformer` and
:mod:`necflow.feed.choke`.
"""

from __future__ import annotations

import warnings
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from necflow.catalog.chokes import CHOKE_TYPES, ChokeType
from necflow.catalog.lines import LINE_TYPES, LineType, resolve_line_type
from necflow.errors import ConfigError, NecflowWarning
from necflow.feed import line as tl
from necflow.feed import power, tuners, twoport
from necflow.feed.adjustable import MatchingNetwork, SetNetwork
from necflow.feed.choke import choke_impedance
from necflow.feed.lumped import part_abcd, part_impedance
from necflow.feed.transformer import transformer_abcd


def _propagation(lt: LineType, model: str, f) -> tuple[np.ndarray, np.ndarray]:
    """``gamma`` [1/m] and ``Zc`` [ohm] of one line type, ``(nfreq,)`` each."""
    if model == "real-z0":
        alpha = lt.conductor_np_per_m(f) + lt.dielectric_np_per_m(f)
        return tl.propagation_real_z0(f, lt.z0, lt.velocity_factor, alpha)
    r, l, g, c = tl.rlgc_from_nominal(f, lt.z0, lt.velocity_factor,
                                      lt.conductor_np_per_m(f), lt.dielectric_np_per_m(f))
    return tl.propagation_rlgc(f, r, l, g, c)


def _distinct(objects: np.ndarray) -> tuple[list, np.ndarray]:
    """The distinct objects of an object array (by identity) and, for each
    entry, the index of its object among them (flat)."""
    flat = objects.ravel()
    keys = np.frompyfunc(id, 1, 1)(flat).astype(np.uint64)
    _, first, inv = np.unique(keys, return_index=True, return_inverse=True)
    return [flat[j] for j in first], inv.reshape(-1)


@dataclass(frozen=True)
class LineSection:
    """A length of line.

    ``model='rlgc'`` (the default) derives R, L, G, C from the line type's
    nominal Z0, velocity factor and attenuation and so has a complex Zc;
    ``model='real-z0'`` keeps Zc = Z0 real (the textbook lossy line).

    For a batch of variants ``length`` may be an array of the variant axes
    (``(nvar,)`` for one axis) and ``line_type`` an object array of
    :class:`LineType` of such a shape; :meth:`propagation` is then
    ``(..., nfreq)`` and :meth:`abcd` ``(..., nfreq, 2, 2)``.
    """

    id: str
    line_type: LineType | np.ndarray
    length: float | np.ndarray
    model: str = "rlgc"
    kind: str = field(default="line", init=False)

    @property
    def metadata(self) -> dict[str, Any]:
        return {"line": self.line_type.name, "length_m": self.length,
                "z0_ohm": self.line_type.z0,
                "velocity_factor": self.line_type.velocity_factor, "model": self.model}

    def propagation(self, f) -> tuple[np.ndarray, np.ndarray]:
        """``gamma`` [1/m] and ``Zc`` [ohm] at ``f`` [Hz]: ``(nfreq,)`` each,
        ``(..., nfreq)`` for an array of line types (each distinct type
        computed once)."""
        if not isinstance(self.line_type, np.ndarray):
            return _propagation(self.line_type, self.model, f)
        f = np.atleast_1d(np.asarray(f, dtype=float))
        types, inv = _distinct(self.line_type)
        gamma = np.empty((len(types), f.size), dtype=complex)
        zc = np.empty_like(gamma)
        for k, lt in enumerate(types):
            gamma[k], zc[k] = _propagation(lt, self.model, f)
        shape = self.line_type.shape + (f.size,)
        return gamma[inv].reshape(shape), zc[inv].reshape(shape)

    def abcd(self, f, *, warn: bool = True) -> np.ndarray:
        """``(nfreq, 2, 2)``, or ``(..., nfreq, 2, 2)`` for per-variant
        lengths or line types; warns once per line type if ``f`` leaves the
        line data's range (unless ``warn`` is False)."""
        f = np.atleast_1d(np.asarray(f, dtype=float))
        types = (_distinct(self.line_type)[0] if isinstance(self.line_type, np.ndarray)
                 else [self.line_type])
        for lt in types if warn else ():
            lo, hi = lt.valid_range_hz
            outside = (f < lo) | (f > hi)
            if np.any(outside):
                warnings.warn(
                    f"feed element '{self.id}': {int(outside.sum())} frequency(ies) outside "
                    f"{lo / 1e6:.3g}-{hi / 1e6:.3g} MHz, the range the loss data of line type "
                    f"'{lt.name}' support; its loss there is extrapolated",
                    NecflowWarning, stacklevel=2)
        gamma, zc = self.propagation(f)
        length = np.asarray(self.length, dtype=float)
        if length.ndim and gamma.ndim == 1:
            # a grid repeats each length many times: compute each distinct one once
            u, inv = np.unique(length.ravel(), return_inverse=True)
            if u.size < length.size:
                m = tl.line_abcd(gamma, zc, u)
                return m[inv.reshape(-1)].reshape(length.shape + m.shape[1:])
        return tl.line_abcd(gamma, zc, length)


@dataclass(frozen=True)
class LumpedPart:
    """A capacitor, inductor or resistor in series or across the line.

    ``value``, ``q`` and ``esr`` may be arrays of the variant axes (``(nvar,)``
    for one axis): :meth:`abcd` is then ``(..., nfreq, 2, 2)``.
    """

    id: str
    placement: str          # 'series' | 'shunt'
    part: str               # 'capacitor' | 'inductor' | 'resistor'
    value: float | np.ndarray            # F, H or ohm
    q: float | np.ndarray | None = None
    esr: float | np.ndarray | None = None

    @property
    def kind(self) -> str:
        return self.placement

    @property
    def metadata(self) -> dict[str, Any]:
        return {"part": self.part, "value": self.value, "q": self.q, "esr_ohm": self.esr}

    def impedance(self, f) -> np.ndarray:
        """Part impedance [ohm], ``(nfreq,)`` or ``(..., nfreq)``."""
        return part_impedance(f, self.part, self.value, self.q, self.esr)

    def abcd(self, f) -> np.ndarray:
        """``(nfreq, 2, 2)``, or ``(..., nfreq, 2, 2)`` per variant."""
        return part_abcd(f, self.placement, self.part, self.value, self.q, self.esr)


@dataclass(frozen=True)
class Transformer:
    """Transformer or balun: ideal ratio (antenna : radio) and matched loss.

    ``ratio`` and ``loss_db`` may be arrays of the variant axes (``(nvar,)``
    for one axis): :meth:`abcd` is then ``(..., nfreq, 2, 2)``.

    ``balun_kind`` ('current' or 'voltage', None for an unun or transformer)
    and ``choke`` (its common-mode impedance, a ``ChokeSpec``, None for
    none) matter only when the feed line is modelled as a conductor; the
    differential-mode matrix does not depend on them.
    """

    id: str
    ratio: float | np.ndarray
    loss_db: float | np.ndarray
    r_radio: float = 50.0
    label: str = "transformer"
    loss_model: str = "series"
    balun_kind: str | None = None
    choke: Any = None
    kind: str = field(default="transformer", init=False)

    @property
    def metadata(self) -> dict[str, Any]:
        return {"transformer": self.label, "ratio": self.ratio, "loss_db": self.loss_db,
                "r_radio_ohm": self.r_radio, "loss_model": self.loss_model}

    def abcd(self, f) -> np.ndarray:
        """``(nfreq, 2, 2)``, or ``(..., nfreq, 2, 2)`` per variant."""
        return transformer_abcd(f, self.ratio, self.loss_db, self.r_radio, self.loss_model)


@dataclass(frozen=True)
class Choke:
    """A common-mode choke on the feed line.

    To the differential mode it is a through connection: :meth:`abcd` is the
    identity.  Its common-mode impedance (:meth:`common_mode_impedance`)
    acts only on current on the outside of the line, when the line is
    modelled as a conductor.
    """

    id: str
    spec: Any               # ChokeSpec, catalog ChokeType or catalog name
    kind: str = field(default="choke", init=False)

    @property
    def metadata(self) -> dict[str, Any]:
        s = self.spec
        if isinstance(s, str):
            return {"choke": s}
        if isinstance(s, ChokeType):
            return {"choke": s.name}
        form = next(k for k in ("catalog", "points", "parallel") if getattr(s, k) is not None)
        return {"choke": s.catalog if form == "catalog" else form}

    def abcd(self, f) -> np.ndarray:
        """The identity, ``(nfreq, 2, 2)`` (broadcasts over variant axes)."""
        return twoport.identity(np.atleast_1d(np.asarray(f, dtype=float)).size)

    def common_mode_impedance(self, f) -> np.ndarray:
        """``Z_cm`` [ohm], ``(nfreq,)``; see :func:`necflow.feed.choke.choke_impedance`."""
        return choke_impedance(f, self.spec)


FeedElement = (LineSection | LumpedPart | Transformer | Choke | MatchingNetwork
               | tuners.TunedNetwork | SetNetwork)


def out_mask(intervals, f) -> np.ndarray:
    """Where ``f`` [Hz] lies in one of the ``(low, high)`` intervals [Hz]
    (a switched element's bands out of circuit), ``f.shape``."""
    f = np.asarray(f, dtype=float)
    m = np.zeros(f.shape, dtype=bool)
    for lo, hi in intervals:
        m |= (f >= lo * (1 - 1e-12)) & (f <= hi * (1 + 1e-12))
    return m


def switched(m: np.ndarray, mask: np.ndarray) -> np.ndarray:
    """The matrices ``m`` ``(..., nfreq, 2, 2)`` with the identity at the
    frequencies of ``mask`` ``(nfreq,)``: the element out of circuit.

    The identity carries a node's state through unchanged (``1 V + 0 I``
    is ``V`` exactly), so a chain with an element switched out equals, on
    those frequencies, the chain without it to the last bit.
    """
    if not mask.any():
        return m
    eye = twoport.identity(mask.size)
    return np.where(mask[:, None, None], eye, m)


@dataclass(frozen=True)
class FeedChain:
    """Elements listed from the antenna toward the radio.

    Elements holding per-variant arrays (see :class:`LineSection`,
    :class:`LumpedPart`, :class:`Transformer`) make the chain a batch of
    variants: its matrices are ``(..., nfreq, 2, 2)``.  ``out`` maps the id
    of a switched element to the frequency intervals ``(low, high)`` [Hz]
    (its bands) on which a relay takes it out of circuit.  A tuner
    (:class:`MatchingNetwork`) has a matrix only once :func:`resolve` has
    set it for the load it sees.
    """

    elements: tuple[FeedElement, ...] = ()
    out: dict = field(default_factory=dict)

    def out_mask(self, element_id: str, f) -> np.ndarray:
        """Where element ``element_id`` is out of circuit, over ``f``."""
        return out_mask(self.out.get(element_id, ()), np.atleast_1d(f))

    def with_elements(self, elements) -> FeedChain:
        """Another chain of ``elements`` keeping the switch states of those
        it still holds."""
        ids = {e.id for e in elements}
        return FeedChain(tuple(elements), {k: v for k, v in self.out.items() if k in ids})

    @property
    def has_tuner(self) -> bool:
        return any(isinstance(e, MatchingNetwork) for e in self.elements)

    @property
    def ids(self) -> list[str]:
        return [e.id for e in self.elements]

    def __len__(self) -> int:
        return len(self.elements)

    def matrices(self, f) -> list[np.ndarray]:
        """Each element's ABCD, antenna side first (the identity where a
        relay takes it out of circuit)."""
        f = np.atleast_1d(np.asarray(f, dtype=float))
        return [switched(e.abcd(f), self.out_mask(e.id, f)) for e in self.elements]

    def abcd(self, f) -> np.ndarray:
        """Whole-chain ABCD, radio at port 1, ``(nfreq, 2, 2)`` (``(..., nfreq,
        2, 2)`` for a batch)."""
        f = np.atleast_1d(np.asarray(f, dtype=float))
        return twoport.cascade(self.matrices(f), nfreq=f.size)

    def input_impedance(self, f, z_feedpoint) -> np.ndarray:
        """Impedance seen by the radio [ohm] with the antenna's ``z_feedpoint``."""
        chain = resolve(self, f, z_feedpoint) if self.has_tuner else self
        return twoport.input_impedance(chain.abcd(f), z_feedpoint)


def resolve(chain: FeedChain, f, z_feedpoint, *, near: bool = True) -> FeedChain:
    """The chain with every tuner set for the load it sees.

    The state is walked from the feedpoint toward the radio
    (:func:`necflow.feed.power.states_toward_radio`); at a tuner the load is
    ``V / I`` of the state reaching it, and the tuner is replaced by the
    network set for it (:meth:`MatchingNetwork.set_for`).  A chain without
    tuners is returned as it is.

    Parameters
    ----------
    chain : FeedChain
    f : array_like
        ``(nfreq,)`` [Hz].
    z_feedpoint : array_like
        ``(nfreq,)`` [ohm].
    near : bool
        Passed to :meth:`MatchingNetwork.set_for`.
    """
    if not chain.has_tuner:
        return chain
    f = np.atleast_1d(np.asarray(f, dtype=float))
    mats = [None if isinstance(e, MatchingNetwork) else m
            for e, m in zip(chain.elements, _static_matrices(chain, f))]
    elements, _ = resolve_matrices(chain, mats, f, z_feedpoint, near=near)
    return FeedChain(tuple(elements), dict(chain.out))


def _static_matrices(chain: FeedChain, f) -> list:
    return [None if isinstance(e, MatchingNetwork)
            else switched(e.abcd(f), chain.out_mask(e.id, f)) for e in chain.elements]


def resolve_matrices(chain: FeedChain, mats: list, f, z_feedpoint, *, near: bool = True):
    """Set the tuners of ``chain`` whose entry in ``mats`` is None.

    ``mats`` holds the other elements' matrices (antenna side first, switch
    states applied; per variant in a batch).  Returns the elements (tuners
    set) and every matrix (a tuner switched out is the identity on its
    bands).
    """
    f = np.atleast_1d(np.asarray(f, dtype=float))
    v, i = power.feedpoint_state(np.broadcast_to(np.asarray(z_feedpoint, dtype=complex),
                                                 f.shape))
    elements, out = [], []
    for e, m in zip(chain.elements, mats):
        if m is None:
            with np.errstate(divide="ignore", invalid="ignore"):
                zl = v / i
            e = e.set_for(f, zl, near=near)
            m = switched(e.matrices, chain.out_mask(e.id, f))
        elements.append(e)
        out.append(m)
        v, i = twoport.apply(m, v, i)
    return elements, out


def _line_type(el, i: int) -> LineType:
    try:
        return resolve_line_type(el.line, el.impedance, el.velocity_factor, el.loss,
                                 getattr(el, "balanced", None))
    except KeyError:
        raise ConfigError(f"unknown line type '{el.line}'; catalog types are: "
                          + ", ".join(LINE_TYPES) + ", custom", field=f"feed[{i}].line") from None


def _choke_spec(spec, field_path: str):
    """A design's ChokeSpec, its catalog name checked."""
    name = getattr(spec, "catalog", None)
    if name is not None and name not in CHOKE_TYPES:
        raise ConfigError(f"unknown choke '{name}'; catalog chokes are: "
                          + ", ".join(CHOKE_TYPES), field=field_path + ".catalog")
    return spec


def _band_intervals(names, bands, field_path: str) -> tuple:
    """``(low, high)`` [Hz] of the bands named, checked against ``bands``."""
    known = {b.name: b for b in bands}
    out = []
    for k, name in enumerate(names):
        if name not in known:
            raise ConfigError(f"'{name}' is not one of the design's bands "
                              f"({', '.join(known) or 'none'})", field=f"{field_path}[{k}]")
        out.append((known[name].low_hz, known[name].high_hz))
    return tuple(out)


def switch_intervals(el, i: int, bands) -> tuple:
    """The frequency intervals on which element ``el`` (``feed[i]``) is out
    of circuit (empty without a switch)."""
    sw = getattr(el, "switch", None)
    if sw is None:
        return ()
    for key in ("bypass", "only"):
        _band_intervals(getattr(sw, key) or [], bands, f"feed[{i}].switch.{key}")
    return tuple((b.low_hz, b.high_hz) for b in bands if sw.is_out(b.name))


def _q_law(spec) -> tuners.QLaw:
    return tuners.QLaw(spec.q, spec.q_reference, spec.q_exponent)


def _capacitor(spec) -> tuners.PartRange:
    if spec.value is not None:
        return tuners.PartRange("capacitor", spec.value, spec.value, (spec.value,), _q_law(spec))
    return tuners.PartRange("capacitor", spec.min, spec.max, None, _q_law(spec))


def _inductor(spec) -> tuners.PartRange:
    q = _q_law(spec)
    if spec.value is not None:
        return tuners.PartRange("inductor", spec.value, spec.value, (spec.value,), q)
    if spec.taps is not None:
        taps = tuple(sorted(spec.taps))
        return tuners.PartRange("inductor", taps[0], taps[-1], taps, q)
    return tuners.PartRange("inductor", spec.min, spec.max, None, q)


#: Design part names -> the physics module's part names.
TUNER_PART_NAMES = {"c1": "C1", "l": "L", "c2": "C2", "c": "C"}


def tuner_topology(el) -> str:
    """The :data:`necflow.feed.tuners.TOPOLOGIES` name of a tuner element."""
    if el.tuner == "high-pass-t":
        return "high-pass T"
    if el.tuner == "pi":
        return "pi"
    return tuners.l_topology(el.filter == "low-pass", el.shunt_side == "antenna")


def matching_network(el, i: int, r_radio: float, bands=()) -> MatchingNetwork:
    """The :class:`MatchingNetwork` of a design's tuner element ``feed[i]``."""
    parts, ratings = {}, {}
    for name in ("c1", "c2") if el.tuner != "l-network" else ("c",):
        spec = el.capacitor_for(name)
        parts[TUNER_PART_NAMES[name]] = _capacitor(spec)
        if spec.voltage_rating is not None:
            ratings[TUNER_PART_NAMES[name]] = {"voltage_rating": spec.voltage_rating}
    parts["L"] = _inductor(el.inductor)
    if el.inductor.current_rating is not None:
        ratings["L"] = {"current_rating": el.inductor.current_rating}
    tuner = tuners.Tuner(tuner_topology(el), parts)
    user = []
    for band, values in el.settings.items():
        ((lo, hi),) = _band_intervals([band], bands, f"feed[{i}].settings")
        vals = {TUNER_PART_NAMES[n]: v for n, v in values.items()}
        for n, v in vals.items():
            if not parts[n].contains(np.array([v]))[0]:
                raise ConfigError(f"band '{band}': {n} = {tuners.format_value(parts[n].kind, v)}"
                                  " is outside the part's range",
                                  field=f"feed[{i}].settings.{band}")
        user.append((lo, hi, vals))
    return MatchingNetwork(el.id, tuner, float(el.match_to or r_radio), el.swr_tolerance,
                           tuple(user), ratings)


def build_chain(feed: Sequence[Any], r_radio: float = 50.0, bands=()) -> FeedChain:
    """Turn a design's feed list into a :class:`FeedChain`.

    Parameters
    ----------
    feed : sequence
        ``LineElement | PartElement | TransformerElement | ChokeElement`` from
        :mod:`necflow.config.schema`, listed from the antenna toward the radio.
        An empty list is a direct feed.
    r_radio : float
        The radio's reference impedance [ohm]; transformers take it as their
        radio-side reference (their matched loss is defined there), and a
        tuner matches to it unless it names its own ``match_to``.
    bands : sequence of Band
        The design's bands (:func:`necflow.catalog.bands.resolve_bands`):
        the names a switch or a tuner's settings give are looked up here.

    Raises
    ------
    ConfigError
        Unknown line type (``field='feed[i].line'``, ``i`` from 0) or choke
        (``field='feed[i].choke.catalog'``), a band a switch or a setting
        names that the design does not have, a setting outside its part's
        range.
    """
    out: list[FeedElement] = []
    off: dict = {}
    for i, el in enumerate(feed):
        intervals = switch_intervals(el, i, bands)
        if intervals:
            off[el.id] = intervals
        if getattr(el, "tuner", None) is not None:
            out.append(matching_network(el, i, r_radio, bands))
        elif hasattr(el, "line") and getattr(el, "line", None) is not None:
            out.append(LineSection(el.id, _line_type(el, i), el.length))
        elif hasattr(el, "transformer"):
            choke = el.common_mode_choke
            out.append(Transformer(el.id, el.ratio, el.loss, r_radio, el.transformer,
                                   el.loss_model, el.effective_balun_kind,
                                   None if choke is None
                                   else _choke_spec(choke, f"feed[{i}].choke")))
        elif getattr(el, "series", None) or getattr(el, "shunt", None):
            out.append(LumpedPart(el.id, el.placement, el.kind, el.value, el.q, el.esr))
        elif getattr(el, "choke", None) is not None:
            out.append(Choke(el.id, _choke_spec(el.choke, f"feed[{i}].choke")))
        else:
            raise ConfigError("an element needs one of 'line', 'series', 'shunt', "
                              "'transformer', 'choke' or 'tuner'", field=f"feed[{i}]")
    return FeedChain(tuple(out), off)
