"""Every bad design file gives ONE ConfigError: file, line, field, what is wrong, in one
line, carrying the file's other problems (each one line too).

The cases are data in ``bad_cases.py`` (the command-line tests reuse them).
"""

from __future__ import annotations

import tracemalloc

import pytest
from bad_cases import BAD_CASES, BASE, BadCase

from necflow.chain import load_design, load_design_text
from necflow.errors import ConfigError

# Words of the validation library that must never reach the user.
LEAKS = ("pydantic", "http", "Value error", "Input should", "Field required",
         "Extra inputs", "validation error", "Traceback")


def test_base_design_is_valid():
    """The cases are edits of BASE; BASE itself must load, or every case proves nothing."""
    assert load_design_text(BASE).name == "test-doublet"


def test_there_are_enough_cases():
    assert len(BAD_CASES) >= 35
    assert len({c.id for c in BAD_CASES}) == len(BAD_CASES), "case ids must be unique"


@pytest.mark.parametrize("case", BAD_CASES, ids=[c.id for c in BAD_CASES])
def test_bad_design(case: BadCase, load_error):
    exc, path = load_error(case.text)
    text = str(exc)
    assert "\n" not in text and "\r" not in text, "the message must be a single line"
    assert exc.file == str(path)
    assert exc.line == case.line, text
    assert exc.field == case.field, text
    where = f"{path}:{case.line}: " if case.line else f"{path}: "
    assert text.startswith(where), text
    if case.field:
        assert text[len(where):].startswith(f"{case.field}: "), text
    assert case.phrase in exc.message, text
    for leak in LEAKS:
        assert leak not in text, f"'{leak}' leaked into: {text}"


@pytest.mark.parametrize("case", [c for c in BAD_CASES if isinstance(c.text, str)][:8],
                         ids=lambda c: c.id)
def test_text_loader_names_the_given_file(case: BadCase):
    with pytest.raises(ConfigError) as info:
        load_design_text(case.text, file="given-name.yaml")
    assert str(info.value).startswith("given-name.yaml")
    assert info.value.line == case.line


def test_several_problems_are_counted(load_error):
    text = BASE.replace("span: 20 m", "span: 20").replace("height: 10 m", "height: ten")
    text = text.replace("region: 2", "region: 9")
    exc, path = load_error(text)
    assert str(exc).endswith("(and 2 more problems)")
    assert exc.field == "region", "the first problem in schema order is reported"
    # every problem is carried, at its own line and field, in file order
    assert [(p.line, p.field) for p in exc.problems] == [
        (2, "region"), (6, "antenna.span"), (7, "antenna.height")]
    assert all(p.file == str(path) for p in exc.problems)
    assert exc.lines()[1] == f"{path}:6: antenna.span: {exc.problems[1].message}"


def test_misspelt_key_is_reported_before_the_missing_one(load_error):
    """A typo makes two errors (unknown key, missing key); the typo is the useful one."""
    exc, _ = load_error(BASE.replace("span: 20 m", "spam: 20 m"))
    assert exc.field == "antenna.spam"
    assert "did you mean 'span'?" in exc.message
    assert str(exc).endswith("(and 1 more problem)")
    assert len(exc.problems) == 2


def test_union_member_errors_merge_into_one(load_error):
    """A feed wire is a name or a number: 1.5 is neither, reported once."""
    text = BASE.replace("""antenna:
  shape: doublet
  span: 20 m
  height: 10 m
  wire: {diameter: 2 mm, material: copper}
""", """antenna:
  shape: wires
  wires:
    - {start: [0 m, 0 m, 10 m], end: [20 m, 0 m, 10 m]}
  feed: {wire: 1.5}
""")
    exc, _ = load_error(text)
    assert exc.field == "antenna.feed.wire"
    assert exc.line == 8
    assert "expected text or a whole number, got the number 1.5" in exc.message
    assert "more problem" not in str(exc) and exc.problems == [exc]


# ----------------------------------------------------------------------------
# Problems with the file itself


def test_missing_file(tmp_path):
    path = tmp_path / "nowhere.yaml"
    with pytest.raises(ConfigError) as info:
        load_design(path)
    assert str(info.value) == f"{path}: no such file; expected the path of a design file (YAML)"


def test_path_is_a_directory(tmp_path):
    with pytest.raises(ConfigError) as info:
        load_design(tmp_path)
    assert str(info.value).startswith(f"{tmp_path}: is a directory")
    assert info.value.line is None


def test_unreadable_file(write):
    """chmod 000 makes a file unreadable, except for root; as root the same
    file is made non-UTF-8 instead, the other way a file cannot be read as text."""
    path = write(BASE)
    path.chmod(0)
    try:
        try:
            path.open("rb").close()
            readable = True
        except PermissionError:
            readable = False
        if readable:  # running as root
            path.chmod(0o600)
            path.write_bytes(b"name: x\nbands: [40m]\n\xff\xfe\n")
            with pytest.raises(ConfigError) as info:
                load_design(path)
            assert str(info.value).startswith(f"{path}:3: not UTF-8 text (byte 0xff)")
        else:
            with pytest.raises(ConfigError) as info:
                load_design(path)
            assert str(info.value) == f"{path}: cannot read the file: permission denied"
    finally:
        path.chmod(0o600)


def test_byte_order_mark_is_accepted(write):
    """Some editors save UTF-8 with a byte-order mark; it is still UTF-8."""
    assert load_design(write(b"\xef\xbb\xbf" + BASE.encode())).name == "test-doublet"


def test_too_many_segments_refused_before_building_arrays():
    """A 1000 km wire at 30 MHz needs about 4 million segments (40 per
    wavelength of 10 m); a coordinate array for them alone would take 96 MB
    (4e6 x 3 x 8 bytes).  The refusal must come from arithmetic: the peak
    memory traced while loading stays under 16 MB, far below that."""
    text = next(c.text for c in BAD_CASES if c.id == "too-many-segments")
    text = text.replace("span: 10 km", "span: 1000 km")
    with pytest.raises(ConfigError):  # warm imports outside the measurement
        load_design_text(text)
    tracemalloc.start()
    try:
        with pytest.raises(ConfigError) as info:
            load_design_text(text)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert info.value.field == "model.max_segments"
    assert peak < 16e6, f"peak {peak / 1e6:.1f} MB while refusing an oversized model"


def test_library_does_not_exit_or_print(capsys, load_error):
    """Errors are exceptions; nothing is printed by the loader."""
    load_error(BASE.replace("span: 20 m", "span: 20"))
    out, err = capsys.readouterr()
    assert out == "" and err == ""


def test_error_has_exit_code_for_the_cli(load_error):
    exc, _ = load_error("")
    assert exc.exit_code == 2
