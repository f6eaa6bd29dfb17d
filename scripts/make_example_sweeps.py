"""Make the synthetic example sweeps in configs/measured/ from the current model.

The sweeps are not measurements: each is the model's reflection of
configs/measured/field-doublet.yaml with known changes (the "built"
antenna), with seeded complex noise added.  Each file's header states the
changes as ``truth:`` lines and the noise as a ``noise:`` line, which
tests/calibrate/test_example_sweeps.py reads back: it fits every sweep and
checks the recovered values against the truth, so a change of the model
that leaves these files stale fails a test.  Run this script again then:

    python scripts/make_example_sweeps.py
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from necflow import fileio
from necflow.calibrate.synthetic import csv_swr_text, synthetic_sweep, touchstone_text
from necflow.chain import load_design

FOLDER = ROOT / "configs" / "measured"
DESIGN = FOLDER / "field-doublet.yaml"
#: The "built" antenna: 1.5 m lower than the design says.
CHANGES = {"antenna.height": 8.5}
NOISE = 0.003
#: (file name, where it was taken, reference resistance, seed, writer)
SWEEPS = [
    ("field-doublet-radio.s1p", "radio", 50.0, 1, "touchstone-RI"),
    ("field-doublet-feedpoint.s1p", "feedpoint", 75.0, 2, "touchstone-MA"),
    ("field-doublet-radio-swr.csv", "radio", 50.0, 3, "csv-swr"),
]
FREQUENCY_HZ = np.arange(6.8e6, 7.5e6 + 1.0, 0.05e6)


def header(at: str, z_ref: float, seed: int, what: str) -> str:
    where = ("at the radio end of the feed chain" if at == "radio"
             else "at the feed point")
    truth = "\n".join(f"truth: {path} = {value:g} m" for path, value in CHANGES.items())
    return (f"Synthetic sweep, not a measurement: necflow's model of\n"
            f"configs/measured/field-doublet.yaml with the changes below, seen {where}\n"
            f"against {z_ref:g} ohm, {what}, complex noise added to the reflection (seed "
            f"{seed}),\nmade by scripts/make_example_sweeps.py.\n{truth}\nat: {at}\n"
            f"noise: {NOISE:g}")


def main() -> int:
    design = load_design(DESIGN)
    for name, at, z_ref, seed, kind in SWEEPS:
        m = synthetic_sweep(design, CHANGES, FREQUENCY_HZ, at=at, z_ref=z_ref, noise=NOISE,
                            seed=seed)
        if kind.startswith("touchstone"):
            text = touchstone_text(m, header(at, z_ref, seed, "complex reflection"),
                                   fmt=kind.split("-")[1])
        else:
            text = csv_swr_text(m, header(at, z_ref, seed, "SWR only"))
        fileio.write_text(FOLDER / name, text)
        print(f"wrote {FOLDER / name}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
