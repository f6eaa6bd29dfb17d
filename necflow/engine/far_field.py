"""Far field of a wire model: pattern cuts, peak gain, efficiency, average gain.

Built on the adapter's seams (:func:`necflow.engine.pynec_adapter._prepare`
loads the model; the engine's radiation-pattern card then samples the far
field of the solved currents), so PyNEC is still imported by the adapter
alone.  Gains are the engine's *power gain* ``4 pi U / P_in`` [dBi]: wire
and ground losses lower them.

Engine conventions (verified against the package, PyNEC 1.7.3): the pattern
card's arguments are (mode, n_theta, n_phi, output format, normalisation,
power/directive gain, averaging, theta0, phi0, d_theta, d_phi, range, gain
normalisation), angles in degrees; theta is measured from the zenith, phi
from +x toward +y; ``get_gain()`` returns dB shaped (n_theta, n_phi); each
pattern card issued after a frequency card yields the next result index;
a negative theta at phi is the direction theta at phi + 180 deg.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np

from necflow.engine import pynec_adapter as _adapter
from necflow.model.types import GroundModel, WireModel

#: Angular step of the grid the radiated power is integrated over [deg].
AVERAGE_STEP_DEG = 5.0
#: Steps of the elevation and azimuth cuts [deg].
ELEVATION_STEP_DEG = 1.0
AZIMUTH_STEP_DEG = 2.0
#: Below this the take-off angle of a pattern peaking overhead is replaced by
#: the lowest elevation of interest for the azimuth cut [rad].
TAKEOFF_MAX = math.radians(80.0)
#: Default elevation of interest [rad].
_TEN_DEGREES = math.radians(10.0)
#: Floor of gains in dB (the engine reports -999 dB for a null).
GAIN_FLOOR_DBI = -99.0


@dataclass(frozen=True)
class FarField:
    """Far field of one model at one frequency.

    Attributes
    ----------
    frequency_hz : float
        Frequency [Hz].
    broadside_azimuth : float
        Azimuth at right angles to the fed wire [rad] (from +x toward +y).
    elevation : ndarray
        Angle along the elevation cuts [rad]: 0 .. pi over a ground (horizon
        in the cut's azimuth, zenith at pi/2, the opposite horizon at pi),
        -pi/2 .. 3 pi/2 in free space.
    elevation_gain_dbi : ndarray
        Power gain along the cut through the broadside plane [dBi].
    lobe_azimuth : float
        Azimuth of the strongest lobe [rad] (on the integration grid).
    lobe_elevation_gain_dbi : ndarray
        Power gain along the cut through the strongest lobe's azimuth [dBi].
    peak_gain_dbi, peak_elevation : float
        Highest gain of that cut [dBi] and its elevation above the horizon
        [rad] (0 .. pi/2 whichever side; signed in free space).
    takeoff_elevation : float
        Elevation of the azimuth cut [rad]: the peak's, or the lowest angle
        of interest when the pattern peaks near the zenith.
    azimuth : ndarray
        Azimuth along the azimuth cut [rad], 0 .. 2 pi.
    azimuth_gain_dbi : ndarray
        Power gain along it [dBi].
    angles : ndarray
        Elevations of interest [rad].
    gain_at_angles_dbi : ndarray
        Best gain over all azimuths at each of ``angles`` [dBi].
    efficiency : float
        Radiated over input power [-] (wire and ground loss included), from
        the power gain integrated over the sphere (over the upper hemisphere
        above a ground), as integrated: reads 0.3-0.4 % low on the 5 deg
        grid; :func:`normalised_efficiency` corrects it.
    """

    frequency_hz: float
    broadside_azimuth: float
    elevation: np.ndarray
    elevation_gain_dbi: np.ndarray
    lobe_azimuth: float
    lobe_elevation_gain_dbi: np.ndarray
    peak_gain_dbi: float
    peak_elevation: float
    takeoff_elevation: float
    azimuth: np.ndarray
    azimuth_gain_dbi: np.ndarray
    angles: np.ndarray
    gain_at_angles_dbi: np.ndarray
    efficiency: float


def broadside_azimuth(model: WireModel) -> float:
    """Azimuth [rad] at right angles to the horizontal run of the fed wire
    (0 for a vertical fed wire)."""
    w = model.feed_wire
    d = np.asarray(w.end, dtype=float) - np.asarray(w.start, dtype=float)
    if math.hypot(d[0], d[1]) <= 1e-9 * max(float(np.linalg.norm(d)), 1e-30):
        return 0.0
    return float((math.atan2(d[1], d[0]) + math.pi / 2) % (2 * math.pi))


def sphere_average(gain_linear: np.ndarray, theta: np.ndarray) -> float:
    """Solid-angle integral of a gain over a theta-phi grid, over 4 pi.

    ``(1 / 4 pi) int G sin(theta) dtheta dphi``: trapezoid rule in theta, the
    periodic rectangle rule in phi (the grid covers phi = 0 .. 360 deg
    exclusive at a uniform step).

    Parameters
    ----------
    gain_linear : ndarray
        Power gain [-], shape (n_theta, n_phi).
    theta : ndarray
        Polar angles [rad] of the rows, uniform.

    Returns
    -------
    float
        Radiated power over input power [-].

    References
    ----------
    .. [1] C. A. Balanis, *Antenna Theory*, 3rd ed., Wiley 2005, sec. 2.6
       (radiated power as the integral of radiation intensity, gain
       ``4 pi U / P_in``).
    """
    g = np.asarray(gain_linear, dtype=float)
    per_theta = g.mean(axis=1) * 2.0 * math.pi          # phi integral
    return float(np.trapezoid(per_theta * np.sin(theta), theta) / (4.0 * math.pi))


def average_gain(efficiency: float, ground: GroundModel) -> float:
    """The average gain test figure: radiated over input power averaged over
    the space the pattern covers: ``efficiency`` in free space, twice it over
    a ground (the upper hemisphere holds half the sphere's solid angle).

    References
    ----------
    .. [1] Common practice: the average gain test of method-of-moments
       modelling (1.0 in free space, 2.0 over perfect ground, lossless wires).
    """
    return efficiency * (2.0 if ground.has_ground else 1.0)


def _gains(ctx, index: int, key: str, f_hz: float) -> np.ndarray:
    try:
        rp = ctx.get_radiation_pattern(index)
        g = np.asarray(rp.get_gain(), dtype=float)
        f_got = float(rp.get_frequency())
    except Exception as exc:
        raise _adapter._fail(key, "return a radiation pattern", exc, f_hz) from exc
    if not np.isclose(f_got, f_hz, rtol=1e-6):
        raise _adapter._fail(key, "keep the frequency order of patterns", None, f_hz)
    if not np.all(np.isfinite(g)):
        raise _adapter._fail(key, "return a finite radiation pattern", None, f_hz)
    return np.maximum(g, GAIN_FLOOR_DBI)


def _rp(ctx, key, f_hz, n_theta, n_phi, theta0, phi0, dtheta, dphi):
    try:
        # mode 0 (normal, ground as modelled), XNDA = 0000: major/minor axes,
        # no normalisation, power gain, no averaging.
        ctx.rp_card(0, int(n_theta), int(n_phi), 0, 0, 0, 0, float(theta0), float(phi0),
                    float(dtheta), float(dphi), 0.0, 0.0)
    except Exception as exc:
        raise _adapter._fail(key, "compute a radiation pattern", exc, f_hz) from exc


def far_field(model: WireModel, frequency_hz, *, angles=(_TEN_DEGREES,),
              average_step_deg: float = AVERAGE_STEP_DEG,
              elevation_step_deg: float = ELEVATION_STEP_DEG,
              azimuth_step_deg: float = AZIMUTH_STEP_DEG) -> list[FarField]:
    """Pattern cuts, peak gain, gain at chosen elevations and efficiency.

    At each frequency: the power gain on a full theta-phi grid (integrated
    for the efficiency; its maximum marks the strongest lobe's azimuth), an
    elevation cut through the broadside plane and one through the strongest
    lobe, an azimuth cut at the take-off angle, and an azimuth cut at each
    elevation of interest.

    Parameters
    ----------
    model : WireModel
        The segmented model (wire conductivity and ground as given).
    frequency_hz : array_like
        Frequencies [Hz], shape (n,).
    angles : sequence of float
        Elevations of interest [rad], above 0 and at most pi/2; the lowest
        is also the azimuth cut's elevation when the pattern peaks within
        10 deg of the zenith.
    average_step_deg, elevation_step_deg, azimuth_step_deg : float
        Angular steps [deg] of the integration grid and of the cuts.

    Returns
    -------
    list of FarField
        One per frequency, in order.

    Raises
    ------
    EngineError
        When the engine fails or returns non-finite gains.

    References
    ----------
    .. [1] G. J. Burke and A. J. Poggio, *Numerical Electromagnetics Code
       (NEC) - Method of Moments*, LLNL 1981 (the radiation-pattern card and
       the power gain it reports).
    .. [2] C. A. Balanis, *Antenna Theory*, 3rd ed., Wiley 2005, sec. 2.6.
    """
    key = model.key()
    f = _adapter._check_frequencies(frequency_hz, key)
    angles = np.atleast_1d(np.asarray(angles, dtype=float))
    ctx = _adapter._prepare(model, key)
    grounded = model.ground.has_ground
    phi_b = broadside_azimuth(model)
    # Elevation cuts: theta from -90 (or -180) deg through the cut's azimuth.
    t_lo = -90.0 if grounded else -180.0
    n_el = int(round((180.0 if grounded else 360.0) / elevation_step_deg)) + (1 if grounded else 0)
    theta_el = np.radians(t_lo + elevation_step_deg * np.arange(n_el))
    elevation = (np.pi / 2 - theta_el)[::-1]
    n_th = int(round((90.0 if grounded else 180.0) / average_step_deg)) + 1
    n_ph = int(round(360.0 / average_step_deg))
    theta = np.radians(average_step_deg * np.arange(n_th))
    n_az = int(round(360.0 / azimuth_step_deg))
    azimuth = np.radians(azimuth_step_deg * np.arange(n_az))
    out, index = [], 0

    def pattern(fi, n_t, n_p, t0, p0, dt, dp):
        nonlocal index
        _rp(ctx, key, fi, n_t, n_p, t0, p0, dt, dp)
        index += 1
        return _gains(ctx, index - 1, key, fi)

    def azimuth_cut(fi, el):
        return pattern(fi, 1, n_az, 90.0 - math.degrees(el), 0.0, 0.0, azimuth_step_deg)[0]

    for fi in f:
        fi = float(fi)
        try:
            _adapter.apply_loads(ctx, model, fi)
            ctx.fr_card(0, 1, fi / 1e6, 0.0)
        except Exception as exc:
            raise _adapter._fail(key, "set the frequency", exc, fi) from exc
        g_grid = pattern(fi, n_th, n_ph, 0.0, 0.0, average_step_deg, average_step_deg)
        eff = sphere_average(10.0 ** (g_grid / 10.0), theta)
        if not np.isfinite(eff) or eff <= 0:
            raise _adapter._fail(key, f"give a positive radiated power (got {eff})", None, fi)
        i_t, i_p = np.unravel_index(int(np.argmax(g_grid)), g_grid.shape)
        phi_l = phi_b if i_t == 0 else math.radians(average_step_deg * i_p)
        g_b = pattern(fi, n_el, 1, t_lo, math.degrees(phi_b), elevation_step_deg, 0.0)[::-1, 0]
        g_l = g_b if phi_l == phi_b else pattern(fi, n_el, 1, t_lo, math.degrees(phi_l),
                                                 elevation_step_deg, 0.0)[::-1, 0]
        k = int(np.argmax(g_l))
        peak_el = float(elevation[k])
        peak_el = peak_el if peak_el <= np.pi / 2 else float(np.pi - peak_el)
        if abs(peak_el) <= TAKEOFF_MAX:
            takeoff = peak_el
        else:
            takeoff = float(np.min(angles)) if grounded else 0.0
        if grounded:
            takeoff = max(takeoff, math.radians(azimuth_step_deg))
        g_az = azimuth_cut(fi, takeoff)
        at = np.array([azimuth_cut(fi, a).max() for a in angles])
        out.append(FarField(
            frequency_hz=fi, broadside_azimuth=phi_b, elevation=elevation,
            elevation_gain_dbi=g_b, lobe_azimuth=float(phi_l), lobe_elevation_gain_dbi=g_l,
            peak_gain_dbi=float(g_l[k]), peak_elevation=peak_el,
            takeoff_elevation=float(takeoff), azimuth=azimuth, azimuth_gain_dbi=g_az,
            angles=angles, gain_at_angles_dbi=at, efficiency=eff))
    return out


def normalised_efficiency(efficiency, average_gain_lossless, ground: GroundModel):
    """Radiated over input power, corrected by the average gain test.

    The radiated power is the power gain integrated over a finite angular
    grid, which reads slightly low (0.3-0.4 % on a 5 deg grid).  The same
    integration of the model's lossless copy should give exactly 1 (2 over a
    ground, see :func:`average_gain`); dividing by what it gives removes the
    grid's error, so a lossless model reads an efficiency of 1.

    Parameters
    ----------
    efficiency : array_like
        :attr:`FarField.efficiency` of the model [-].
    average_gain_lossless : array_like
        :func:`average_gain_test` of the model at the same frequencies [-].
    ground : GroundModel
        The model's ground (sets the expected 1 or 2).

    Returns
    -------
    ndarray
        Efficiency [-].

    References
    ----------
    .. [1] C. A. Balanis, *Antenna Theory*, 3rd ed., Wiley 2005, sec. 2.14
       (radiation efficiency ``e_cd = R_r / (R_r + R_L)``).
    .. [2] Common practice: the average gain test of method-of-moments
       modelling.
    """
    expected = 2.0 if ground.has_ground else 1.0
    return (np.asarray(efficiency, dtype=float)
            / (np.asarray(average_gain_lossless, dtype=float) / expected))


def lossless_copy(model: WireModel) -> WireModel:
    """The model with lossless wires, lossless loads (a choke's reactance
    only), and a perfect ground in place of a finite one (free space stays
    free space): the model the average gain test is run on."""
    ground = GroundModel("perfect") if model.ground.has_ground else model.ground
    loads = tuple(dataclasses.replace(ld, lossless=True) for ld in model.loads)
    return dataclasses.replace(model, conductivity=None, ground=ground, loads=loads)


def average_gain_test(model: WireModel, frequency_hz) -> np.ndarray:
    """Average gain of the lossless copy of ``model`` at each frequency:
    1.0 expected in free space, 2.0 over (perfect) ground.

    Raises
    ------
    EngineError
    """
    copy = lossless_copy(model)
    return np.array([average_gain(ff.efficiency, copy.ground)
                     for ff in far_field(copy, frequency_hz)])
