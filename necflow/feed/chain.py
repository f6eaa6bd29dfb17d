"""The feed chain: design elements turned into two-ports.

:func:`build_chain` reads ``design.feed`` (listed from the antenna toward the
radio) and returns a :class:`FeedChain` whose elements each give their ABCD
array for a frequency vector.  The physics lives in :mod:`necflow.feed.line`,
:mod:`necflow.feed.lumped` and :mod:`necflow.feed.transformer`.
"""

from __future__ import annotations

import warnings
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from necflow.catalog.lines import LINE_TYPES, LineType, resolve_line_type
from necflow.errors import ConfigError, NecflowWarning
from necflow.feed import line as tl
from necflow.feed import twoport
from necflow.feed.lumped import part_abcd, part_impedance
from necflow.feed.transformer import transformer_abcd


@dataclass(frozen=True)
class LineSection:
    """A length of line.

    ``model='rlgc'`` (the default) derives R, L, G, C from the line type's
    nominal Z0, velocity factor and attenuation and so has a complex Zc;
    ``model='real-z0'`` keeps Zc = Z0 real (the textbook lossy line).
    """

    id: str
    line_type: LineType
    length: float
    model: str = "rlgc"
    kind: str = field(default="line", init=False)

    @property
    def metadata(self) -> dict[str, Any]:
        return {"line": self.line_type.name, "length_m": self.length,
                "z0_ohm": self.line_type.z0,
                "velocity_factor": self.line_type.velocity_factor, "model": self.model}

    def propagation(self, f) -> tuple[np.ndarray, np.ndarray]:
        """``gamma`` [1/m] and ``Zc`` [ohm] at ``f`` [Hz]."""
        lt = self.line_type
        if self.model == "real-z0":
            alpha = lt.conductor_np_per_m(f) + lt.dielectric_np_per_m(f)
            return tl.propagation_real_z0(f, lt.z0, lt.velocity_factor, alpha)
        r, l, g, c = tl.rlgc_from_nominal(f, lt.z0, lt.velocity_factor,
                                          lt.conductor_np_per_m(f), lt.dielectric_np_per_m(f))
        return tl.propagation_rlgc(f, r, l, g, c)

    def abcd(self, f) -> np.ndarray:
        """``(nfreq, 2, 2)``; warns once if ``f`` leaves the line data's range."""
        f = np.atleast_1d(np.asarray(f, dtype=float))
        lo, hi = self.line_type.valid_range_hz
        outside = (f < lo) | (f > hi)
        if np.any(outside):
            warnings.warn(
                f"feed element '{self.id}': {int(outside.sum())} frequency(ies) outside "
                f"{lo / 1e6:.3g}-{hi / 1e6:.3g} MHz, the range the loss data of line type "
                f"'{self.line_type.name}' support; its loss there is extrapolated",
                NecflowWarning, stacklevel=2)
        gamma, zc = self.propagation(f)
        return tl.line_abcd(gamma, zc, self.length)


@dataclass(frozen=True)
class LumpedPart:
    """A capacitor, inductor or resistor in series or across the line."""

    id: str
    placement: str          # 'series' | 'shunt'
    part: str               # 'capacitor' | 'inductor' | 'resistor'
    value: float            # F, H or ohm
    q: float | None = None
    esr: float | None = None

    @property
    def kind(self) -> str:
        return self.placement

    @property
    def metadata(self) -> dict[str, Any]:
        return {"part": self.part, "value": self.value, "q": self.q, "esr_ohm": self.esr}

    def impedance(self, f) -> np.ndarray:
        """Part impedance [ohm]."""
        return part_impedance(f, self.part, self.value, self.q, self.esr)

    def abcd(self, f) -> np.ndarray:
        return part_abcd(f, self.placement, self.part, self.value, self.q, self.esr)


@dataclass(frozen=True)
class Transformer:
    """Transformer or balun: ideal ratio (antenna : radio) and matched loss."""

    id: str
    ratio: float
    loss_db: float
    r_radio: float = 50.0
    label: str = "transformer"
    loss_model: str = "series"
    kind: str = field(default="transformer", init=False)

    @property
    def metadata(self) -> dict[str, Any]:
        return {"transformer": self.label, "ratio": self.ratio, "loss_db": self.loss_db,
                "r_radio_ohm": self.r_radio, "loss_model": self.loss_model}

    def abcd(self, f) -> np.ndarray:
        return transformer_abcd(f, self.ratio, self.loss_db, self.r_radio, self.loss_model)


FeedElement = LineSection | LumpedPart | Transformer


@dataclass(frozen=True)
class FeedChain:
    """Elements listed from the antenna toward the radio."""

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
        """Whole-chain ABCD, radio at port 1, ``(nfreq, 2, 2)``."""
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


def build_chain(feed: Sequence[Any], r_radio: float = 50.0) -> FeedChain:
    """Turn a design's feed list into a :class:`FeedChain`.

    Parameters
    ----------
    feed : sequence
        ``LineElement | PartElement | TransformerElement`` from
        :mod:`necflow.config.schema`, listed from the antenna toward the radio.
        An empty list is a direct feed.
    r_radio : float
        The radio's reference impedance [ohm]; transformers take it as their
        radio-side reference (their matched loss is defined there).

    Raises
    ------
    ConfigError
        Unknown line type (``field='feed[i].line'``, ``i`` from 0).
    """
    out: list[FeedElement] = []
    for i, el in enumerate(feed):
        if hasattr(el, "line") and getattr(el, "line", None) is not None:
            out.append(LineSection(el.id, _line_type(el, i), el.length))
        elif hasattr(el, "transformer"):
            out.append(Transformer(el.id, el.ratio, el.loss, r_radio, el.transformer,
                                   el.loss_model))
        elif getattr(el, "series", None) or getattr(el, "shunt", None):
            out.append(LumpedPart(el.id, el.placement, el.kind, el.value, el.q, el.esr))
        else:
            raise ConfigError("an element needs one of 'line', 'series', 'shunt' or "
                              "'transformer'", field=f"feed[{i}]")
    return FeedChain(tuple(out))
