"""The PyNEC engine adapter: the only module that imports PyNEC.

A solve is built in two steps so that later far-field functions can sit
beside :func:`solve_feedpoint`: :func:`_prepare` loads a :class:`WireModel`
into a fresh engine context (geometry, wire loss, ground, source), and
:func:`_sweep` runs the frequencies through it and reads each result with a
caller-given reader.  Every engine failure, and every non-finite result,
becomes an :class:`necflow.errors.EngineError` naming the model key, the
frequency and the step that failed.

Engine conventions (verified against the package): frequencies in MHz,
lengths in metres, source a voltage on one segment, time convention
exp(+j omega t) (inductive reactance positive).
"""

from __future__ import annotations

import importlib.metadata
from collections.abc import Callable

import numpy as np
from PyNEC import nec_context

from necflow.errors import EngineError
from necflow.feed.choke import choke_impedance
from necflow.model.types import Load, WireModel

#: Ground types of the engine's ground card.
_GROUND_TYPE = {"free-space": -1, "reflection": 0, "perfect": 1, "sommerfeld": 2}
#: Load type of the engine's load card for wire conductivity (all segments).
_LOAD_CONDUCTIVITY = 5
#: Load type for a series impedance R + jX on a segment.
_LOAD_IMPEDANCE = 4

_solves = 0


def solve_count() -> int:
    """Number of frequencies solved by this process so far (for tests that
    prove a change needs no solve)."""
    return _solves


def engine_version() -> str:
    """Version of the installed PyNEC package."""
    return importlib.metadata.version("PyNEC")


def _fail(model_key: str, what: str, exc: BaseException | None = None,
          f_hz: float | None = None) -> EngineError:
    at = f" at {f_hz / 1e6:.6g} MHz" if f_hz is not None else ""
    why = f": {type(exc).__name__}: {exc}" if exc is not None else ""
    return EngineError(f"engine failed to {what}{at} (model {model_key[:12]}){why}")


def _prepare(model: WireModel, key: str):
    """A fresh engine context holding the model: geometry, conductor loss,
    ground and a 1 V source on the feed segment."""
    step = "create the engine context"
    try:
        ctx = nec_context()
        step = "load the wire geometry"
        geo = ctx.get_geometry()
        for w in model.wires:
            geo.wire(w.tag, w.segments, *map(float, w.start), *map(float, w.end),
                     float(w.radius), 1.0, 1.0)
        # 1: wire ends at z = 0 connect to the ground (0 in free space).
        ctx.geometry_complete(1 if model.ground.has_ground else 0)
        if model.conductivity is not None:
            step = "apply the wire conductivity"
            ctx.ld_card(_LOAD_CONDUCTIVITY, 0, 0, 0, float(model.conductivity), 0.0, 0.0)
        step = "set the ground"
        g = model.ground
        eps = float(g.permittivity) if g.permittivity is not None else 0.0
        sig = float(g.conductivity) if g.conductivity is not None else 0.0
        ctx.gn_card(_GROUND_TYPE[g.kind], 0, eps, sig, 0.0, 0.0, 0.0, 0.0)
        step = "place the source"
        for s in model.drive():
            ctx.ex_card(0, int(s.tag), int(s.segment), 0, float(s.voltage), 0.0, 0.0, 0.0, 0.0,
                        0.0)
    except EngineError:
        raise
    except Exception as exc:  # the engine raises bare RuntimeErrors
        raise _fail(key, step, exc) from exc
    return ctx


def load_impedance(load: Load, f_hz: float) -> complex:
    """Impedance [ohm] of a common-mode load at ``f_hz`` (a choke's from its
    spec, :func:`necflow.feed.choke.choke_impedance`; a resistance as given);
    its reactance alone in a lossless copy."""
    if load.kind == "resistance":
        z = complex(float(load.spec))
    else:
        z = complex(np.asarray(choke_impedance(np.array([f_hz]), load.spec)).ravel()[0])
    return complex(0.0, z.imag) if load.lossless else z


def apply_loads(ctx, model: WireModel, f_hz: float) -> None:
    """The loads of ``model`` at ``f_hz``: every load cleared, the wire
    conductivity put back, each common-mode load as a series impedance on
    its segment (load card type 4: R and X, set again at each frequency)."""
    if not model.loads:
        return
    ctx.ld_card(-1, 0, 0, 0, 0.0, 0.0, 0.0)
    if model.conductivity is not None:
        ctx.ld_card(_LOAD_CONDUCTIVITY, 0, 0, 0, float(model.conductivity), 0.0, 0.0)
    for ld in model.loads:
        z = load_impedance(ld, f_hz)
        ctx.ld_card(_LOAD_IMPEDANCE, int(ld.tag), int(ld.segment), int(ld.segment),
                    float(z.real), float(z.imag), 0.0)


