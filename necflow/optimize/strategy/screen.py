"""Screening a nested trial's geometry: a cost estimate from few solves.

A geometry's antenna response is first *estimated*:

1. **Interpolation over frequency.** Each band is solved at a few anchor
   frequencies and interpolated between them by a one-pole rational fit,
   with an error estimate from held-out anchors; a band whose estimate is
   above the threshold is solved at every point
   (:meth:`necflow.chain.Chain.antenna_estimate`,
   :mod:`necflow.engine.interpolate`).
2. **Cheaper ground.** Over Sommerfeld-Norton ground the anchors are solved
   over the reflection-coefficient ground (the same soil; several times
   cheaper per frequency in the engine, which then skips the Sommerfeld
   integral tables), and a **correction learned from the full solves already
   made** is added: ``dZ(f) = Z_full(f) - Z_screen(f)`` of the confirmed
   geometries nearest in the unit cube of the geometry fields, weighted by
   inverse squared distance.  The difference between the two grounds (and
   the interpolation's own residue) changes slowly with the geometry, far
   more slowly than the impedance itself.  Over other grounds the same
   correction absorbs the interpolation residue alone.

The feed is then searched on the estimate.  A geometry is **confirmed**
(solved over its own ground at every frequency, its feed searched again on
that response, and the whole design evaluated and scored: the cost a trial
reports) when no correction has been learned yet, or when its estimate is
within the margin of the study's best cost; otherwise the trial reports the
estimate and is marked unconfirmed.  So the study's best trial is always a
confirmed one: an unconfirmed estimate lies above the best cost at the time
it was made, and the best cost only falls.  The margin is the larger of
:data:`MARGIN` and twice the 90th percentile of the last :data:`RECENT`
screening errors this worker has learned (relative, estimate against confirmed
cost), so a screen that misjudges widens it and one that has learned the
neighbourhood narrows it.

A confirmed trial stores its correction in the study (the user attribute
``necflow.correction``), and every worker learns the stored ones before
each trial (:meth:`Screening.absorb`): the workers of one machine, those of
others on a shared database, and a resumed session all screen with
everything the study has solved in full.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from necflow.engine.interpolate import ANCHORS, THRESHOLD

__all__ = ["MARGIN", "NEIGHBOURS", "Screen", "Screening"]

#: Least relative margin above the best cost within which a geometry is confirmed.
MARGIN = 0.0025
#: Recent screening errors the margin is drawn from.
RECENT = 32
#: Confirmed geometries whose corrections are blended.
NEIGHBOURS = 4
#: Corrections kept per worker (the oldest are dropped; memory stays bounded).
KEEP = 512


@dataclass(frozen=True)
class Screen:
    """The screened response of one geometry.

    Attributes
    ----------
    z : ndarray
        ``(nfreq,)`` estimated impedance over the design's own ground [ohm].
    z_screen : ndarray
        ``(nfreq,)`` the interpolated screening response (before correction).
    interp_error : float
        Largest held-out relative error estimate of the interpolation [-].
    solved : int
        Frequency points asked of the engine for it.
    corrected : bool
        True when a learned correction was added.
    ground : str
        Ground kind solved for the screen.
    """

    z: np.ndarray
    z_screen: np.ndarray
    interp_error: float
    solved: int
    corrected: bool
    ground: str


class Screening:
    """One worker's screening of geometries, with what it has learned.

    Parameters
    ----------
    params : sequence of Param
        The geometry fields (their unit-cube coordinates measure nearness).
    anchors : int
        Solved frequencies per band.
    threshold : float
        Interpolation error estimate above which a band is solved at every point.
    margin : float
        Least relative margin for confirmation.
    """

    def __init__(self, params, *, anchors: int = ANCHORS, threshold: float = THRESHOLD,
                 margin: float = MARGIN):
        self.params = list(params)
        self.anchors, self.threshold, self.base_margin = anchors, threshold, margin
        self._x: list[np.ndarray] = []
        self._dz: list[np.ndarray] = []
        self._seen: set = set()
        self.errors: list[float] = []

    @property
    def learned(self) -> frozenset:
        """Keys (trial numbers) of the corrections learned so far."""
        return frozenset(self._seen)

    def position(self, values: dict) -> np.ndarray:
        """Unit-cube coordinates of a geometry."""
        return np.array([p.to_unit(values[p.path]) for p in self.params], dtype=float)

    def correction(self, x: np.ndarray) -> np.ndarray | None:
        """Blended correction at ``x`` (None before the first confirmation)."""
        if not self._dz:
            return None
        xs = np.array(self._x)
        d2 = np.sum((xs - x) ** 2, axis=1) if xs.shape[1] else np.zeros(len(xs))
        near = np.argsort(d2, kind="stable")[:NEIGHBOURS]
        if d2[near[0]] < 1e-18:
            return self._dz[int(near[0])].copy()
        w = 1.0 / d2[near]
        return np.tensordot(w / w.sum(), np.array([self._dz[int(k)] for k in near]), axes=1)

    def screen(self, chain, values: dict) -> Screen:
        """Estimated response of ``chain``'s geometry (``values``: its geometry fields)."""
        ground = chain.wire_model.ground.kind
        quick = chain.screened("reflection") if ground == "sommerfeld" else chain
        est = quick.antenna_estimate(self.anchors, self.threshold)
        dz = self.correction(self.position(values))
        z = est.z if dz is None else est.z + dz
        return Screen(z=z, z_screen=est.z, interp_error=float(np.max(est.error, initial=0.0)),
                      solved=est.solved, corrected=dz is not None,
                      ground=quick.wire_model.ground.kind)

    def learn(self, values: dict, screen: Screen, z_full: np.ndarray,
              estimate: float | None = None, cost: float | None = None,
              key=None) -> np.ndarray:
        """Keep the correction of a confirmed geometry, and the screening error
        of its cost when it had a corrected estimate (``key``: the trial it came
        from, so that :meth:`absorb` does not learn it twice); returns the
        correction ``(nfreq,)``."""
        error = None
        if screen.corrected and estimate is not None and cost is not None and cost != 0:
            error = abs(estimate - cost) / abs(cost)
        dz = np.asarray(z_full, dtype=complex) - screen.z_screen
        self._keep(self.position(values), dz, error, key)
        return dz

    def _keep(self, x: np.ndarray, dz: np.ndarray, error: float | None, key) -> None:
        if key is not None:
            if key in self._seen:
                return
            self._seen.add(key)
        self._x.append(x)
        self._dz.append(dz)
        if len(self._x) > KEEP:
            del self._x[0], self._dz[0]
        if error is not None:
            self.errors.append(float(error))
            del self.errors[:-KEEP]

    def absorb(self, learned) -> int:
        """Learn the corrections other workers (or earlier sessions) stored.

        Parameters
        ----------
        learned : iterable of (key, values, dz, error)
            ``values`` the geometry fields of a confirmed geometry, ``dz`` its
            stored correction (``(nfreq,)`` complex), ``error`` its screening
            error or None; ``key`` names it (its trial), and one already
            learned is skipped.

        Returns
        -------
        int
            Corrections learned now.
        """
        n = 0
        for key, values, dz, error in learned:
            if key in self._seen:
                continue
            dz = np.asarray(dz, dtype=complex)
            if self._dz and dz.shape != self._dz[0].shape:
                continue               # another frequency plan (cannot happen in one study)
            self._keep(self.position(values), dz, error, key)
            n += 1
        return n

    @property
    def margin(self) -> float:
        """Relative margin above the best cost within which to confirm."""
        recent = self.errors[-RECENT:]
        if not recent:
            return self.base_margin
        return max(self.base_margin, 2.0 * float(np.percentile(recent, 90)))

    def confirm(self, screen: Screen, estimate: float, best: float | None) -> bool:
        """Whether to solve the geometry in full (see the module notes)."""
        if not screen.corrected or best is None or not np.isfinite(estimate):
            return True
        return estimate <= best + self.margin * abs(best)
