"""The design file's JSON Schema (``necflow schema``), checked with an
independent validator (the jsonschema package, draft 2020-12)."""

from __future__ import annotations

from pathlib import Path

import pytest

from necflow.config.design_schema import design_json_schema
from necflow.config.load import parse_yaml
from necflow.config.starters import STARTERS, starter

jsonschema = pytest.importorskip("jsonschema", reason="the test extras install jsonschema")

ROOT = Path(__file__).resolve().parents[2]
SHIPPED = {f"configs/{p.name}": p for p in sorted((ROOT / "configs").glob("*.yaml"))}
SHIPPED |= {f"configs/measured/{p.name}": p
            for p in sorted((ROOT / "configs" / "measured").glob("*.yaml"))}
SHIPPED |= {f"necflow/examples/{p.name}": p
            for p in sorted((ROOT / "necflow" / "examples").glob("*.yaml"))}


@pytest.fixture(scope="module")
def validator():
    schema = design_json_schema()
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(schema)


def _data(text: str):
    # read as necflow reads it (YAML 1.2 core schema), then checked by jsonschema
    return parse_yaml(text)[0]


def _errors(validator, data) -> list[str]:
    return [f"{list(e.absolute_path)}: {e.message}" for e in validator.iter_errors(data)]


@pytest.mark.parametrize("name", list(SHIPPED))
def test_every_shipped_design_validates(name, validator):
    assert not _errors(validator, _data(SHIPPED[name].read_text(encoding="utf-8")))


@pytest.mark.parametrize("shape", list(STARTERS))
@pytest.mark.parametrize("bands", [None, ["160m", "20m"]])
def test_every_starter_validates(shape, bands, validator):
    assert not _errors(validator, _data(starter(shape, bands)))


@pytest.mark.parametrize("edit,where", [
    (("span: 30 m", "spam: 30 m"), "antenna"),               # unknown key
    (("span: 30 m", "span: thirty"), "antenna.span"),          # no number
    (("shape: doublet", "shape: dipole"), "antenna.shape"),    # no such shape
    (("ratio: \"1:1\"", "ratio: one"), "feed"),                # not a ratio
    (("model: sommerfeld", "model: sommerfield"), "ground.model"),
    (("points: 11", "points: 11"), None),                      # control: valid
])
def test_the_schema_refuses_what_necflow_refuses(edit, where, validator):
    base = (ROOT / "configs" / "demo.yaml").read_text(encoding="utf-8")
    base = base.replace("bands: [80m, 40m, 20m, 17m, 10m]", "bands: [80m, {name: 40m, "
                        "points: 11}]")
    assert edit[0] in base
    errors = _errors(validator, _data(base.replace(edit[0], edit[1], 1)))
    assert bool(errors) == (where is not None), errors


def test_quantities_carry_their_unit_and_default_as_written():
    schema = design_json_schema()
    diameter = schema["$defs"]["WireSpec"]["properties"]["diameter"]
    assert (diameter["dimension"], diameter["unit"], diameter["default"]) == ("length", "mm",
                                                                               "2 mm")
    power = schema["$defs"]["Radio"]["properties"]["power"]
    types = {b.get("type") for b in power["anyOf"]}
    assert types == {"string", "number"}, "text with a unit, or an SI number"
