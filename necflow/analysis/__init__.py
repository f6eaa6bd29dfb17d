"""Power flow, loss budget and component stress of a feed chain; the figures
of merit of a match live in :mod:`necflow.feed.metrics`."""

from necflow.analysis.powerflow import ElementStress, SystemResponse, analyse
from necflow.analysis.stress_cautions import cautions, ratings_of

__all__ = ["ElementStress", "SystemResponse", "analyse", "cautions", "ratings_of"]
