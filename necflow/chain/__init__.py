"""The staged chain: a design through every stage, each computed once
(see :mod:`necflow.chain.stages`), and the complete reading of a design file."""

from necflow.chain.evaluation import BandSummary, Evaluation
from necflow.chain.loading import load_design, load_design_text
from necflow.chain.report import report_data
from necflow.chain.stages import Chain, band_points, evaluate

__all__ = ["BandSummary", "Chain", "Evaluation", "band_points", "evaluate", "load_design",
           "load_design_text", "report_data"]
