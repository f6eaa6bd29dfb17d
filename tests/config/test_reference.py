"""The README's key reference is generated from the schema and kept in step."""

from __future__ import annotations

from pathlib import Path

import pytest
from pydantic import BaseModel

from necflow.config import reference, schema
from necflow.config import sections as spec

ROOT = Path(__file__).resolve().parents[2]
COMMAND = "python -m necflow.config.reference --write README.md (or: make docs)"


def test_readme_section_matches_the_schema():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = reference.readme_section(text)
    assert section is not None, (f"README.md lacks the '{reference.START}' ... "
                                 f"'{reference.END}' markers")
    if section != reference.markdown().strip():
        pytest.fail(f"README.md's key reference is out of date with the schema; run: {COMMAND}",
                    pytrace=False)


def _models() -> list[type[BaseModel]]:
    out = []
    for module in (schema, spec):
        for obj in vars(module).values():
            if (isinstance(obj, type) and issubclass(obj, BaseModel)
                    and obj.__module__ == module.__name__ and obj.model_fields):
                out.append(obj)
    return out


def _keys(table: str) -> list[str]:
    return [line.split("`")[1] for line in table.splitlines() if line.startswith("| `")]


@pytest.mark.parametrize("model", _models(), ids=lambda m: m.__name__)
def test_every_field_is_listed(model):
    """Every field of every model of the design file appears as a key's last part."""
    last = {k.replace("[]", "").rsplit(".", 1)[-1] for k in _keys(reference.markdown())}
    missing = [name for name in model.model_fields if name not in last]
    assert not missing, f"{model.__name__}: {missing} not in the key reference"


def test_rows_carry_unit_default_and_description():
    rows = {line.split(" | ")[0][2:]: line.split(" | ")[1:]
            for line in reference.markdown().splitlines() if line.startswith("| `")}
    assert rows["`antenna.span` (doublet, off-centre)"] == [
        "m", "required", "Tip-to-tip length of the wire |"]
    diameter = next(v for k, v in rows.items()     # every shape with a wire, the first four
                    if k.startswith("`antenna.wire.diameter` (doublet, off-centre, inverted-v, "
                                    "wires"))
    assert diameter[:2] == ["mm", "2 mm"]
    assert rows["`feed[].length` (line)"][:2] == ["m", "required"]
    assert rows["`bands[].points`"][:2] == ["", "11"]
    assert rows["`radio.impedance`"][:2] == ["ohm", "50 ohm"]
    assert rows["`feed[].ratio` (transformer)"][1] == "1:1"
    assert rows["`ground.surface`"][1] == "not set"
    assert rows["`antenna.shape`"][2].startswith("One of doublet, off-centre, inverted-v, wires")


def test_keys_are_unique():
    keys = [line.split(" | ")[0] for line in reference.markdown().splitlines()
            if line.startswith("| `")]
    assert len(keys) == len(set(keys))


def test_update_readme_replaces_only_the_section():
    text = f"# Title\n\nbefore\n{reference.START}\nold table\n{reference.END}\nafter\n"
    new = reference.update_readme(text)
    assert new.startswith("# Title\n\nbefore\n" + reference.START + "\n")
    assert new.endswith(reference.END + "\nafter\n")
    assert "old table" not in new
    assert reference.readme_section(new) == reference.markdown().strip()
    assert reference.update_readme(new) == new, "updating twice changes nothing"


def test_update_readme_without_markers_is_refused():
    with pytest.raises(ValueError, match="design-keys"):
        reference.update_readme("# A README without the markers\n")


def test_command_writes_the_file(tmp_path):
    path = tmp_path / "README.md"
    path.write_text(f"x\n{reference.START}\n{reference.END}\n", encoding="utf-8")
    assert reference.main(["--write", str(path)]) == 0
    assert reference.readme_section(path.read_text(encoding="utf-8")) == \
        reference.markdown().strip()
