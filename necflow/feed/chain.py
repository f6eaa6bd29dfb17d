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
from necflow.feed import twoport
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


FeedElement = LineSection | LumpedPart | Transformer | Choke


@dataclass(frozen=True)
class FeedChain:
    """Elements listed from the antenna toward the radio.

    Elements holding per-variant arrays (see :class:`LineSection`,
    :class:`LumpedPart`, :class:`Transformer`) make the chain a batch of
    variants: its matrices are ``(..., nfreq, 2, 2)``.
    """

    elements: tuple[FeedElement, ...] = ()

    @property
    def ids(self) -> list[str]:
        return [e.id for e in self.elements]

    def __len__(self) -> int:
        return len(self.elements)

    def matrices(self, f) -> list[np.ndarray]:
        """Each element's ABCD, antenna side first."""
        return [e.abcd(f) for e in self.elements]

    def abcd(self, f) -> np.ndarray:
        """Whole-chain ABCD, radio at port 1, ``(nfreq, 2, 2)`` (``(..., nfreq,
        2, 2)`` for a batch)."""
        f = np.atleast_1d(np.asarray(f, dtype=float))
        return twoport.cascade(self.matrices(f), nfreq=f.size)

    def input_impedance(self, f, z_feedpoint) -> np.ndarray:
        """Impedance seen by the radio [ohm] with the antenna's ``z_feedpoint``."""
        return twoport.input_impedance(self.abcd(f), z_feedpoint)


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


def build_chain(feed: Sequence[Any], r_radio: float = 50.0) -> FeedChain:
    """Turn a design's feed list into a :class:`FeedChain`.

    Parameters
    ----------
    feed : sequence
        ``LineElement | PartElement | TransformerElement | ChokeElement`` from
        :mod:`necflow.config.schema`, listed from the antenna toward the radio.
        An empty list is a direct feed.
    r_radio : float
        The radio's reference impedance [ohm]; transformers take it as their
        radio-side reference (their matched loss is defined there).

    Raises
    ------
    ConfigError
        Unknown line type (``field='feed[i].line'``, ``i`` from 0) or choke
        (``field='feed[i].choke.catalog'``).
    """
    out: list[FeedElement] = []
    for i, el in enumerate(feed):
        if hasattr(el, "line") and getattr(el, "line", None) is not None:
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
                              "'transformer' or 'choke'", field=f"feed[{i}]")
    return FeedChain(tuple(out))
