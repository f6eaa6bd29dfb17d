"""Modelling-rule checks of a built wire model.

The builder picks segments from the design's settings; these checks judge
the result against the method-of-moments modelling rules, so a coarse
``segments_per_wavelength`` or a fat wire gets the rule it breaks named.

Rules from G. J. Burke and A. J. Poggio, *Numerical Electromagnetics Code
(NEC) - Method of Moments*, Part III: User's Guide, Lawrence Livermore
National Laboratory, 1981 (from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import speed_of_light
from scipy.spatial import cKDTree

from necflow.catalog.lines import resolve_line_type
from necflow.config.schema import Design
from necflow.model.types import WireModel

RULE_MAX_SEGMENT = "NEC-2 guide: segment length <= 0.1 wavelength"
RULE_CRITICAL_SEGMENT = "NEC-2 guide: segment length <= 0.05 wavelength at the source"
RULE_MIN_SEGMENT = "NEC-2 guide: segment length >= 0.001 wavelength"
RULE_THIN_WIRE = "NEC-2 guide: segment length / radius >= 8 (thin-wire kernel)"
RULE_REFLECTION_HEIGHT = ("NEC-2 guide: reflection-coefficient ground needs height >= ~0.2 "
                          "wavelength")
RULE_REFLECTION_CONTACT = ("NEC-2 guide: wires connected to the ground need a perfect or "
                           "Sommerfeld-Norton ground")
RULE_JUNCTION_RATIO = "NEC-2 guide: nearly equal segment lengths at junctions (ratio <= 2)"
RULE_COINCIDENT_ENDS = "NEC-2 guide: connected wire ends must coincide"
RULE_UNBALANCED_JUNCTION = "model limit: a balanced line joined to coax needs a current balun"

#: Thresholds of the rules above (wavelengths or plain ratios).
MAX_SEGMENT_WL = 0.1
CRITICAL_SEGMENT_WL = 0.05
MIN_SEGMENT_WL = 1e-3
THIN_WIRE_RATIO = 8.0
#: Below this ratio even the extended thin-wire kernel fails (guide: about 2).
EXTENDED_KERNEL_RATIO = 2.0
REFLECTION_MIN_HEIGHT_WL = 0.2
JUNCTION_MAX_RATIO = 2.0

#: Slack on thresholds for float round-off (a builder that cuts exactly
#: lambda/10 segments must not trip the 0.1-wavelength rule).
_SLACK = 1e-9


@dataclass(frozen=True)
class Finding:
    """One modelling-rule finding.

    Attributes
    ----------
    rule : str
        The rule applied, in words, naming its source.
    severity : str
        ``'error'`` (results not trustworthy), ``'warning'`` (accuracy at
        risk) or ``'note'``.
    message : str
        What was found, with numbers.
    wire : str or None
        Name of the wire concerned, if one.
    """

    rule: str
    severity: str
    message: str
    wire: str | None = None


def _segment_rules(model: WireModel, lam_min: float, lam_max: float) -> list[Finding]:
    out = []
    for w in model.wires:
        seg = w.segment_length
        wl_top = seg / lam_min
        if wl_top > MAX_SEGMENT_WL * (1 + _SLACK):
            out.append(Finding(RULE_MAX_SEGMENT, "error",
                               f"segments are {wl_top:.3g} wavelength long at the highest "
                               "frequency; raise model.segments_per_wavelength", w.name))
        elif w.tag == model.feed_tag and wl_top > CRITICAL_SEGMENT_WL * (1 + _SLACK):
            out.append(Finding(RULE_CRITICAL_SEGMENT, "warning",
                               f"the source segment is {wl_top:.3g} wavelength long at the "
                               "highest frequency; 20 or more segments per wavelength keep "
                               "the feedpoint impedance accurate", w.name))
        wl_low = seg / lam_max
        if wl_low < MIN_SEGMENT_WL * (1 - _SLACK):
            out.append(Finding(RULE_MIN_SEGMENT, "warning",
                               f"segments are only {wl_low:.3g} wavelength long at the lowest "
                               "frequency; numerical precision suffers", w.name))
        ratio = seg / w.radius
        if ratio < THIN_WIRE_RATIO * (1 - _SLACK):
            sev = "error" if ratio < EXTENDED_KERNEL_RATIO else "warning"
            out.append(Finding(RULE_THIN_WIRE, sev,
                               f"segment length is only {ratio:.3g} times the wire radius; "
                               "use fewer segments per wavelength or a thinner wire", w.name))
    return out


def _ground_rules(model: WireModel, lam_max: float) -> list[Finding]:
    if model.ground.kind != "reflection":
        return []
    z = min(min(w.start[2], w.end[2]) for w in model.wires)
    if z <= 0.0:
        names = [w.name for w in model.wires if min(w.start[2], w.end[2]) <= 0.0]
        return [Finding(RULE_REFLECTION_CONTACT, "error",
                        "a wire touches the ground, which the reflection-coefficient model "
                        "cannot represent; use a 'sommerfeld' or 'perfect' ground", names[0])]
    h = z / lam_max
    if h < REFLECTION_MIN_HEIGHT_WL:
        return [Finding(RULE_REFLECTION_HEIGHT, "warning",
                        f"the lowest wire point is {h:.3g} wavelength above ground at the "
                        "lowest frequency; use a 'sommerfeld' ground this close")]
    return []


def _junction_rules(model: WireModel) -> list[Finding]:
    wires = model.wires
    if len(wires) < 2:
        return []
    # Only ends closer than half the longest segment can break a rule below: a
    # k-d tree finds those pairs without trying every pair of wires (graded
    # models have a hundred wires and more), and numpy sorts them out at once.
    ends = np.array([p for w in wires for p in (w.start, w.end)], dtype=float)
    seg = np.array([w.segment_length for w in wires])
    ij = cKDTree(ends).query_pairs(0.5 * float(seg.max()), output_type="ndarray")
    ij = np.sort(ij.reshape(-1, 2), axis=1)
    ij = ij[ij[:, 0] // 2 != ij[:, 1] // 2]
    gap = np.linalg.norm(ends[ij[:, 0]] - ends[ij[:, 1]], axis=1)
    shorter = np.minimum(seg[ij[:, 0] // 2], seg[ij[:, 1] // 2])
    keep = (gap == 0.0) | (gap < 0.5 * shorter)
    # two ends joined by a wire of their own (a short source between two
    # wires, with a line attached at its middle) are connected, not a near miss
    node = {}
    for idx, p in enumerate(map(tuple, ends)):
        node.setdefault(p, []).append(idx)
    links = set()
    for k in range(len(wires)):
        for i in node[tuple(ends[2 * k])]:
            for j in node[tuple(ends[2 * k + 1])]:
                links.add((min(i, j), max(i, j)))
    keep &= np.array([(gap[n] == 0.0) or (int(a), int(b)) not in links
                      for n, (a, b) in enumerate(ij)], dtype=bool)
    out = []
    for (i, j), g in sorted(zip(map(tuple, ij[keep]), gap[keep])):
        a, b = wires[i // 2], wires[j // 2]
        if g == 0.0:
            r = max(a.segment_length, b.segment_length) / min(a.segment_length, b.segment_length)
            if r > JUNCTION_MAX_RATIO * (1 + _SLACK):
                out.append(Finding(RULE_JUNCTION_RATIO, "warning",
                                   f"segments of '{a.name}' and '{b.name}' differ by a "
                                   f"factor {r:.3g} where they join", a.name))
        else:
            out.append(Finding(RULE_COINCIDENT_ENDS, "warning",
                               f"ends of '{a.name}' and '{b.name}' are {g:.3g} m "
                               "apart: make them the same point if they are meant to "
                               "join, or move them apart", a.name))
    return out


def check_rules(model: WireModel, design: Design, f_min_hz: float,
                f_max_hz: float) -> list[Finding]:
    """Apply the modelling rules to a built model.

    Parameters
    ----------
    model : WireModel
        The built model.
    design : Design
        Its design (kept for rules that need settings; not altered).
    f_min_hz, f_max_hz : float
        Lowest and highest frequency to be solved [Hz].

    Returns
    -------
    list of Finding
        Empty when every rule holds.

    References
    ----------
    .. [1] G. J. Burke and A. J. Poggio, *Numerical Electromagnetics Code
       (NEC) - Method of Moments*, Part III, LLNL 1981 (from memory).
    """
    lam_min = speed_of_light / f_max_hz
    lam_max = speed_of_light / f_min_hz
    return (_segment_rules(model, lam_min, lam_max) + _ground_rules(model, lam_max)
            + _junction_rules(model) + _route_rules(design))


def _route_rules(design: Design) -> list[Finding]:
    """A balanced line joined straight to an unbalanced one, with a route: the
    shield then carries one conductor's current on its outside, a drive of
    the common mode the model does not include (see DEVELOPERS.md)."""
    if design.route is None:
        return []
    prev = None
    for el in design.feed:
        if getattr(el, "line", None) is not None:
            lt = resolve_line_type(el.line, el.impedance, el.velocity_factor, el.loss,
                                   el.balanced)
            if prev is not None and prev[1] and not lt.balanced:
                return [Finding(RULE_UNBALANCED_JUNCTION, "warning",
                                f"'{prev[0]}' (balanced) meets '{el.id}' (coax) with no current "
                                "balun between them: the common mode this junction drives is "
                                "not in the model, so its common-mode figures are optimistic "
                                "(a choke there limits that drive); a current balun there is "
                                "modelled exactly")]
            prev = (el.id, lt.balanced)
        elif getattr(el, "transformer", None) is not None:
            # a current balun forces equal and opposite currents: the junction
            # below it is balanced; a voltage balun or an unun does not
            prev = None if getattr(el, "effective_balun_kind", None) == "current" else prev
    return []
