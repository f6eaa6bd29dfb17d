"""Catalog of common-mode chokes: generic constructions as parallel R-L-C.

A common-mode choke is judged by its common-mode impedance at the operating
frequency: several hundred ohm is weak, a few kilohm, mostly resistive, is
the usual aim (common practice).  A ferrite choke is commonly modelled as a
resistance, an inductance and a capacitance in parallel: the inductance is
the winding on the core, the capacitance the stray capacitance between
turns (and ends), and the resistance the core loss, which is what makes a
ferrite choke broad and resistive.  An air-wound coil of coax has no core
loss: it is a high-Q resonator whose impedance is large only near its
self-resonance and mostly reactive elsewhere.

Every entry is a construction class, not a product: the figures are common
practice, of the order bench measurements of such chokes show, rounded and
kept modest; a choke as built may differ by a factor of two (core size and
mix, turns, the coax, how the turns lie).  Measure yours and give its
points (``choke: {points: ...}``) where it matters.

Power ratings are not given: a choke heats with its common-mode current
through its resistance, which depends on the antenna system it sits in, not
on the choke alone, so no generic figure can be justified.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

_PRACTICE = ("[practice] common practice: figures of the order bench measurements of this "
             "construction show, rounded and kept modest; a choke as built may differ by a "
             "factor of two; measure yours")


@dataclass(frozen=True)
class ChokeType:
    """One generic common-mode choke, modelled as R, L and C in parallel.

    Attributes
    ----------
    name : str
        Catalog key.
    description : str
        The construction, in a few words.
    r : float
        Parallel resistance [ohm]: the impedance at resonance.
    l : float
        Parallel inductance [H].
    c : float
        Parallel capacitance [F].
    source : str
        Where the figures come from, with its tag.
    notes : str
        Where the choke is useful, and what the model leaves out.
    """

    name: str
    description: str
    r: float
    l: float
    c: float
    source: str
    notes: str = ""

    @property
    def resonance_hz(self) -> float:
        """Resonant frequency ``1 / (2 pi sqrt(L C))`` [Hz]."""
        return 1.0 / (2.0 * math.pi * math.sqrt(self.l * self.c))

    @property
    def q(self) -> float:
        """Quality factor of the parallel circuit, ``R sqrt(C / L)`` [-]."""
        return self.r * math.sqrt(self.c / self.l)


CHOKE_TYPES: dict[str, ChokeType] = {ct.name: ct for ct in (
    ChokeType(
        "toroid-coax-low-mix",
        "about 7 turns of thin coax (RG-58 or RG-8X size) through one large (about 60 mm) "
        "ferrite toroid of a low-frequency suppression mix (initial permeability about 1500)",
        r=4.0e3, l=150e-6, c=2.7e-12, source=_PRACTICE,
        notes="Resonance near 7.9 MHz, Q about 0.54: above 2.8 kohm from about 3.4 to 18 "
              "MHz, about 1.6 kohm at 1.8 MHz and 2 kohm at 28 MHz."),
    ChokeType(
        "toroid-coax-mid-mix",
        "about 5 turns of thin coax through one large (about 60 mm) ferrite toroid of a "
        "medium-permeability mix (initial permeability about 800), for the upper HF bands",
        r=3.0e3, l=47e-6, c=1.8e-12, source=_PRACTICE,
        notes="Resonance near 17 MHz, Q about 0.59: above 2 kohm from about 7.5 MHz to "
              "beyond 30 MHz, weak (about 0.5 kohm) at 1.8 MHz."),
    ChokeType(
        "beads-on-coax",
        "about 20 large ferrite sleeves slipped over thin coax, one pass",
        r=2.5e3, l=33e-6, c=0.62e-12, source=_PRACTICE,
        notes="Resonance near 35 MHz, Q about 0.34: the impedance rises through HF, about "
              "2 kohm from 14 MHz up, weak at the low bands (about 0.7 kohm at 3.5 MHz, "
              "less below)."),
    ChokeType(
        "coax-coil-air",
        "about 8 turns of coax air-wound at about 11 cm diameter, no core",
        r=8.0e3, l=8e-6, c=16e-12, source=_PRACTICE,
        notes="Self-resonant near 14 MHz with Q about 11: 8 kohm there, but mostly "
              "reactive and a few hundred ohm an octave away (about 0.5 kohm at 7 and 28 "
              "MHz). Its resonance moves with the coil's shape; useful on one band."),
    ChokeType(
        "current-balun",
        "the common-mode choke of a typical 1:1 current balun: about 10 bifilar turns "
        "on a ferrite toroid",
        r=2.5e3, l=68e-6, c=3.9e-12, source=_PRACTICE,
        notes="Resonance near 9.8 MHz, Q about 0.60: about 2 kohm from 5 to 18 MHz, under "
              "1 kohm at 1.8 MHz. The default common-mode choke of a current balun."),
)}

#: The catalog choke a current balun has when its design gives none.
DEFAULT_BALUN_CHOKE = "current-balun"
