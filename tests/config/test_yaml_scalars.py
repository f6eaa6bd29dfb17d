"""Design files are read with YAML 1.2 core-schema scalars.

Under PyYAML's YAML 1.1 rules an unquoted ``4:1`` is the base-60 integer
241 (4 * 60 + 1), and ``yes``/``no``/``on``/``off`` are booleans.  The YAML
1.2 core schema (YAML 1.2.2 spec, sec. 10.3.2) resolves neither: they stay
text.  The expected ratio of each case is the arithmetic A/B of the text
written, computed here; the base-60 value a YAML 1.1 reader would have made
is computed here too, to show what the old reading was.
"""

from __future__ import annotations

import numpy as np
import pytest
import yaml
from bad_cases import BASE

from necflow.chain import load_design_text
from necflow.config.load import parse_yaml
from necflow.errors import ConfigError

RATIOS = ["1:1", "4:1", "9:1", "49:1", "64:1", "1:4", "2.25:1", "12:1"]


def _sexagesimal(text: str) -> int:
    """What YAML 1.1 makes of ``A:B`` with whole A and B: A * 60 + B."""
    value = 0
    for part in text.split(":"):
        value = value * 60 + int(part)
    return value


def _with_ratio(written: str) -> str:
    return BASE.replace('ratio: "1:1"', f"ratio: {written}")


@pytest.mark.parametrize("text", RATIOS)
@pytest.mark.parametrize("quote", ["", '"', "'"], ids=["plain", "double", "single"])
def test_every_ratio_form_means_its_ratio(text, quote):
    design = load_design_text(_with_ratio(f"{quote}{text}{quote}"))
    a, b = (float(x) for x in text.split(":"))
    assert design.feed[2].ratio == pytest.approx(a / b, rel=1e-15)


@pytest.mark.parametrize("text", [r for r in RATIOS if "." not in r])
def test_yaml_11_would_have_read_base_60(text):
    """The failure this guards against, shown with PyYAML's own YAML 1.1
    reader: the unquoted ratio became an integer."""
    assert yaml.safe_load(f"ratio: {text}")["ratio"] == _sexagesimal(text)
    assert parse_yaml(f"ratio: {text}")[0]["ratio"] == text


@pytest.mark.parametrize("word", ["yes", "no", "on", "off", "y", "n", "Yes", "OFF"])
def test_yaml_11_boolean_words_are_text(word):
    assert parse_yaml(f"a: {word}")[0]["a"] == word


@pytest.mark.parametrize("word, value", [("true", True), ("false", False), ("True", True),
                                         ("FALSE", False)])
def test_only_true_and_false_are_booleans(word, value):
    assert parse_yaml(f"a: {word}")[0]["a"] is value


@pytest.mark.parametrize("text, value", [
    ("012", 12),            # YAML 1.1: octal 10
    ("0o17", 15), ("0x1F", 31), ("-7", -7), ("+3", 3),
    ("1e3", 1000.0),        # YAML 1.1: the text '1e3'
    ("2.5", 2.5), (".5", 0.5)])
def test_core_schema_numbers(text, value):
    got = parse_yaml(f"a: {text}")[0]["a"]
    assert got == value and type(got) is type(value)


@pytest.mark.parametrize("text", ["2024-01-01", "1_000", "12:30:00", "0b101"])
def test_no_dates_underscores_or_other_1_1_forms(text):
    assert parse_yaml(f"a: {text}")[0]["a"] == text


def test_special_floats():
    d = parse_yaml("a: .inf\nb: -.Inf\nc: .nan\n")[0]
    assert d["a"] == np.inf and d["b"] == -np.inf and np.isnan(d["c"])


@pytest.mark.parametrize("written", ["4", "241", "4.0"])
def test_a_ratio_given_as_a_number_is_refused_with_what_to_write(written):
    with pytest.raises(ConfigError) as info:
        load_design_text(_with_ratio(written), file="d.yaml")
    text = str(info.value)
    assert text.startswith("d.yaml:13: feed[2].ratio:"), text
    assert "'4:1'" in text and "text" in text


@pytest.mark.parametrize("field, written", [("name", "1"), ("feed[0].id", "7")])
def test_a_text_field_given_a_number_is_refused(field, written):
    text = BASE.replace("name: test-doublet", f"name: {written}") if field == "name" else \
        BASE.replace("{id: ladder,", f"{{id: {written},")
    with pytest.raises(ConfigError) as info:
        load_design_text(text, file="d.yaml")
    msg = str(info.value)
    assert f": {field}: expected text, got" in msg and "quotes" in msg, msg


def test_a_boolean_word_in_a_text_field_is_kept_as_written():
    """``name: no`` is the name 'no' (YAML 1.1 made it False, then refused it)."""
    design = load_design_text(BASE.replace("name: test-doublet", "name: no"))
    assert design.name == "no"


@pytest.mark.parametrize("written", ["'1e400:1'", "'1:0'", "'500:1'", "'1:" + "9" * 400 + "'"])
def test_absurd_ratios_are_refused(written):
    with pytest.raises(ConfigError) as info:
        load_design_text(_with_ratio(written), file="d.yaml")
    assert "feed[2].ratio" in str(info.value)


def test_resolved_design_keeps_an_unquoted_ratio():
    """The repro: the resolved design showed '241:1' for an unquoted 4:1."""
    from necflow.config.resolve import resolved_yaml

    data = yaml.safe_load(resolved_yaml(load_design_text(_with_ratio("4:1"))))
    assert data["feed"][2]["ratio"] == "4:1"


@pytest.mark.parametrize("word", ["yes", "on", "y"])
def test_a_yes_word_is_not_a_boolean_for_a_switch(word):
    with pytest.raises(ConfigError) as info:
        load_design_text(BASE.replace("{id: ladder, line: window-450, length: 10 m}",
                                      f"{{id: ladder, line: window-450, length: 10 m, "
                                      f"balanced: {word}}}"), file="d.yaml")
    assert "feed[0].balanced: expected true or false" in str(info.value)
