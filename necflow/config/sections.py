"""Design-file keys of the jobs: the study's ``search`` space and ``cost``,
the ranges of ``uncertain`` and ``adjustable``, and ``tolerances``.

These models hold the user's text as written (bounds with units such as
``"22 m"``); the unit a bound needs depends on the field it addresses, so
:mod:`necflow.config.fields` converts them to SI against the design.
"""

from __future__ import annotations

from typing import Any, Literal

from pydantic import BaseModel, ConfigDict, Field, field_validator, model_validator

Scalar = str | float | int


class _Strict(BaseModel):
    model_config = ConfigDict(extra="forbid", validate_assignment=True,
                              populate_by_name=True, allow_inf_nan=False)


class SearchParam(_Strict):
    """One searched field: a range (linear or log, optionally stepped) or a
    list of allowed values."""

    range: tuple[Scalar, Scalar] | None = Field(
        None, description="Lowest and highest value, with the field's unit "
        "(e.g. ['22 m', '30 m'])", json_schema_extra={"unit": "unit of the field"})
    scale: Literal["linear", "log"] = Field(
        "linear", description="Sample the range evenly (linear) or evenly in its logarithm (log)")
    step: Scalar | None = Field(
        None, description="Grid of the values tried, with the field's unit (e.g. '1 cm'); "
        "linear ranges only", json_schema_extra={"unit": "unit of the field"})
    choices: list[Scalar] | None = Field(
        None, min_length=1, description="Allowed values instead of a range (e.g. standard "
        "capacitor values, or catalog line types for a line's 'line' key)")

    @model_validator(mode="before")
    @classmethod
    def _shorthand(cls, data: Any) -> Any:
        if isinstance(data, (list, tuple)):
            if len(data) != 2:
                raise ValueError("a range is two values [low, high], e.g. ['22 m', '30 m']; "
                                 "for a list of allowed values write {choices: [...]}")
            return {"range": list(data)}
        return data

    @model_validator(mode="after")
    def _one_kind(self) -> SearchParam:
        if (self.range is None) == (self.choices is None):
            raise ValueError("give either 'range' or 'choices'")
        if self.choices is not None and (self.step is not None or self.scale != "linear"):
            raise ValueError("'step' and 'scale' apply to a range, not to 'choices'")
        if self.step is not None and self.scale == "log":
            raise ValueError("'step' works on a linear range only; drop 'step' or "
                             "'scale: log'")
        return self


COST_OBJECTIVES = ("cost", "worst_swr", "loss_db", "span")


class RobustSpec(_Strict):
    """Score each trial over the tolerance cases of its design (robust design)."""

    over: Literal["tolerances"] = Field(
        "tolerances", description="The scenario set: the design's 'tolerances' section, "
        "applied around each trial's own values (tolerances.samples cases drawn once with "
        "tolerances.seed, the same for every trial; keep samples small, e.g. 16 to 64, as "
        "each trial evaluates every case)")
    how: Literal["expected", "worst"] = Field(
        "expected", description="Minimise the mean of each objective over the cases "
        "(expected) or its largest value (worst)")


class CostSpec(_Strict):
    """How a design is scored: see the README section "Cost"."""

    combine: Literal["mean", "worst"] = Field(
        "mean", description="Combine the bands by their weighted mean cost (mean) or take "
        "the costliest band (worst)")
    swr_weight: float = Field(1.0, ge=0, description="Weight of the SWR term (per SWR unit "
                              "above the limit)")
    loss_weight: float = Field(1.0, ge=0, description="Weight of the loss term (per dB of "
                               "total system loss)")
    common_mode_weight: float = Field(0.0, ge=0, le=1000, description="Weight of the "
                                      "common-mode current at the station entry (per A RMS "
                                      "at the radio's power; with a route)")
    unmatched_weight: float = Field(10.0, ge=0, le=1e4, description="Added to a point's "
                                    "cost where a tuner in the chain cannot match the load "
                                    "it sees (within its parts' ranges)")
    swr_softness: float = Field(0.1, gt=0, le=10, description="Width of the smooth knee of "
                                "the SWR penalty at the limit, in SWR units")
    objectives: list[Literal["cost", "worst_swr", "loss_db", "span"]] = Field(
        default_factory=lambda: ["cost"], min_length=1, max_length=3,
        description="What the study minimises: [cost] alone, or two or three of cost, "
        "worst_swr, loss_db, span for a Pareto front")
    robust: RobustSpec | None = Field(
        None, description="Robust design: score each trial by its expected or worst cost "
        "over the tolerance cases instead of its nominal cost (trials method only); not set: "
        "the nominal cost")

    @field_validator("objectives")
    @classmethod
    def _unique(cls, v: list[str]) -> list[str]:
        if len(set(v)) != len(v):
            raise ValueError("each objective once")
        return v


class ToleranceSpec(_Strict):
    """How 'necflow tolerance' varies the design."""

    fields: dict[str, str | float] = Field(
        default_factory=dict, description="Field path -> tolerance, drawn uniformly within "
        "plus or minus: a percentage ('5 %') or a value in the field's unit ('3 cm', '0.02')",
        json_schema_extra={"unit": "% or unit of the field"})
    ground: list[str] | None = Field(
        None, min_length=2, max_length=2, description="Dry-season and wet-season ground "
        "surfaces from the catalog (e.g. [very-dry, wet]); each case takes a ground between "
        "them")
    samples: int = Field(200, ge=10, le=100000, description="Monte Carlo cases")
    seed: int = Field(1, ge=0, description="Seed of the random draws (same seed, same result)")
    levels: int = Field(3, ge=2, le=9, description="Values per geometry field (and of the "
                        "ground) in the small set of geometry states that are solved; each "
                        "case draws one of them")
    max_states: int = Field(27, ge=1, le=1000, description="Most geometry states solved; "
                            "beyond it a seeded subset of the combinations is used")

    @field_validator("ground")
    @classmethod
    def _two(cls, v):
        if v is not None and v[0] == v[1]:
            raise ValueError("give two different surfaces: dry season, wet season")
        return v
