"""From model to the built antenna: fit the model to measured sweeps
(:mod:`necflow.calibrate.fit`), advise the trim (:mod:`necflow.calibrate.trim`),
and test tolerance by Monte Carlo (:mod:`necflow.calibrate.tolerance`).

This package's ``spec`` module is imported by the schema, so this file
imports nothing.
"""
