"""A plain-text summary of a built model, for ``necflow check``."""

from __future__ import annotations

from dataclasses import dataclass

from scipy.constants import speed_of_light

from necflow.config.schema import Design
from necflow.model.rules import REFLECTION_MIN_HEIGHT_WL, Finding, check_rules
from necflow.model.types import WireModel


@dataclass(frozen=True)
class WireRow:
    """Summary of one straight piece of the antenna (one or more engine
    wires in a line: a graded piece is several).

    Attributes
    ----------
    name : str
    segments : int
    shortest_wavelengths, longest_wavelengths : float
        Shortest and longest segment in wavelengths at the highest
        frequency [1].
    length_to_radius : float
        Shortest segment length divided by wire radius [1].
    """

    name: str
    segments: int
    shortest_wavelengths: float
    longest_wavelengths: float
    length_to_radius: float


@dataclass(frozen=True)
class ModelSummary:
    """What ``necflow check`` shows about a model.

    Attributes
    ----------
    wires : tuple of WireRow
        One row per straight piece, consecutive engine wires of the same
        name together.
    total_segments : int
    lowest_height_wavelengths : float
        Lowest wire point above ground in wavelengths at the lowest
        frequency [1] (the z coordinate; meaningless in free space).
    ground_kind : str
    ground_verdict : str
        Whether the ground model suits the antenna, in words.
    findings : tuple of Finding
        The modelling-rule findings.
    """

    wires: tuple[WireRow, ...]
    total_segments: int
    lowest_height_wavelengths: float
    ground_kind: str
    ground_verdict: str
    findings: tuple[Finding, ...]

    def format(self) -> list[str]:
        """Plain text lines, one per fact (the findings are left to the
        caller, which prints them with their severity)."""
        lines = [f"{'wire':<24} {'segments':>8} {'seg/wavelength':>17} {'seg/radius':>11}"]
        for r in self.wires:
            span = (f"{r.shortest_wavelengths:.4f}" if r.longest_wavelengths
                    <= r.shortest_wavelengths * (1 + 1e-6)
                    else f"{r.shortest_wavelengths:.4f}-{r.longest_wavelengths:.4f}")
            lines.append(f"{r.name:<24} {r.segments:>8d} {span:>17} "
                         f"{r.length_to_radius:>11.1f}")
        lines.append(f"total segments: {self.total_segments}")
        if self.ground_kind != "free-space":
            lines.append("lowest wire point: "
                         f"{self.lowest_height_wavelengths:.3f} wavelength above ground "
                         "at the lowest frequency")
        lines.append(f"ground model: {self.ground_verdict}")
        return lines


def _verdict(kind: str, h_wl: float) -> str:
    if kind == "free-space":
        return "free space: no ground; the antenna alone, for comparison with textbook values"
    if kind == "perfect":
        return ("perfect ground: a lossless idealisation; real soil lowers gain and adds "
                "ground loss")
    if kind == "sommerfeld":
        return "Sommerfeld-Norton: suits wires at any height, including close to the ground"
    if h_wl >= REFLECTION_MIN_HEIGHT_WL:
        return (f"reflection-coefficient approximation: suits this antenna (lowest point "
                f"{h_wl:.2f} wavelength up, at least about {REFLECTION_MIN_HEIGHT_WL})")
    return (f"reflection-coefficient approximation: does not suit this antenna (lowest point "
            f"{h_wl:.2f} wavelength up, below about {REFLECTION_MIN_HEIGHT_WL}); "
            "use 'sommerfeld'")


def summarize(model: WireModel, design: Design, f_min_hz: float,
              f_max_hz: float) -> ModelSummary:
    """Summarise a model for the user: segmentation, height, ground fit.

    Parameters
    ----------
    model : WireModel
    design : Design
    f_min_hz, f_max_hz : float
        Lowest and highest frequency to be solved [Hz].
    """
    lam_min = speed_of_light / f_max_hz
    lam_max = speed_of_light / f_min_hz
    groups: list[list] = []   # consecutive wires of one piece share its name
    for w in model.wires:
        if groups and groups[-1][0].name == w.name:
            groups[-1].append(w)
        else:
            groups.append([w])
    rows = []
    for g in groups:
        shortest = min(g, key=lambda w: w.segment_length)
        rows.append(WireRow(g[0].name, sum(w.segments for w in g),
                            shortest.segment_length / lam_min,
                            max(w.segment_length for w in g) / lam_min,
                            shortest.segment_length / shortest.radius))
    rows = tuple(rows)
    z = min(min(float(w.start[2]), float(w.end[2])) for w in model.wires)
    h_wl = z / lam_max
    verdict = _verdict(model.ground.kind, h_wl)
    if "ground" not in design.model_fields_set or "model" not in design.ground.model_fields_set:
        verdict += (f"; the default ground, as the design names no ground model (over "
                    f"{design.ground.surface or 'the given'} soil): 'reflection' would suit "
                    f"wires at least about {REFLECTION_MIN_HEIGHT_WL} wavelength up at the "
                    "lowest frequency and solves faster, 'perfect' and 'free-space' are "
                    "idealisations for comparison")
    return ModelSummary(rows, model.segment_count, h_wl, model.ground.kind, verdict,
                        tuple(check_rules(model, design, f_min_hz, f_max_hz)))
