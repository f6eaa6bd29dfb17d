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
from necflow.model.types import WireModel

#: Ground types of the engine's ground card.
_GROUND_TYPE = {"free-space": -1, "reflection": 0, "perfect": 1, "sommerfeld": 2}
#: Load type of the engine's load card for wire conductivity (all segments).
_LOAD_CONDUCTIVITY = 5

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
        ctx.ex_card(0, model.feed_tag, model.feed_segment, 0, 1.0, 0.0, 0.0, 0.0, 0.0, 0.0)
    except EngineError:
        raise
    except Exception as exc:  # the engine raises bare RuntimeErrors
        raise _fail(key, step, exc) from exc
    return ctx


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


def _sweep(ctx, f: np.ndarray, key: str, read: Callable[[object, int, float], complex]):
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
    if _evenly_spaced(f):
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
                ctx.fr_card(0, 1, float(f_mhz[i]), 0.0)
                ctx.xq_card(0)
            except Exception as exc:
                raise _fail(key, "solve", exc, float(fi)) from exc
            out.append(read(ctx, i, float(fi)))
    return out


def _read_impedance(key: str):
    def read(ctx, i: int, f_hz: float) -> complex:
        try:
            ip = ctx.get_input_parameters(i)
            z = np.asarray(ip.get_impedance(), dtype=complex).ravel()
            f_got = float(ip.get_frequency())
        except Exception as exc:
            raise _fail(key, "return the feedpoint impedance", exc, f_hz) from exc
        if z.size != 1:
            raise _fail(key, f"return one feedpoint impedance (got {z.size})", None, f_hz)
        if not np.isfinite(z[0]):
            raise _fail(key, f"return a finite impedance (got {z[0]})", None, f_hz)
        if not np.isclose(f_got, f_hz, rtol=1e-6):
            raise _fail(key, f"keep the frequency order (result for {f_got / 1e6:.6g} MHz)",
                        None, f_hz)
        return complex(z[0])
    return read


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
    z = np.array(_sweep(ctx, f, key, _read_impedance(key)), dtype=complex)
    _solves += int(f.size)
    return z
