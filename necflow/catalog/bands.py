"""Amateur HF band edges for ITU Regions 1, 2 and 3, and band resolution.

A design names its bands (``40m``) or gives their edges; :func:`resolve_bands`
turns either into :class:`Band` objects with edges in Hz.  The table here is
the international allocation as a starting point: national rules differ
(narrower sub-bands, channels instead of a band, extra segments), and the
licence in force wins.  Give explicit edges in the design to follow them.
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass

import numpy as np

from necflow.errors import ConfigError


@dataclass(frozen=True)
class Band:
    """One band to evaluate.

    Attributes
    ----------
    name : str
        Band label, e.g. ``"40m"``.
    low_hz, high_hz : float
        Band edges [Hz], ``low_hz < high_hz``.
    points : int
        Number of frequencies evaluated across the band, edges included.
    weight : float
        Weight of the band in scores [1].
    """

    name: str
    low_hz: float
    high_hz: float
    points: int = 11
    weight: float = 1.0

    @property
    def frequencies(self) -> np.ndarray:
        """Evaluated frequencies [Hz], evenly spaced from edge to edge."""
        return np.linspace(self.low_hz, self.high_hz, self.points)

    @property
    def centre_hz(self) -> float:
        """Arithmetic centre of the band [Hz]."""
        return 0.5 * (self.low_hz + self.high_hz)


@dataclass(frozen=True)
class BandTable:
    """The amateur HF bands of one ITU region.

    Attributes
    ----------
    region : int
        ITU region, 1, 2 or 3.
    edges : dict of str to (float, float)
        Band name -> (low, high) edges [Hz].
    source : str
        Where the edges come from.
    """

    region: int
    edges: dict[str, tuple[float, float]]
    source: str


_KHZ = 1e3  # edges are kept in kHz, where every figure is exact in binary

# Allocations common to all three regions (from memory of the ITU Radio
# Regulations, Article 5; Region 2 figures agree with 47 CFR 97.301).
_COMMON = {
    # WRC-15 secondary allocation; several administrations allow channels
    # or segments outside it (47 CFR 97.301 lists channels near 5.33-5.41 MHz).
    "60m": (5351.5, 5366.5),
    "30m": (10100, 10150),
    "20m": (14000, 14350),
    "17m": (18068, 18168),
    "15m": (21000, 21450),
    "12m": (24890, 24990),
    "10m": (28000, 29700),
}

_ART5 = "from memory of the ITU Radio Regulations, Article 5"
_NATIONAL = "; national rules differ, and the licence in force wins"


def _table(region: int, low_three: dict[str, tuple[float, float]], source: str) -> BandTable:
    order = ("160m", "80m", "60m", "40m", "30m", "20m", "17m", "15m", "12m", "10m")
    merged = {**low_three, **_COMMON}
    edges = {name: (merged[name][0] * _KHZ, merged[name][1] * _KHZ) for name in order}
    return BandTable(region=region, edges=edges, source=source)


#: ITU region -> band table.
TABLES: dict[int, BandTable] = {
    1: _table(1, {"160m": (1810, 1850), "80m": (3500, 3800), "40m": (7000, 7200)},
              _ART5 + " (Region 1; many administrations extend 160 m to 2.000 MHz); "
              "60 m is the WRC-15 allocation 5.3515-5.3665 MHz" + _NATIONAL),
    2: _table(2, {"160m": (1800, 2000), "80m": (3500, 4000), "40m": (7000, 7300)},
              "47 CFR 97.301 (an administration of Region 2); 60 m is the WRC-15 allocation "
              "5.3515-5.3665 MHz, " + _ART5 + ", in place of the channels "
              "near 5.33-5.41 MHz that 47 CFR 97.301 lists" + _NATIONAL),
    3: _table(3, {"160m": (1800, 2000), "80m": (3500, 3900), "40m": (7000, 7200)},
              _ART5 + " (Region 3); 60 m is the WRC-15 allocation 5.3515-5.3665 MHz"
              + _NATIONAL),
}


def band_names(region: int = 2) -> list[str]:
    """Names of the built-in bands of an ITU region, lowest frequency first."""
    return list(TABLES[region].edges)


def band_edges(name: str, region: int = 2) -> tuple[float, float]:
    """Edges [Hz] of a built-in band.

    Raises
    ------
    KeyError
        If ``name`` is not in the region's table.
    """
    return TABLES[region].edges[name]


def unknown_band_message(name: str, region: int) -> str:
    """One-line message for a band name not in the table, with a suggestion."""
    names = band_names(region)
    close = difflib.get_close_matches(str(name).replace(" ", "").lower(), names, n=1)
    hint = f"did you mean '{close[0]}'? " if close else ""
    return (f"unknown band '{name}'; {hint}built-in bands (ITU Region {region}) are "
            f"{', '.join(names)}; or give 'low' and 'high' edges")


def resolve_bands(design) -> list[Band]:
    """The design's bands with their edges, in the order the design lists them.

    Parameters
    ----------
    design : necflow.config.schema.Design
        A validated design.  Bands given by name are looked up in the table
        of ``design.region``; bands with ``low`` and ``high`` use those.

    Returns
    -------
    list of Band

    Raises
    ------
    ConfigError
        For a band name not in the table, with ``field='bands[i]'``.

    References
    ----------
    Region 2 edges: 47 CFR 97.301.  Regions 1 and 3, and the 60 m band in
    all regions: from memory of the ITU Radio Regulations, Article 5 (the
    60 m allocation of WRC-15).
    """
    out = []
    for i, spec in enumerate(design.bands):
        if spec.low is not None and spec.high is not None:
            low, high = spec.low, spec.high
        else:
            try:
                low, high = band_edges(spec.name, design.region)
            except KeyError:
                raise ConfigError(unknown_band_message(spec.name, design.region),
                                  field=f"bands[{i}]") from None
        out.append(Band(name=spec.name, low_hz=float(low), high_hz=float(high),
                        points=int(spec.points), weight=float(spec.weight)))
    return out
