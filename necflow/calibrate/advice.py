"""Turn field changes into instructions a builder can follow.

Lengths are given in centimetres and inches, part values snapped to the
E12 preferred-number series.
"""

from __future__ import annotations

import numpy as np

from necflow import units
from necflow.config.fields import locate

#: E12 preferred numbers (IEC 60063), one decade.
E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)


def nearest_e12(value: float) -> float:
    """The E12 value nearest to ``value`` in ratio (> 0).

    References
    ----------
    .. [1] IEC 60063:2015, *Preferred number series for resistors and
       capacitors* (the E12 series), from memory.
    """
    if not value > 0:
        raise ValueError("value must be positive")
    exp = np.floor(np.log10(value))
    cands = np.array([m * 10.0 ** e for e in (exp - 1, exp, exp + 1) for m in E12])
    return float(cands[np.argmin(np.abs(np.log(cands / value)))])


def cm_in(metres: float) -> str:
    """``'12.0 cm (4.7 in)'`` of a length in metres (magnitude)."""
    m = abs(metres)
    return f"{m * 100:.1f} cm ({m / 0.0254:.1f} in)"


def _kind(design, path: str) -> str:
    owner, name = locate(design, path)
    return getattr(owner, "kind", "") if name == "value" else ""


def instruction(design, path: str, old: float, new: float) -> str:
    """One sentence saying how to make a change of the field at ``path``."""
    d = new - old
    shape = getattr(design.antenna, "shape", "")
    grow = "add" if d > 0 else "cut"
    if path == "antenna.span" and shape == "doublet":
        return (f"{grow} {cm_in(d / 2)} {'to' if d > 0 else 'from'} each leg "
                f"(span {old:.3f} m -> {new:.3f} m)")
    if path == "antenna.span":
        return (f"{'lengthen' if d > 0 else 'shorten'} the wire by {cm_in(d)} in all, keeping "
                f"the feed point's place (span {old:.3f} m -> {new:.3f} m)")
    if path == "antenna.leg":
        return (f"{grow} {cm_in(d)} {'to' if d > 0 else 'from'} each leg "
                f"(leg {old:.3f} m -> {new:.3f} m)")
    if path.endswith("height"):
        return (f"{'raise' if d > 0 else 'lower'} {path.split('.')[-1].replace('_', ' ')} "
                f"by {cm_in(d)} ({old:.2f} m -> {new:.2f} m)")
    if path.startswith("feed.") and path.endswith(".length"):
        eid = path.split(".")[1]
        return (f"{'lengthen' if d > 0 else 'shorten'} '{eid}' by {cm_in(d)} "
                f"({old:.3f} m -> {new:.3f} m)")
    if path.startswith("feed.") and path.endswith(".value"):
        eid = path.split(".")[1]
        kind = _kind(design, path)
        dim = {"capacitor": "capacitance", "inductor": "inductance"}.get(kind, "resistance")
        std = " (E12 value)" if kind in ("capacitor", "inductor") else ""
        return (f"change '{eid}' from {units.format_quantity(old, dim, digits=4)} to "
                f"{units.format_quantity(new, dim, digits=4)}{std}")
    return f"set {path} from {old:.6g} to {new:.6g}"


def step_order(path: str) -> int:
    """Order of work: antenna first (it moves every band), then lines, then parts."""
    if path.startswith("antenna."):
        return 0
    if path.startswith("ground."):
        return 1
    if path.endswith(".length"):
        return 2
    return 3
