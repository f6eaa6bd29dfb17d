"""Alternative feed systems for one antenna, side by side.

Each alternative is a feed chain (antenna side first) analysed against the
same feedpoint impedance as the design, through the same element models:
the design as it is, the design without its series parts, a shack tuner
after the chain (with and without the series parts), a remote tuner at the
feedpoint with one run of coax to the radio, and the user's own (which may
switch elements per band).  The tuner is the design's own tuner element
when it has one, else the report's (``report.tuner``: a high-pass T of
lossy parts, :mod:`necflow.feed.tuners`), set per frequency for the least
loss within its ranges.  An optimised design from a study enters with its
own feedpoint impedance.  All of this is circuit work: no engine solve.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from necflow.analysis.powerflow import SystemResponse, analyse
from necflow.catalog.bands import resolve_bands
from necflow.catalog.lines import LINE_TYPES
from necflow.config.schema import CapacitorSpec, InductorSpec, TunerElement
from necflow.feed.adjustable import MatchingNetwork
from necflow.feed.chain import FeedChain, LineSection, build_chain, matching_network
from necflow.feed.tuners import TunedNetwork, format_value

TUNER_ID = "added tuner"
#: Id of the unbalanced run behind a tuner at the feedpoint.
REMOTE_LINE_ID = "coax"
#: Line that replaces balanced line when the tuner sits at the feedpoint and
#: the chain has no unbalanced line of its own.
DEFAULT_COAX = "rg-213"


@dataclass(frozen=True)
class Alternative:
    """One feed system analysed over the frequencies of the comparison.

    Attributes
    ----------
    name : str
    description : str
        What it changes, in one sentence.
    system : SystemResponse
        Power flow; every tuner in it as set (``system.tuners``).
    tuner : TunedNetwork or None
        The tuner the alternative adds, as set.
    chain : str
        Its chain in words, antenna to radio (:func:`chain_text`).
    """

    name: str
    description: str
    system: SystemResponse
    tuner: TunedNetwork | None = None
    chain: str = ""


def report_tuner(design, tuner_id: str = TUNER_ID) -> MatchingNetwork:
    """The tuner the alternatives add: the design's own first tuner element
    (its ranges, Q and ratings, without its per-band settings), else a
    high-pass T of the report's parts (``report.tuner``)."""
    own = next((e for e in design.feed if getattr(e, "tuner", None) is not None), None)
    if own is not None:
        el = own.model_copy(update={"id": tuner_id, "settings": {}, "switch": None})
    else:
        spec = design.report.tuner
        el = TunerElement(id=tuner_id, tuner="high-pass-t",
                          capacitor=CapacitorSpec(min=spec.capacitor_min,
                                                  max=spec.capacitor_max, q=spec.capacitor_q),
                          inductor=InductorSpec(max=spec.inductor_max, q=spec.inductor_q))
    return matching_network(el, 0, design.radio.impedance)


def _with_tuner(chain: FeedChain, tuner: MatchingNetwork, at: str) -> FeedChain:
    """The chain with a tuner at the radio end or at the feedpoint."""
    if at == "radio":
        return FeedChain(chain.elements + (tuner,), dict(chain.out))
    return FeedChain((tuner,) + chain.elements, dict(chain.out))


def remote_chain(chain: FeedChain, line: str | None = None,
                 length: float | None = None) -> FeedChain:
    """The chain a matching unit at the feedpoint drives: one run of
    unbalanced line to the radio.

    A remote matching unit replaces the balanced section, the series parts
    and the balun: the unit sits at the antenna and coax runs from it to the
    radio.

    Parameters
    ----------
    chain : FeedChain
        The design's chain (antenna side first).
    line : str, optional
        Catalog line type of the run (default: the chain's first unbalanced
        line, else RG-213).
    length : float, optional
        Length of the run [m] (default: the total length of the chain's
        lines, the distance the design's feed covers).

    Returns
    -------
    FeedChain
        One line section (id ``'coax'``), or no element when the design has
        no line and no length is given.
    """
    if line is not None:
        coax = LINE_TYPES[line]
    else:
        coax = next((e.line_type for e in chain.elements
                     if isinstance(e, LineSection) and not e.line_type.balanced),
                    LINE_TYPES[DEFAULT_COAX])
    if length is None:
        length = sum(e.length for e in chain.elements
                     if isinstance(e, LineSection) and e.id not in chain.out)
    if length <= 0:
        return FeedChain(())
    return FeedChain((LineSection(REMOTE_LINE_ID, coax, float(length)),))


def element_label(e) -> str:
    """One element in words, e.g. ``ladder: twin-lead-300, 15 m``."""
    if isinstance(e, LineSection):
        kind = "balanced" if e.line_type.balanced else "unbalanced"
        return f"{e.id}: {e.line_type.name} ({kind}), {e.length:.4g} m"
    if isinstance(e, (MatchingNetwork, TunedNetwork)):
        parts = ", ".join(f"{n} {format_value(p.kind, p.minimum)}-"
                          f"{format_value(p.kind, p.maximum)}" if not p.discrete else
                          f"{n} {len(p.values)} values" for n, p in e.tuner.parts.items())
        return f"{e.id}: {e.tuner.topology} tuner ({parts})"
    if e.kind in ("series", "shunt"):
        unit, scale = {"capacitor": ("pF", 1e12), "inductor": ("uH", 1e6),
                       "resistor": ("ohm", 1.0)}[e.part]
        return f"{e.id}: {e.kind} {e.part} {e.value * scale:.4g} {unit}"
    if e.kind == "transformer":
        return f"{e.id}: {e.label} {e.ratio:.4g}:1"
    if e.kind == "choke":
        return f"{e.id}: common-mode choke"
    return e.id