def _check_frequencies(frequency_hz, key: str) -> np.ndarray:
    f = np.atleast_1d(np.asarray(frequency_hz, dtype=float))
    if f.ndim != 1 or f.size == 0:
        raise EngineError(f"frequencies must be a non-empty 1-D array (model {key[:12]})")
    if not np.all(np.isfinite(f)) or np.any(f <= 0):
        raise EngineError(f"frequencies must be finite and positive (model {key[:12]})")
    return f


def _evenly_spaced(f: np.ndarray) -> bool:
    if f.size < 3:
        return f.size == 2 and f[1] > f[0]
    d = np.diff(f)
    return bool(d[0] > 0 and np.allclose(d, d[0], rtol=1e-9, atol=0.0))


def _sweep(ctx, model: WireModel, f: np.ndarray, key: str,
           read: Callable[[object, int, float], complex]):
    """Run the engine at each frequency in ``f`` [Hz] and return
    ``read(ctx, i, f_i)`` per frequency, in the order of ``f``.

    Evenly spaced increasing frequencies go in one linear-step frequency
    card (one engine run); others one card and one run per frequency.  Both
    paths number the results 0..n-1 in run order.  Measured with PyNEC 2.3.4
    (81 segments, 40 frequencies, Sommerfeld ground): both paths take the same
    time, as the matrix fill and factorisation at each frequency dominate, and
    agree to 1e-10 relative; each result's frequency is checked on reading.
    """
    f_mhz = f / 1e6
    out = []
    if _evenly_spaced(f) and not model.loads:
        step_mhz = float(f_mhz[1] - f_mhz[0]) if f.size > 1 else 0.0
        try:
            ctx.fr_card(0, int(f.size), float(f_mhz[0]), step_mhz)
            ctx.xq_card(0)
        except Exception as exc:
            raise _fail(key, f"solve {f.size} frequencies from", exc, float(f[0])) from exc
        for i, fi in enumerate(f):
            out.append(read(ctx, i, float(fi)))
    else:
        for i, fi in enumerate(f):
            try:
                apply_loads(ctx, model, float(fi))
                ctx.fr_card(0, 1, float(f_mhz[i]), 0.0)
                ctx.xq_card(0)
            except Exception as exc:
                raise _fail(key, "solve", exc, float(fi)) from exc
            out.append(read(ctx, i, float(fi)))
    return out


def _read_impedance(key: str, model: WireModel):
    """Reader of the differential impedance: the drive's 1 V over the drive
    current, ``sum(v_k I_k) / sum(v_k)`` over the sources (one source: its
    own impedance; a split source: over the mean of its halves' currents)."""
    drive = model.drive()
    offset, n = {}, 0
    for w in model.wires:
        offset[w.tag] = n
        n += w.segments
    weight = {offset[s.tag] + s.segment: s.voltage for s in drive}   # engine numbers segments

    def read(ctx, i: int, f_hz: float) -> complex:
        try:
            ip = ctx.get_input_parameters(i)
            z = np.asarray(ip.get_impedance(), dtype=complex).ravel()
            if len(drive) > 1:
                cur = np.asarray(ip.get_current(), dtype=complex).ravel()
                segs = np.asarray(ip.get_segment(), dtype=int).ravel()
            f_got = float(ip.get_frequency())
        except Exception as exc:
            raise _fail(key, "return the feedpoint impedance", exc, f_hz) from exc
        if z.size != len(drive):
            raise _fail(key, f"return {len(drive)} source result(s) (got {z.size})", None, f_hz)
        if len(drive) == 1:
            value = complex(z[0])
        else:
            total = sum(weight.values())
            i_dm = sum(weight[int(s)] * c for s, c in zip(segs, cur)) / total
            value = complex(total / i_dm) if i_dm != 0 else complex(np.inf)
        if not np.isfinite(value):
            raise _fail(key, f"return a finite impedance (got {value})", None, f_hz)
        if not np.isclose(f_got, f_hz, rtol=1e-6):
            raise _fail(key, f"keep the frequency order (result for {f_got / 1e6:.6g} MHz)",
                        None, f_hz)
        return value
    return read


