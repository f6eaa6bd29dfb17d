"""Catalog of transmission-line types: nominal Z0, velocity factor, matched loss.

Each entry keeps the loss figures it was fitted to (``data``, frequency in Hz
and dB per 100 ft) and the source of those figures, tagged as in the
project's reference list: ``[memory]`` for a figure recalled from a named
source, ``[derived]`` for one computed from a named formula.  Figures vary
from maker to maker by some tens of percent; treat the entries as typical.

Matched attenuation is modelled as ``alpha_dB/m = k1 sqrt(f) + k2 f``: the
``sqrt(f)`` term is conductor (skin-effect) loss, the ``f`` term dielectric
loss.  ``k1`` and ``k2`` are fitted at import by non-negative least squares
over the data points, each row weighted by the inverse of its figure so that
a 0.2 dB point counts as much as a 2 dB one (relative error is what the
tolerance of a loss table is about).  A line with a single figure cannot
separate the two terms; it gets a pure ``k1`` (conductor loss only), an
assumption stated in its entry.

Validity range: the span of the data widened to 1/20 of the lowest and twice
the highest data frequency.  The downward widening is the larger one on
purpose: below the data the dielectric term falls faster than the conductor
term, and the ``sqrt(f)`` law of the conductor term holds while the skin
depth is small beside the conductor size, which for these lines is true down
to well below 1 MHz.  Upward, loss grows faster and the model is less safe.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import nnls

#: Length of 100 ft in metres (the unit of the loss tables).
FT100_M = 30.48
#: Permeability of free space [H/m].
MU0 = 4e-7 * math.pi
#: Conductivity of annealed copper [S/m] (IACS 100 %).
SIGMA_CU = 5.8e7


def fit_attenuation(freqs_hz, db_per_m) -> tuple[float, float]:
    """Fit ``alpha_dB/m = k1 sqrt(f) + k2 f`` to matched-loss points.

    Parameters
    ----------
    freqs_hz : array_like
        Frequencies of the points [Hz].
    db_per_m : array_like
        Matched loss at those frequencies [dB/m].

    Returns
    -------
    k1 : float
        Conductor coefficient [dB/(m sqrt(Hz))].
    k2 : float
        Dielectric coefficient [dB/(m Hz)].

    Notes
    -----
    Non-negative least squares with each row divided by its figure (relative
    error).  With one point the two terms cannot be told apart and the whole
    loss is given to the conductor term (``k2 = 0``); callers state this.

    References
    ----------
    .. [1] Common practice: the ``K1 sqrt(f) + K2 f`` attenuation model of coax
       and twin-line loss tables (conductor plus dielectric loss).
    """
    f = np.atleast_1d(np.asarray(freqs_hz, dtype=float))
    a = np.atleast_1d(np.asarray(db_per_m, dtype=float))
    if f.size == 0 or f.shape != a.shape or np.any(f <= 0) or np.any(a <= 0):
        raise ValueError("loss points need positive frequencies and positive losses")
    if f.size == 1:
        return float(a[0] / math.sqrt(f[0])), 0.0
    w = 1.0 / a
    design = np.column_stack([np.sqrt(f), f]) * w[:, None]
    # Scale the columns so that nnls works on numbers of order one.
    scale = np.abs(design).max(axis=0)
    coef, _ = nnls(design / scale, a * w)
    k1, k2 = coef / scale
    return float(k1), float(k2)


def _range(freqs_hz) -> tuple[float, float]:
    f = np.asarray(freqs_hz, dtype=float)
    return float(f.min() / 20.0), float(f.max() * 2.0)


@dataclass(frozen=True)
class Construction:
    """The physical build of a line, for modelling it as a conductor.

    A two-wire line gives ``conductor_diameter`` and ``spacing`` (centre to
    centre); a coax gives ``shield_diameter`` (the outside of the braid or
    foil, where common-mode current flows) and, for reference,
    ``jacket_diameter``.  Lengths in metres.

    Attributes
    ----------
    conductor_diameter, spacing : float or None
        Two-wire lines: wire diameter and centre spacing [m].
    shield_diameter, jacket_diameter : float or None
        Coax: outer diameter of the shield and of the jacket [m].
    source : str
        Where the dimensions come from, with its tag.
    """

    conductor_diameter: float | None = None
    spacing: float | None = None
    shield_diameter: float | None = None
    jacket_diameter: float | None = None
    source: str = ""

    @property
    def two_wire(self) -> bool:
        """True for a two-wire construction (conductor and spacing given)."""
        return self.conductor_diameter is not None and self.spacing is not None


@dataclass(frozen=True)
class LineType:
    """One kind of transmission line.

    Attributes
    ----------
    name : str
        Catalog key.
    description : str
        What the line is, in a few words.
    balanced : bool
        True for two-wire (balanced) line, False for coax.
    z0 : float
        Nominal characteristic impedance [ohm], real.
    velocity_factor : float
        Phase velocity over the speed of light [-].
    data : tuple of (float, float)
        The (frequency [Hz], matched loss [dB per 100 ft]) points fitted.
    source : str
        Where the figures come from, with its tag.
    k1, k2 : float
        Fitted coefficients of ``alpha_dB/m = k1 sqrt(f) + k2 f``
        [dB/(m sqrt(Hz))], [dB/(m Hz)].
    valid_range_hz : tuple of float
        Frequency span the data support [Hz].
    notes : str
        Assumptions made in the fit.
    construction : Construction or None
        Physical dimensions (conductors and spacing, or shield), None for a
        custom line.
    """

    name: str
    description: str
    balanced: bool
    z0: float
    velocity_factor: float
    data: tuple[tuple[float, float], ...]
    source: str
    k1: float = field(default=math.nan)
    k2: float = field(default=math.nan)
    valid_range_hz: tuple[float, float] = (math.nan, math.nan)
    notes: str = ""
    construction: Construction | None = None

    def attenuation_db_per_m(self, f) -> np.ndarray:
        """Matched attenuation [dB/m] at frequencies ``f`` [Hz]."""
        f = np.asarray(f, dtype=float)
        return self.k1 * np.sqrt(f) + self.k2 * f

    def conductor_np_per_m(self, f) -> np.ndarray:
        """Conductor part of the attenuation [Np/m]."""
        return self.k1 * np.sqrt(np.asarray(f, dtype=float)) / DB_PER_NP

    def dielectric_np_per_m(self, f) -> np.ndarray:
        """Dielectric part of the attenuation [Np/m]."""
        return self.k2 * np.asarray(f, dtype=float) / DB_PER_NP


#: Decibels per neper, 20 log10(e).
DB_PER_NP = 20.0 / math.log(10.0)


def make_line_type(name: str, description: str, balanced: bool, z0: float, vf: float,
                   data, source: str, notes: str = "",
                   construction: Construction | None = None) -> LineType:
    """Build a :class:`LineType` and fit its attenuation coefficients.

    ``data`` holds (frequency [Hz], dB per 100 ft) points; ``construction``
    the physical dimensions, when known.
    """
    pts = tuple((float(fq), float(db)) for fq, db in data)
    fq = np.array([p[0] for p in pts])
    db_m = np.array([p[1] for p in pts]) / FT100_M
    k1, k2 = fit_attenuation(fq, db_m)
    if len(pts) == 1 and not notes:
        notes = ("one figure only: all loss given to the conductor term (k2 = 0), "
                 "loss scaling as sqrt(f)")
    return LineType(name=name, description=description, balanced=balanced, z0=float(z0),
                    velocity_factor=float(vf), data=pts, source=source, k1=k1, k2=k2,
                    valid_range_hz=_range(fq), notes=notes, construction=construction)


def custom_line_type(z0: float, vf: float, loss_points, name: str = "custom",
                     balanced: bool = False, description: str = "line described in the design",
                     source: str = "design file",
                     construction: Construction | None = None) -> LineType:
    """A line type from a design's custom line.

    Parameters
    ----------
    z0 : float
        Characteristic impedance [ohm].
    vf : float
        Velocity factor [-].
    loss_points : sequence
        Objects with ``frequency`` [Hz], ``db`` [dB] and ``per`` [m]
        (``necflow.config.schema.LossPoint``) or (frequency, db, per) tuples.
    name : str
        Name to show in messages.
    balanced : bool
        True for a two-wire line (a catalog balanced line keeps its balance
        when a design overrides its loss figures).
    description, source : str
        Shown in reports.
    construction : Construction, optional
        Physical dimensions (a catalog line's, when a design overrides only
        its loss figures).

    Returns
    -------
    LineType
        Fitted as the catalog entries are; one point gives a pure conductor
        term (``k2 = 0``, loss scaling as ``sqrt(f)``).
    """
    data = []
    for p in loss_points:
        if isinstance(p, tuple):
            fq, db, per = p
        else:
            fq, db, per = p.frequency, p.db, p.per
        data.append((fq, db / per * FT100_M))
    return make_line_type(name, description, balanced, z0, vf, data, source=source,
                          construction=construction)


def two_wire_conductor_loss_db_per_m(f, diameter: float, z0: float,
                                     sigma: float = SIGMA_CU) -> np.ndarray:
    """Conductor loss of a two-wire line in air, skin effect developed.

    Parameters
    ----------
    f : array_like
        Frequency [Hz].
    diameter : float
        Conductor diameter [m].
    z0 : float
        Characteristic impedance [ohm].
    sigma : float
        Conductor conductivity [S/m].

    Returns
    -------
    ndarray
        Attenuation [dB/m]: ``alpha = R / (2 Z0)`` with ``R = 2 Rs / (pi d)``
        (two conductors) and ``Rs = sqrt(pi f mu0 / sigma)``.

    Notes
    -----
    Proximity effect is neglected; for spacing/diameter of about 74 (a
    600-ohm line) it raises the resistance by a factor
    ``1/sqrt(1 - (d/s)^2)``, below 0.01 %.  Radiation and dielectric loss
    (spacers) are not included.

    References
    ----------
    .. [1] S. Ramo, J. R. Whinnery, T. Van Duzer, *Fields and Waves in
       Communication Electronics*, 3rd ed., Wiley 1994, ch. 5 (two-wire line,
       surface resistance).
    .. [2] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, ch. 2
       (low-loss attenuation ``alpha = R/(2 Z0) + G Z0 / 2``).
    """
    f = np.asarray(f, dtype=float)
    rs = np.sqrt(math.pi * f * MU0 / sigma)
    r = 2.0 * rs / (math.pi * diameter)
    return r / (2.0 * z0) * DB_PER_NP


_MEM_COAX = "[memory] from memory of the ARRL Handbook coax table"

# Physical dimensions: typical generic constructions; makers differ by a few
# tenths of a millimetre.
_MEM_TWIN = ("[memory] generic construction, from memory of makers' data for such line "
             "(conductor gauge and spacing vary between makers)")
_MEM_COAX_SIZE = ("[memory] generic construction, from memory of makers' data sheets for "
                  "this designation (shield = outside of the braid or foil)")


def _two_wire(d_mm: float, s_mm: float, source: str = _MEM_TWIN) -> Construction:
    return Construction(conductor_diameter=d_mm / 1e3, spacing=s_mm / 1e3, source=source)


def _coax(shield_mm: float, jacket_mm: float) -> Construction:
    return Construction(shield_diameter=shield_mm / 1e3, jacket_diameter=jacket_mm / 1e3,
                        source=_MEM_COAX_SIZE)


# 600-ohm open wire: two 2.05 mm copper conductors (the 12-gauge size) spaced for
# Z0 = 600 ohm (s/d = cosh(600/120) = 74.2, about 152 mm).
_OW_D = 2.05e-3
_OW_S = _OW_D * math.cosh(600.0 / 120.0)
_OW_FREQS = (1.8e6, 3.5e6, 7.0e6, 14.0e6, 30.0e6)
_OW_DATA = tuple((fq, float(two_wire_conductor_loss_db_per_m(fq, _OW_D, 600.0)) * FT100_M)
                 for fq in _OW_FREQS)

LINE_TYPES: dict[str, LineType] = {lt.name: lt for lt in (
    make_line_type(
        "window-450", "nominal 450-ohm window line (polyethylene web with windows)", True,
        390.0, 0.91, [(29.0e6, 0.15)],
        source="[memory] from memory of ARRL Antenna Compendium measurements of "
               "window line: Z0 360-405 ohm measured, VF 0.90-0.93, about 0.15 dB/100 ft "
               "at 28-30 MHz dry",
        notes="Z0 390 ohm, not the nominal 450: measured values of this line fall at "
              "about 380-400 ohm, and the impedance a matching section transforms to "
              "depends on the real Z0. One figure only (dry line): all loss given to "
              "the conductor term (k2 = 0); wet line loses more.",
        construction=_two_wire(1.3, 25.0, _MEM_TWIN + ": about 1.3 mm (AWG 16; AWG 18 to "
                               "14 are sold) at about 25 mm")),
    make_line_type(
        "window-300", "nominal 300-ohm window line", True, 300.0, 0.90,
        [(29.0e6, 0.15 * 390.0 / 300.0)],
        source="[derived] scaled from the 450-ohm window-line figure (from memory of ARRL "
               "Antenna Compendium measurements, 0.15 dB/100 ft at 29 MHz, Z0 390 ohm) "
               "by conductor-loss scaling alpha = R/(2 Z0) with the same conductors "
               "(Pozar, Microwave Engineering 4th ed., ch. 2); VF 0.90 assumed as for "
               "the 450-ohm line",
        notes="One derived figure only: all loss given to the conductor term (k2 = 0). "
              "Rough: no published table for this line was at hand.",
        construction=_two_wire(1.3, 10.0, _MEM_TWIN + ": about 1.3 mm (AWG 16) at about "
                               "10 mm")),
    make_line_type(
        "open-wire-600", "600-ohm open-wire line, 2.05 mm copper, about 152 mm spacing",
        True, 600.0, 0.98, _OW_DATA,
        source="[derived] conductor loss of two parallel wires, R = 2 Rs/(pi d), "
               "alpha = R/(2 Z0) (Ramo, Whinnery and Van Duzer, Fields and Waves in "
               "Communication Electronics, ch. 5); VF 0.98 is common practice "
               "for spacer-supported line",
        notes="Conductor loss only (spacers, radiation and wet weather add loss): k2 = 0.",
        construction=_two_wire(_OW_D * 1e3, _OW_S * 1e3,
                               "[derived] 2.05 mm (AWG 12) wire, spacing from Z0 = 120 "
                               "acosh(s/d) = 600 ohm in air (from memory of the ARRL Antenna "
                               "Book, transmission-line chapter): s = 152 mm")),
    make_line_type(
        "twin-lead-300", "300-ohm ribbon twin-lead", True, 300.0, 0.80, [(28.0e6, 0.55)],
        source="[memory] about 0.55 dB/100 ft at 28 MHz, VF about 0.80",
        notes="One figure only: all loss given to the conductor term (k2 = 0), a "
              "stated assumption (the small conductors dominate at HF).",
        construction=_two_wire(1.0, 10.0, _MEM_TWIN + ": stranded conductors of about "
                               "1 mm at about 10 mm in a polyethylene ribbon")),
    make_line_type(
        "rg-58", "50-ohm coax, solid polyethylene, 5 mm", False, 50.0, 0.66,
        [(10.0e6, 1.3), (30.0e6, 2.5)], source=_MEM_COAX + " (10 MHz: 1.2-1.4 dB, "
        "mid value used; 30 MHz: 2.5 dB per 100 ft)", construction=_coax(3.6, 4.95)),
    make_line_type(
        "rg-8x", "50-ohm coax, foam polyethylene, 6 mm", False, 50.0, 0.80,
        [(10.0e6, 1.0), (30.0e6, 2.0)], source=_MEM_COAX + " (VF 0.78-0.82, mid value)",
        construction=_coax(4.6, 6.1)),
    make_line_type(
        "rg-213", "50-ohm coax, solid polyethylene, 10 mm", False, 50.0, 0.66,
        [(1.0e6, 0.2), (10.0e6, 0.6), (30.0e6, 1.1), (100.0e6, 1.9)], source=_MEM_COAX,
        construction=_coax(8.3, 10.3)),
    make_line_type(
        "rg-8-foam", "50-ohm coax, foam polyethylene, 10 mm", False, 50.0, 0.80,
        [(10.0e6, 0.5)], source=_MEM_COAX + " (VF 0.78-0.80)",
        notes="One figure only: all loss given to the conductor term (k2 = 0), "
              "reasonable for foam dielectric at HF.", construction=_coax(8.1, 10.3)),
    make_line_type(
        "rg-59", "75-ohm coax, solid polyethylene, 6 mm", False, 75.0, 0.66,
        [(10.0e6, 1.1), (30.0e6, 1.8)], source=_MEM_COAX, construction=_coax(4.4, 6.15)),
)}


def resolve_line_type(line: str, impedance: float | None = None,
                      velocity_factor: float | None = None, loss=None,
                      balanced: bool | None = None) -> LineType:
    """The line type of a feed element: a catalog entry, with a design's
    overrides (impedance, velocity factor, loss figures, balance), or a
    custom line.

    Raises
    ------
    KeyError
        For a name that is neither in the catalog nor 'custom'.
    """
    if line == "custom":
        return custom_line_type(impedance, velocity_factor, loss, name="custom",
                                balanced=bool(balanced))
    base = LINE_TYPES[line]
    bal = base.balanced if balanced is None else bool(balanced)
    if impedance is None and velocity_factor is None and loss is None and bal == base.balanced:
        return base
    z0 = impedance or base.z0
    vf = velocity_factor or base.velocity_factor
    if loss is not None:
        return custom_line_type(z0, vf, loss, name=base.name, balanced=bal,
                                description=base.description + " (loss from the design file)",
                                source="design file (loss); " + base.source,
                                construction=base.construction)
    return make_line_type(base.name, base.description, bal, z0, vf, base.data,
                          base.source, base.notes, base.construction)


def common_mode_radius(line_type: LineType | str) -> float:
    """Radius [m] of the single wire that stands for a feed line carrying
    common-mode current.

    Parameters
    ----------
    line_type : LineType or str
        A line type, or the name of a catalog line.

    Returns
    -------
    float
        Coax: the outer radius of the shield (common-mode current flows on
        the outside of the shield; the jacket carries none).  Two-wire line:
        the equivalent radius of the pair, ``sqrt(a s)`` with ``a`` the
        conductor radius and ``s`` the centre spacing, the radius of one wire
        with the same capacitance per unit length as the two wires at one
        potential.

    Raises
    ------
    KeyError
        For a name not in the catalog.
    ValueError
        For a line type with no physical data (a custom line).

    Notes
    -----
    The equivalent radius of two parallel conductors of radii ``a1``, ``a2``
    at spacing ``s`` is ``ln ae = ln a1 + [a2^2 ln(a2/a1) + 2 a1 a2 ln(s/a1)]
    / (a1 + a2)^2``; with equal radii it is the geometric mean ``sqrt(a s)``.
    It holds when the spacing is several radii or more (proximity effect
    neglected) and the pair is thin beside the wavelength.

    References
    ----------
    .. [1] From memory of C. A. Balanis, *Antenna Theory*, 3rd ed., Wiley
       2005, sec. 9.5 (folded dipole: equivalent radius of two parallel
       conductors).
    """
    lt = LINE_TYPES[line_type] if isinstance(line_type, str) else line_type
    c = lt.construction
    if c is None:
        raise ValueError(f"line type '{lt.name}' has no physical data (conductors, spacing or "
                         "shield); its common-mode radius is unknown")
    if c.two_wire:
        return math.sqrt(0.5 * c.conductor_diameter * c.spacing)
    if c.shield_diameter is not None:
        return 0.5 * c.shield_diameter
    raise ValueError(f"line type '{lt.name}' gives neither conductors and spacing nor a shield "
                     "diameter")