def chain_text(chain: FeedChain) -> str:
    """The chain in words from the antenna to the radio (a switched element
    says so)."""
    return " -> ".join(["antenna"] + [element_label(e) + (" [switched]" if e.id in chain.out
                                                          else "")
                                      for e in chain.elements] + ["radio"])


def standard_alternatives(design, f, z_feed, chain: FeedChain) -> list[Alternative]:
    """The design; without its series parts (only when it has some); a
    shack tuner after the chain, with the series parts and, when it has
    some, without them; a remote tuner at the feedpoint (then one
    unbalanced run to the radio, see :func:`remote_chain`); then the design
    file's own alternatives.

    Parameters
    ----------
    design : Design
    f : ndarray
        Frequency [Hz], ``(n,)``.
    z_feed : ndarray
        Antenna feedpoint impedance [ohm], ``(n,)``.
    chain : FeedChain
        The design's own feed chain.
    """
    z_ref, power = design.radio.impedance, design.radio.power
    spec = design.report.tuner
    tuner = report_tuner(design)

    def run(c: FeedChain) -> SystemResponse:
        return analyse(c, f, z_feed, z_ref=z_ref, power_w=power)

    def alt(name, text, c, added=None):
        s = run(c)
        return Alternative(name, text, s, s.tuners.get(added) if added else None,
                           chain=chain_text(c))

    series = [e.id for e in chain.elements if e.kind == "series"]
    no_tuner = chain.with_elements([e for e in chain.elements if e.kind != "tuner"])
    bare = no_tuner.with_elements([e for e in no_tuner.elements if e.kind != "series"])
    remote = remote_chain(no_tuner, spec.remote_line, spec.remote_length)
    run_text = (f"{remote.elements[0].line_type.name} of {remote.elements[0].length:.4g} m"
                if remote.elements else "no line")
    what = f"a {tuner.tuner.topology} tuner"
    out = [alt("as designed", "the feed system of the design file", chain)]
    if series:
        mine = chain.with_elements([e for e in chain.elements if e.kind != "series"])
        out.append(alt("without series parts", "the design without " + ", ".join(series),
                       mine))
    # a design that already ends in a tuner at the radio is its own shack-tuner row
    shack = not (chain.elements and chain.elements[-1].kind == "tuner")
    removed = " (its own tuner taken out)" if len(no_tuner) < len(chain) else ""
    if shack:
        out.append(alt("shack tuner", f"the design's chain{removed}, then {what} in the shack",
                       _with_tuner(no_tuner, tuner, "radio"), TUNER_ID))
    if series and shack:
        out.append(alt("shack tuner without series parts", f"the design without "
                       f"{', '.join(series)}, then {what} in the shack",
                       _with_tuner(bare, tuner, "radio"), TUNER_ID))
    out.append(alt("remote tuner at the feedpoint", f"{what} at the antenna in place of the "
                   f"balanced line, parts and balun, then {run_text} to the radio",
                   _with_tuner(remote, tuner, "feedpoint"), TUNER_ID))
    bands = resolve_bands(design)
    for a in design.report.alternatives:
        c = build_chain(a.feed, r_radio=z_ref, bands=bands)
        added = None
        if a.tuner != "none":
            c, added = _with_tuner(c, tuner, a.tuner), TUNER_ID
        out.append(alt(a.name, "from the design file", c, added))
    return out


def optimised_alternative(best_design, f, z_feed_best, chain: FeedChain) -> Alternative:
    """The optimised design of a study (its own feed ``chain``), with its own
    feedpoint impedance."""
    z_ref = best_design.radio.impedance
    system = analyse(chain, f, z_feed_best, z_ref=z_ref, power_w=best_design.radio.power)
    return Alternative("optimised", "the best design of the study", system,
                       chain=chain_text(chain))


def system_gain_dbi(antenna_gain_dbi, total_loss_db) -> np.ndarray:
    """System gain: antenna power gain less the feed system's total loss.

    Parameters
    ----------
    antenna_gain_dbi : array_like
        Antenna power gain [dBi] (wire and ground loss included).
    total_loss_db : array_like
        Available power of the radio over power delivered to the feedpoint
        [dB] (mismatch at the radio included).

    Returns
    -------
    ndarray
        Gain referred to the radio's available power [dBi].

    References
    ----------
    .. [1] C. A. Balanis, *Antenna Theory*, 3rd ed., Wiley 2005, sec. 2.9
       (power gain against input power; the feed loss converts input power
       to the source's available power).
    """
    return np.asarray(antenna_gain_dbi, dtype=float) - np.asarray(total_loss_db, dtype=float)
