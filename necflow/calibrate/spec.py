"""Design-file keys of calibration: ``tolerances`` (and the text forms the
``targets`` entries take).

Like :mod:`necflow.optimize.spec`, the models hold the user's text; the unit a
tolerance needs depends on the field it addresses, so
:mod:`necflow.calibrate.tolerance` converts it against the design.  This
module imports nothing from the rest of necflow, so the schema can import
it without a cycle.
"""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict, Field, field_validator


class _Strict(BaseModel):
    model_config = ConfigDict(extra="forbid", validate_assignment=True,
                              populate_by_name=True, allow_inf_nan=False)


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
