"""Match, power flow, loss budget and component stress of a feed chain."""

from necflow.analysis.metrics import (arrl_total_line_loss_db, mismatch_loss_db,
                                      reflection_coefficient, return_loss_db,
                                      series_reactance_insertion_loss_db, swr)
from necflow.analysis.powerflow import ElementStress, SystemResponse, analyse
from necflow.analysis.stress_cautions import cautions, ratings_of

__all__ = ["ElementStress", "SystemResponse", "analyse", "arrl_total_line_loss_db", "cautions",
           "mismatch_loss_db", "ratings_of", "reflection_coefficient", "return_loss_db",
           "series_reactance_insertion_loss_db", "swr"]
