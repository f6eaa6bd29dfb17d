"""Elements set for the load they see: matching networks in a feed chain.

A :class:`MatchingNetwork` is a tuner (:mod:`necflow.feed.tuners`) placed
anywhere in the chain.  Its matrix depends on the impedance its antenna
side presents, so the chain sets it while walking from the feedpoint toward
the radio (:func:`necflow.feed.chain.resolve`): at each frequency the
least-loss setting within its parts' ranges that matches ``r_source``
(:func:`necflow.feed.tuners.tune`), or the user's own setting on the bands
given one (:func:`necflow.feed.tuners.evaluate_setting`).
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from necflow.feed import tuners


@dataclass(frozen=True)
class MatchingNetwork:
    """A tuner in the chain, not yet set (``kind='tuner'``).

    Attributes
    ----------
    id : str
    tuner : necflow.feed.tuners.Tuner
        Topology and part ranges.
    r_source : float
        Resistance it presents to the radio side when matched [ohm].
    swr_tolerance : float
        A near match is accepted up to this SWR.
    user : tuple of (low_hz, high_hz, settings)
        The user's own settings (part name -> value [F or H]) on the
        frequencies ``low_hz <= f <= high_hz`` (a band).
    ratings : dict
        Part name -> {"voltage_rating" | "current_rating": value}.
    """

    id: str
    tuner: tuners.Tuner
    r_source: float = 50.0
    swr_tolerance: float = 1.1
    user: tuple = ()
    ratings: dict = field(default_factory=dict)
    kind: str = field(default="tuner", init=False)

    @property
    def metadata(self) -> dict:
        return {"tuner": self.tuner.topology, "r_source_ohm": self.r_source}

    def abcd(self, f) -> np.ndarray:
        raise ValueError(f"tuner '{self.id}' has no matrix until it is set for its load "
                         "(necflow.feed.chain.resolve)")

    def user_mask(self, f) -> tuple[np.ndarray, dict]:
        """Where the user's settings apply and the setting per frequency
        (NaN elsewhere)."""
        f = np.atleast_1d(np.asarray(f, dtype=float))
        mask = np.zeros(f.shape, dtype=bool)
        vals = {name: np.full(f.shape, np.nan) for name in self.tuner.parts}
        for lo, hi, settings in self.user:
            sel = (f >= lo * (1 - 1e-12)) & (f <= hi * (1 + 1e-12)) & ~mask
            mask |= sel
            for name, v in settings.items():
                vals[name][sel] = v
        return mask, vals

    def set_for(self, f, z_load, *, near: bool = True):
        """The network set for ``z_load`` [ohm] at ``f`` [Hz].

        Parameters
        ----------
        f : array_like
            ``(nfreq,)``.
        z_load : array_like
            ``(nfreq,)``, or ``(..., nfreq)`` for a batch of variants.
        near : bool
            Search near matches where no exact one lies within the ranges
            (a bounded local search per point); a batch passes False and
            counts such a point as not matched.

        Returns
        -------
        TunedNetwork or SetNetwork
            A :class:`necflow.feed.tuners.TunedNetwork` for ``(nfreq,)``
            loads; for a batch a :class:`SetNetwork` holding its matrices
            and match mask.
        """
        f = np.atleast_1d(np.asarray(f, dtype=float))
        zl = np.asarray(z_load, dtype=complex)
        batch = zl.ndim > 1
        shape = np.broadcast_shapes(zl.shape, f.shape)
        ff = np.broadcast_to(f, shape).ravel()
        zz = np.broadcast_to(zl, shape).ravel()
        mask, vals = self.user_mask(ff)
        tol = self.swr_tolerance if near else 1.0
        net = tuners.tune(self.tuner, ff, zz, self.r_source, swr_tolerance=tol, id=self.id,
                          near_match=near)
        if mask.any():
            own = tuners.evaluate_setting(self.tuner, ff[mask], zz[mask],
                                          {k: v[mask] for k, v in vals.items()},
                                          self.r_source, swr_tolerance=self.swr_tolerance,
                                          id=self.id)
            net = _merge(net, own, mask)
        if not batch:
            return net
        return SetNetwork(self.id, net.matrices.reshape(shape + (2, 2)),
                          net.can_match.reshape(shape), net.loss_db.reshape(shape))


def _merge(net: tuners.TunedNetwork, own: tuners.TunedNetwork, mask: np.ndarray):
    """``net`` with the points of ``mask`` taken from ``own`` (evaluated
    there)."""
    def put(a, b):
        a = np.array(a, copy=True)
        a[mask] = b
        return a
    return replace(net, matrices=put(net.matrices, own.matrices),
                   can_match=put(net.can_match, own.can_match),
                   settings={k: put(v, own.settings[k]) for k, v in net.settings.items()},
                   z_in=put(net.z_in, own.z_in), swr=put(net.swr, own.swr),
                   loss_db=put(net.loss_db, own.loss_db),
                   reason=put(net.reason.astype(object), own.reason).astype(str))


@dataclass(frozen=True)
class SetNetwork:
    """A batch of tuners already set: matrices ``(..., nfreq, 2, 2)``."""

    id: str
    matrices: np.ndarray
    can_match: np.ndarray
    loss_db: np.ndarray
    kind: str = field(default="tuner", init=False)

    def abcd(self, f) -> np.ndarray:
        return self.matrices
