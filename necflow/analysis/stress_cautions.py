"""One-line cautions about component and line stress."""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from typing import Any

import numpy as np

from necflow.analysis.powerflow import SystemResponse
from necflow.analysis.stress_table import THROUGH_POWER_KINDS

_RATING_FIELDS = ("voltage_rating", "current_rating", "power_rating")


def ratings_of(feed: Iterable[Any]) -> dict[str, dict[str, float]]:
    """Ratings of the design's feed elements: ``{id: {field: value}}``.

    Reads ``voltage_rating`` [V peak], ``current_rating`` [A RMS] and
    ``power_rating`` [W] where the schema element has them and they are set.
    """
    out: dict[str, dict[str, float]] = {}
    for el in feed:
        got = {k: getattr(el, k) for k in _RATING_FIELDS if getattr(el, k, None) is not None}
        if got:
            out[el.id] = got
        if getattr(el, "tuner", None) is not None:     # a tuner's parts: '<id>.c1' ...
            caps = ("c",) if el.tuner == "l-network" else ("c1", "c2")
            for name in caps:
                rating = el.capacitor_for(name).voltage_rating
                if rating is not None:
                    out[f"{el.id}.{name}"] = {"voltage_rating": rating}
            if el.inductor.current_rating is not None:
                out[f"{el.id}.l"] = {"current_rating": el.inductor.current_rating}
    return out


def _worst(values: np.ndarray, f: np.ndarray) -> tuple[float, float]:
    k = int(np.nanargmax(values))
    return float(values[k]), float(f[k])


def cautions(system: SystemResponse, voltage_threshold: float | None = None,
             ratings: Mapping[str, Mapping[str, float]] | Iterable[Any] | None = None
             ) -> list[str]:
    """Cautions for high voltage and exceeded ratings, one line each.

    Parameters
    ----------
    system : SystemResponse
        Result of :func:`necflow.analysis.powerflow.analyse`.
    voltage_threshold : float, optional
        Peak voltage [V] above which any element draws a caution.
    ratings : mapping or iterable, optional
        ``{id: {"voltage_rating": V, "current_rating": A, "power_rating": W}}``
        or the design's feed elements (read with :func:`ratings_of`).
        A part's power rating is compared with its dissipation, a
        transformer's and a choke's with the power passing through it.

    Returns
    -------
    list of str
        One line per element and kind of excess, at its worst frequency.
    """
    if ratings is None:
        ratings = {}
    elif not isinstance(ratings, Mapping):
        ratings = ratings_of(ratings)
    f = system.f
    out: list[str] = []
    for eid, net in system.tuners.items():
        off = system.relays[eid].out if eid in system.relays else np.zeros(f.size, bool)
        bad = ~np.asarray(net.can_match, dtype=bool) & ~off
        if bad.any():
            k = int(np.flatnonzero(bad)[0])
            out.append(f"{eid}: cannot match at {int(bad.sum())} of {int((~off).sum())} "
                       f"points, {f[bad].min() / 1e6:.4g}-{f[bad].max() / 1e6:.4g} MHz "
                       f"({net.reason[k]}); those points are reported as not matched")
    for eid in system.element_ids:
        s = system.stress[eid]
        for name, part in (s.parts or {}).items():
            pid = f"{eid}.{name.lower()}"
            prate = ratings.get(pid, {})
            for key, arr, what, unit in (("voltage_rating", part["v_peak"], "peak voltage",
                                          "V"),
                                         ("current_rating", part["i_rms"], "RMS current",
                                          "A")):
                if key in prate and np.isfinite(arr).any() and np.nanmax(arr) > prate[key]:
                    x, fq = _worst(arr, f)
                    out.append(f"{pid}: {what} {x:.4g} {unit} at {fq / 1e6:.4g} MHz exceeds "
                               f"its {prate[key]:.4g} {unit} rating")
        rate = ratings.get(eid, {})
        if voltage_threshold is not None and np.nanmax(s.v_peak) > voltage_threshold:
            v, fq = _worst(s.v_peak, f)
            out.append(f"{eid}: peak voltage {v:.0f} V at {fq / 1e6:.4g} MHz is above the "
                       f"caution level of {voltage_threshold:.0f} V")
        if "voltage_rating" in rate and np.nanmax(s.v_peak) > rate["voltage_rating"]:
            v, fq = _worst(s.v_peak, f)
            out.append(f"{eid}: peak voltage {v:.0f} V at {fq / 1e6:.4g} MHz exceeds its "
                       f"{rate['voltage_rating']:.0f} V rating")
        if "current_rating" in rate and np.nanmax(s.i_rms) > rate["current_rating"]:
            i, fq = _worst(s.i_rms, f)
            out.append(f"{eid}: RMS current {i:.2f} A at {fq / 1e6:.4g} MHz exceeds its "
                       f"{rate['current_rating']:.2f} A rating")
        if "power_rating" in rate:
            through = s.kind in THROUGH_POWER_KINDS
            p = s.p_in_w if through else s.p_diss_w
            what = "through-power" if through else "dissipation"
            if np.nanmax(p) > rate["power_rating"]:
                pw, fq = _worst(p, f)
                out.append(f"{eid}: {what} {pw:.1f} W at {fq / 1e6:.4g} MHz exceeds its "
                           f"{rate['power_rating']:.1f} W rating")
    return out
