"""Ground constants at HF: named surfaces and the complex permittivity.

The named surfaces are the five classic HF ground types.  Values are
relative permittivity and conductivity in S/m; they are what a design file
refers to with ``ground: {surface: medium-dry}``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import epsilon_0

_P527 = "from memory of ITU-R Recommendation P.527 (curves of revision 3)"


@dataclass(frozen=True)
class Surface:
    """A named ground surface.

    Attributes
    ----------
    name : str
        Catalog key.
    permittivity : float
        Relative permittivity eps_r [1].
    conductivity : float
        Conductivity sigma [S/m].
    description : str
        What the surface is, in words.
    source : str
        Where the values come from.
    """

    name: str
    permittivity: float
    conductivity: float
    description: str
    source: str


SURFACES: dict[str, Surface] = {
    s.name: s for s in (
        Surface("sea-water", 70.0, 5.0, "sea water of average salinity", _P527),
        Surface("fresh-water", 80.0, 3e-3, "fresh water (lakes, rivers)", _P527),
        Surface("wet", 30.0, 1e-2, "wet ground", _P527),
        Surface("medium-dry", 15.0, 1e-3, "medium dry ground", _P527),
        Surface("very-dry", 3.0, 1e-4, "very dry ground", _P527),
    )
}


def complex_permittivity(eps_r, sigma, f):
    """Complex relative permittivity of a lossy ground.

    Parameters
    ----------
    eps_r : float or array_like
        Relative permittivity [1].
    sigma : float or array_like
        Conductivity [S/m].
    f : float or array_like
        Frequency [Hz]; broadcasts against ``eps_r`` and ``sigma``.

    Returns
    -------
    numpy.ndarray or complex
        ``eps_r - j sigma / (omega eps0)`` [1], time convention exp(+j omega t).

    Notes
    -----
    Numerically ``eps_r - j 1.8e4 sigma / f_MHz``, a form common in practice.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, ch. 1
       (lossy media, complex permittivity).
    """
    f = np.asarray(f, dtype=float)
    if np.any(f <= 0):
        raise ValueError("frequency must be positive")
    out = np.asarray(eps_r, dtype=float) - 1j * np.asarray(sigma, dtype=float) / (
        2.0 * np.pi * f * epsilon_0)
    return out[()] if out.ndim == 0 else out
