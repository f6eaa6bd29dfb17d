"""Alternative feed systems for one antenna, side by side.

Each alternative is a feed chain (antenna side first) analysed against the
same feedpoint impedance as the design: the design as it is, the design
without its series parts, a matching unit (lossy L-network, see
:mod:`necflow.feed.matching`) at the radio or at the feedpoint, and the
user's own.  An optimised design from a study enters with its own
feedpoint impedance.  All of this is circuit work: no engine solve.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from necflow.analysis.powerflow import SystemResponse, analyse
from necflow.catalog.lines import LINE_TYPES
from necflow.feed.chain import FeedChain, LineSection, build_chain
from necflow.feed.matching import MatchingUnit, tune_l_network

TUNER_ID = "matching unit"
#: Id of the unbalanced run behind a matching unit at the feedpoint.
REMOTE_LINE_ID = "coax"
#: Line that replaces balanced line when the matching unit sits at the
#: feedpoint and the chain has no unbalanced line of its own.
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
        Power flow with the matching unit as element ``TUNER_ID`` if any.
    tuner : MatchingUnit or None
    chain : str
        Its chain in words, antenna to radio (:func:`chain_text`).
    """

    name: str
    description: str
    system: SystemResponse
    tuner: MatchingUnit | None = None
    chain: str = ""


def _with_tuner(chain: FeedChain, f, z_feed, z_ref, spec, at: str):
    """The chain with a matching unit tuned at the radio end or the feedpoint."""
    if at == "radio":
        load = chain.input_impedance(f, z_feed)
        unit = tune_l_network(f, load, z_ref, q_inductor=spec.inductor_q,
                              q_capacitor=spec.capacitor_q, max_swr=spec.max_swr, id=TUNER_ID)
        return FeedChain(chain.elements + (unit,)), unit
    unit = tune_l_network(f, z_feed, z_ref, q_inductor=spec.inductor_q,
                          q_capacitor=spec.capacitor_q, max_swr=spec.max_swr, id=TUNER_ID)
    return FeedChain((unit,) + chain.elements), unit


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
        length = sum(e.length for e in chain.elements if isinstance(e, LineSection))
    if length <= 0:
        return FeedChain(())
    return FeedChain((LineSection(REMOTE_LINE_ID, coax, float(length)),))


def element_label(e) -> str:
    """One element in words, e.g. ``ladder: twin-lead-300, 15 m``."""
    if isinstance(e, LineSection):
        kind = "balanced" if e.line_type.balanced else "unbalanced"
        return f"{e.id}: {e.line_type.name} ({kind}), {e.length:.4g} m"
    if isinstance(e, MatchingUnit):
        return f"{e.id}: {e.metadata.get('matching_unit', 'matching unit')}"
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
    """The chain in words from the antenna to the radio."""
    return " -> ".join(["antenna"] + [element_label(e) for e in chain.elements] + ["radio"])


def standard_alternatives(design, f, z_feed, chain: FeedChain) -> list[Alternative]:
    """The design, without its series parts (only when it has some), with a
    matching unit at the radio and at the feedpoint (then one unbalanced run
    to the radio, see :func:`remote_chain`), then the design file's own
    alternatives.

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

    def run(c: FeedChain) -> SystemResponse:
        return analyse(c, f, z_feed, z_ref=z_ref, power_w=power)

    series = [e.id for e in chain.elements if e.kind == "series"]
    bare = FeedChain(tuple(e for e in chain.elements if e.kind != "series"))
    radio_chain, radio_unit = _with_tuner(chain, f, z_feed, z_ref, spec, "radio")
    remote = remote_chain(chain, spec.remote_line, spec.remote_length)
    feed_chain, feed_unit = _with_tuner(remote, f, z_feed, z_ref, spec, "feedpoint")
    run_text = (f"{remote.elements[0].line_type.name} of {remote.elements[0].length:.4g} m"
                if remote.elements else "no line")
    out = [Alternative("as designed", "the feed system of the design file", run(chain),
                       chain=chain_text(chain))]
    if series:
        out.append(Alternative("without series parts", "the design without "
                               + ", ".join(series), run(bare), chain=chain_text(bare)))
    out += [
        Alternative("matching unit at the radio", "the design with a matching unit between "
                    "the chain and the radio", run(radio_chain), radio_unit,
                    chain=chain_text(radio_chain)),
        Alternative("matching unit at the feedpoint", "a matching unit at the antenna in "
                    f"place of the balanced line, parts and balun, then {run_text} to the "
                    "radio", run(feed_chain), feed_unit, chain=chain_text(feed_chain)),
    ]
    for alt in design.report.alternatives:
        c = build_chain(alt.feed, r_radio=z_ref)
        unit = None
        if alt.tuner != "none":
            c, unit = _with_tuner(c, f, z_feed, z_ref, spec, alt.tuner)
        out.append(Alternative(alt.name, "from the design file", run(c), unit,
                               chain=chain_text(c)))
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
