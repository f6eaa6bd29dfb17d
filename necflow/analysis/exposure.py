"""RF exposure estimate: distance at which the far-field power density
falls to the uncontrolled-environment limit.

An estimate for orientation only: the far-field formula is not valid in an
HF antenna's reactive near field, which is where people usually stand; the
local regulator's own evaluation method decides.
"""

from __future__ import annotations

import math

import numpy as np

#: Ground-reflection factor in power density (field doubled would be 4; 1.6^2
#: = 2.56 is the usual cautious estimate) for a gain taken from a free-space
#: pattern.  From memory of FCC OET Bulletin 65.
GROUND_REFLECTION_FACTOR = 2.56
#: 1 mW/cm^2 in W/m^2.
_MW_PER_CM2 = 10.0


def uncontrolled_limit_w_m2(f) -> np.ndarray:
    """Maximum permissible exposure, general population (uncontrolled),
    as power density [W/m^2] at ``f`` [Hz].

    0.3-1.34 MHz: 100 mW/cm^2; 1.34-30 MHz: 180/f^2 mW/cm^2 (f in MHz);
    30-300 MHz: 0.2 mW/cm^2.

    References
    ----------
    .. [1] 47 CFR 1.1310, Table 1 (limits for general population /
       uncontrolled exposure).
    """
    f_mhz = np.asarray(f, dtype=float) / 1e6
    mw_cm2 = np.where(f_mhz < 1.34, 100.0, np.where(f_mhz <= 30.0, 180.0 / f_mhz ** 2, 0.2))
    return mw_cm2 * _MW_PER_CM2


def compliance_distance_m(power_w, gain_dbi, f, *,
                          reflection_factor: float = GROUND_REFLECTION_FACTOR) -> np.ndarray:
    """Distance [m] beyond which the estimated power density is below the
    uncontrolled limit.

    ``S = F P G / (4 pi R^2)`` solved for ``S`` equal to the limit.

    Parameters
    ----------
    power_w : array_like
        Average power into the antenna [W] (duty factor applied).
    gain_dbi : array_like
        Antenna gain in the direction considered [dBi].
    f : array_like
        Frequency [Hz].
    reflection_factor : float
        Ground-reflection factor ``F`` of the power density.

    References
    ----------
    .. [1] 47 CFR 1.1310, Table 1.
    .. [2] From memory of FCC OET Bulletin 65 (far-field power density with a
       ground-reflection factor of 2.56).
    """
    g = 10.0 ** (np.asarray(gain_dbi, dtype=float) / 10.0)
    p = np.asarray(power_w, dtype=float)
    return np.sqrt(reflection_factor * p * g / (4.0 * math.pi * uncontrolled_limit_w_m2(f)))


def reflection_factor_for(pattern_over_ground: bool) -> float:
    """The ground-reflection factor to apply to a gain from a pattern.

    A pattern computed over a ground already holds the wave the ground
    reflects (its gain is that of the antenna and its image together), so
    the factor is 1; a free-space pattern holds no reflection, and the
    cautious 2.56 stands in for it.  Applying both would count the
    reflection twice (distances 1.6 times too large).

    References
    ----------
    .. [1] From memory of FCC OET Bulletin 65, sec. 2 (the 2.56 factor is for
       a gain without the ground's reflection).
    """
    return 1.0 if pattern_over_ground else GROUND_REFLECTION_FACTOR


def exposure_basis(pattern_over_ground: bool) -> str:
    """One sentence saying how the estimate treats the ground."""
    if pattern_over_ground:
        return ("the gain is the peak of the pattern computed over the design's ground, which "
                "already holds the ground reflection, so no further reflection factor is "
                "applied")
    return ("the gain is from a free-space pattern, so the usual ground-reflection factor "
            f"{GROUND_REFLECTION_FACTOR:g} is applied to the power density")