def _read_probes(key: str, model: WireModel):
    """Reader of the drive impedance and the probes' currents per volt."""
    z_read = _read_impedance(key, model)

    def read(ctx, i: int, f_hz: float):
        z = z_read(ctx, i, f_hz)
        try:
            sc = ctx.get_structure_currents(i)
            cur = np.asarray(sc.get_current(), dtype=complex).ravel()
            tags = np.asarray(sc.get_current_segment_tag(), dtype=int).ravel()
            nums = np.asarray(sc.get_current_segment_number(), dtype=int).ravel()
        except Exception as exc:
            raise _fail(key, "return the currents", exc, f_hz) from exc
        first = {}
        for k, t in enumerate(tags):
            first.setdefault(int(t), k)
        base = {w.tag: int(nums[first[w.tag]]) for w in model.wires if w.tag in first}
        out = {}
        for p in model.probes:
            if p.last_tag is not None:
                span = np.flatnonzero((tags >= p.tag) & (tags <= p.last_tag))
                if span.size == 0:
                    raise _fail(key, f"place the current probe '{p.name}'", None, f_hz)
                out[p.name] = complex(cur[span[int(np.argmax(np.abs(cur[span])))]])
                continue
            k = first[p.tag] + (p.segment - 1)
            if int(tags[k]) != p.tag or int(nums[k]) != base[p.tag] + p.segment - 1:
                raise _fail(key, f"place the current probe '{p.name}'", None, f_hz)
            out[p.name] = complex(cur[k])
        return z, out
    return read


def solve_segment_currents(model: WireModel, frequency_hz, tags) -> np.ndarray:
    """Current [A per volt of drive] at the centre of every segment of the
    wires ``tags``, in tag and segment order, ``(nf, nseg)`` complex.

    Raises
    ------
    EngineError
    """
    global _solves
    key = model.key()
    f = _check_frequencies(frequency_hz, key)
    want = np.asarray(sorted(int(t) for t in tags))
    ctx = _prepare(model, key)
    z_read = _read_impedance(key, model)

    def read(ctx, i: int, f_hz: float) -> np.ndarray:
        z_read(ctx, i, f_hz)
        try:
            sc = ctx.get_structure_currents(i)
            cur = np.asarray(sc.get_current(), dtype=complex).ravel()
            t = np.asarray(sc.get_current_segment_tag(), dtype=int).ravel()
        except Exception as exc:
            raise _fail(key, "return the currents", exc, f_hz) from exc
        return cur[np.isin(t, want)]

    rows = _sweep(ctx, model, f, key, read)
    _solves += int(f.size)
    return np.array(rows, dtype=complex)


def solve_feedpoint(model: WireModel, frequency_hz) -> np.ndarray:
    """Feedpoint impedance of a wire model at each frequency.

    Parameters
    ----------
    model : WireModel
        The segmented model; conductor loss is applied when its
        ``conductivity`` is not None, and its ground as given.
    frequency_hz : array_like
        Frequencies [Hz], shape (n,), any order.

    Returns
    -------
    numpy.ndarray
        Complex impedance [ohm], shape (n,), in the order of
        ``frequency_hz``.

    Raises
    ------
    EngineError
        When the engine fails or returns a non-finite value.

    References
    ----------
    .. [1] G. J. Burke and A. J. Poggio, *Numerical Electromagnetics Code
       (NEC) - Method of Moments*, Parts I-III, LLNL 1981 (the method the
       engine implements).
    """
    global _solves
    key = model.key()
    f = _check_frequencies(frequency_hz, key)
    ctx = _prepare(model, key)
    z = np.array(_sweep(ctx, model, f, key, _read_impedance(key, model)), dtype=complex)
    _solves += int(f.size)
    return z


def solve_routed(model: WireModel, frequency_hz) -> tuple[np.ndarray, dict[str, np.ndarray]]:
    """Differential impedance and the probes' currents of a model with its
    feed line's common-mode path (:mod:`necflow.model.route`).

    Returns
    -------
    z : ndarray
        Impedance [ohm] the line's differential mode sees at the feed point,
        ``(n,)``.
    currents : dict of str to ndarray
        Current [A] per volt of differential drive at each probe (each
        choke, the station entry), ``(n,)`` complex.

    Raises
    ------
    EngineError
    """
    global _solves
    key = model.key()
    f = _check_frequencies(frequency_hz, key)
    ctx = _prepare(model, key)
    rows = _sweep(ctx, model, f, key, _read_probes(key, model))
    _solves += int(f.size)
    z = np.array([r[0] for r in rows], dtype=complex)
    currents = {p.name: np.array([r[1][p.name] for r in rows], dtype=complex)
                for p in model.probes}
    return z, currents
