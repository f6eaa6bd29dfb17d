"""Data types of the segmented wire model (SI units throughout).

A :class:`WireModel` holds everything that determines one method-of-moments
solve at a given frequency: the segmented straight wires, the source
segment, the ground and the conductor material.  Its :meth:`WireModel.key`
is the cache key of a solve.
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass
from functools import cached_property
from typing import NamedTuple

import numpy as np


class WireSpan(NamedTuple):
    """A straight wire of the antenna's geometry, before segmentation.

    ``start`` and ``end`` are points [m] (x along the span, y across, z up),
    ``radius`` [m].
    """

    name: str
    start: np.ndarray
    end: np.ndarray
    radius: float


class FeedLocation(NamedTuple):
    """Where the feed point sits: a wire (0-based index into the geometry's
    wire list) and the distance [m] along it from its start."""

    wire: int
    distance: float


@dataclass(frozen=True, eq=False)
class Wire:
    """One straight, uniformly segmented wire of the model.

    Attributes
    ----------
    tag : int
        Engine tag, 1-based and unique in the model.
    name : str
        Label for messages and summaries.
    start, end : numpy.ndarray
        End points, shape (3,) [m].
    radius : float
        Conductor radius [m].
    segments : int
        Number of equal segments (at least 1).
    """

    tag: int
    name: str
    start: np.ndarray
    end: np.ndarray
    radius: float
    segments: int

    @cached_property
    def length(self) -> float:
        """Wire length [m] (computed once: graded models have many wires and
        the rule checks ask often)."""
        return float(np.linalg.norm(self.end - self.start))

    @property
    def segment_length(self) -> float:
        """Length of each segment [m]."""
        return self.length / self.segments


@dataclass(frozen=True)
class GroundModel:
    """The ground as the engine sees it.

    Attributes
    ----------
    kind : str
        ``'free-space'``, ``'perfect'``, ``'reflection'`` (reflection-
        coefficient approximation) or ``'sommerfeld'`` (Sommerfeld-Norton).
    permittivity : float or None
        Relative permittivity [1] of a finite ground, else None.
    conductivity : float or None
        Conductivity [S/m] of a finite ground, else None.
    surface : str or None
        Catalog surface the constants came from, if any.
    """

    kind: str
    permittivity: float | None = None
    conductivity: float | None = None
    surface: str | None = None

    @property
    def has_ground(self) -> bool:
        """True unless the antenna is in free space."""
        return self.kind != "free-space"


def _r(x: float) -> str:
    """Canonical text of a float: 9 significant digits (far below any
    physical tolerance, far above floating-point noise); -0 reads as 0."""
    return f"{float(x) + 0.0:.9g}"


def _xyz(p: np.ndarray) -> list[str]:
    """Canonical text of a point: rounded to 1 nm, far below any antenna
    dimension, so round-off in coordinate arithmetic does not change a key."""
    return [_r(round(float(v), 9)) for v in p]


@dataclass(frozen=True)
class Source:
    """A voltage source on a segment: ``voltage`` is its share of the 1 V
    differential drive (0.5 on each half of a split source)."""

    tag: int
    segment: int
    voltage: float


@dataclass(frozen=True)
class Load:
    """A lumped load on a segment of the common-mode path.

    ``kind`` 'choke' (``spec`` a ChokeSpec, a catalog entry or its name; its
    impedance is evaluated at each frequency) or 'resistance' (``spec`` in
    ohm); ``name`` the feed element's id or 'entry'."""

    name: str
    tag: int
    segment: int
    kind: str
    spec: object
    lossless: bool = False

    def spec_text(self) -> str:
        s = self.spec
        if hasattr(s, "model_dump_json"):
            return s.model_dump_json()
        if hasattr(s, "name") and not isinstance(s, str):
            return f"catalog:{s.name}"
        return repr(s)


@dataclass(frozen=True)
class Probe:
    """A segment whose current is read (per volt of drive); with
    ``last_tag``, the segment of largest current magnitude among the wires
    ``tag`` to ``last_tag`` (``segment`` unused)."""

    name: str
    tag: int
    segment: int
    last_tag: int | None = None


@dataclass(frozen=True, eq=False)
class WireModel:
    """A segmented wire model, ready for the engine.

    Attributes
    ----------
    wires : tuple of Wire
        The wires, tags 1..n in order.
    feed_tag : int
        Tag of the wire carrying the voltage source.
    feed_segment : int
        1-based segment of that wire carrying the source.
    ground : GroundModel
        The ground.
    conductivity : float or None
        Conductivity of the wire material [S/m]; None is lossless.
    sources : tuple of Source
        The sources when the feed line is modelled (a split source); empty:
        one 1 V source on ``feed_tag``, ``feed_segment``.
    loads : tuple of Load
        Loads on the common-mode path (chokes, the entry's resistance).
    probes : tuple of Probe
        Segments whose currents are read (chokes, the station entry).
    """

    wires: tuple[Wire, ...]
    feed_tag: int
    feed_segment: int
    ground: GroundModel
    conductivity: float | None
    sources: tuple[Source, ...] = ()
    loads: tuple[Load, ...] = ()
    probes: tuple[Probe, ...] = ()

    @property
    def routed(self) -> bool:
        """True when the feed line's common-mode path is part of the model."""
        return bool(self.sources)

    def drive(self) -> tuple[Source, ...]:
        """The sources of the 1 V differential drive."""
        return self.sources or (Source(self.feed_tag, self.feed_segment, 1.0),)

    @property
    def segment_count(self) -> int:
        """Total number of segments."""
        return sum(w.segments for w in self.wires)

    @property
    def feed_wire(self) -> Wire:
        """The wire that carries the source."""
        return next(w for w in self.wires if w.tag == self.feed_tag)

    def feed_point(self) -> np.ndarray:
        """Centre of the source segment [m], shape (3,)."""
        w = self.feed_wire
        t = (self.feed_segment - 0.5) / w.segments
        return w.start + t * (w.end - w.start)

    def key(self) -> str:
        """SHA-256 of everything that determines a solve (hex text).

        Coordinates and radii are rounded to 9 significant digits, so two
        models built from the same design on different runs share a key.
        Wire names do not enter the key.
        """
        data = {
            "wires": [[w.tag, w.segments, _xyz(w.start), _xyz(w.end),
                       _r(w.radius)] for w in self.wires],
            "feed": [self.feed_tag, self.feed_segment],
            "ground": [self.ground.kind,
                       None if self.ground.permittivity is None else _r(self.ground.permittivity),
                       None if self.ground.conductivity is None else _r(self.ground.conductivity)],
            "conductivity": None if self.conductivity is None else _r(self.conductivity),
        }
        if self.routed:
            data["sources"] = [[s.tag, s.segment, _r(s.voltage)] for s in self.sources]
            data["loads"] = [[ld.tag, ld.segment, ld.kind, ld.spec_text(), ld.lossless]
                             for ld in self.loads]
            data["probes"] = [[p.name, p.tag, p.segment] for p in self.probes]
        text = json.dumps(data, sort_keys=True, separators=(",", ":"))
        return hashlib.sha256(text.encode()).hexdigest()
