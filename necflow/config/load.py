"""Read a design file into a validated :class:`~necflow.config.schema.Design`.

Every way a design file can be wrong ends in ONE :class:`ConfigError` whose
text is ``FILE:LINE: field.path: what is wrong; what is expected``.  The YAML
is read with a safe loader that remembers the line of every mapping key and
sequence item, so errors from validation (pydantic), from the catalogs and
from the geometry checks all point at a line.  The wording of validation
errors lives in :mod:`necflow.config.messages`.
"""

from __future__ import annotations

import os
import re
from pathlib import Path
from typing import Any

import yaml
from pydantic import ValidationError

from necflow import limits
from necflow.catalog.bands import TABLES, resolve_bands, unknown_band_message
from necflow.catalog.chokes import CHOKE_TYPES
from necflow.catalog.grounds import SURFACES
from necflow.catalog.lines import LINE_TYPES, resolve_line_type
from necflow.config.messages import (  # noqa: F401  (re-exported)
    Lines,
    describe,
    did_you_mean,
    first_error,
    is_model,
    parse_path,
    path_text,
    translate,
    union_tags,
)
from necflow.config.schema import Design
from necflow.errors import ConfigError, ModelError

# ----------------------------------------------------------------------------
# YAML with line marks


#: Plain scalars the YAML 1.2 core schema resolves to something other than
#: text (YAML 1.2.2 spec, sec. 10.3.2, "Tag Resolution"): null, the six
#: spellings of true/false, decimal, octal (0o) and hexadecimal (0x)
#: integers, and floats with their infinity and not-a-number spellings.
#: Nothing else is: no base-60 numbers (``4:1`` stays the text '4:1'), no
#: yes/no/on/off booleans, no dates, no underscores in numbers.
_CORE_RESOLVERS = [
    ("tag:yaml.org,2002:null", r"^(?:~|null|Null|NULL|)$", ["~", "n", "N", ""]),
    ("tag:yaml.org,2002:bool", r"^(?:true|True|TRUE|false|False|FALSE)$", list("tTfF")),
    ("tag:yaml.org,2002:int", r"^(?:[-+]?[0-9]+|0o[0-7]+|0x[0-9a-fA-F]+)$",
     list("-+0123456789")),
    ("tag:yaml.org,2002:float",
     r"^(?:[-+]?(?:\.[0-9]+|[0-9]+(?:\.[0-9]*)?)(?:[eE][-+]?[0-9]+)?"
     r"|[-+]?\.(?:inf|Inf|INF)|\.(?:nan|NaN|NAN))$", list("-+.0123456789")),
]


#: The C parser (libyaml) when PyYAML has it: the document is composed about
#: eight times faster, which bounds the time a huge file costs before the
#: size checks refuse it.  Resolution and construction stay in Python.
try:
    from yaml.cyaml import CParser as _Parser
except ImportError:  # PyYAML built without libyaml
    _Parser = None
_Bases = ((_Parser, yaml.constructor.SafeConstructor, yaml.resolver.Resolver)
          if _Parser is not None else (yaml.SafeLoader,))


class MarkedLoader(*_Bases):  # type: ignore[misc]
    """Safe YAML loader with YAML 1.2 core-schema scalars that records the
    1-based line of every key and item.

    Plain scalars resolve by the YAML 1.2 core schema, not PyYAML's YAML 1.1
    rules: ``ratio: 4:1`` is the text '4:1' (YAML 1.1 reads the base-60
    integer 241), and ``yes``/``no``/``on``/``off`` are text (only
    ``true``/``false`` are booleans).

    After :meth:`load_marked`, :attr:`lines` maps data paths such as
    ``('feed', 2, 'value')`` to the line where that key (or list item)
    starts.  A key given twice in one mapping is an error.

    References
    ----------
    .. [1] YAML Ain't Markup Language, version 1.2.2 (2021), sec. 10.3
       (core schema).
    """

    yaml_implicit_resolvers: dict = {}

    def __init__(self, stream) -> None:
        if _Parser is None:
            yaml.SafeLoader.__init__(self, stream)
            return
        _Parser.__init__(self, stream)
        yaml.constructor.SafeConstructor.__init__(self)
        yaml.resolver.Resolver.__init__(self)

    def construct_yaml_int(self, node: yaml.ScalarNode) -> int:
        text = str(self.construct_scalar(node))
        if text.startswith("0o"):
            return int(text[2:], 8)
        if text.startswith("0x"):
            return int(text[2:], 16)
        return int(text, 10)

    def construct_yaml_float(self, node: yaml.ScalarNode) -> float:
        text = str(self.construct_scalar(node)).lower()
        if text.endswith(".inf"):
            return float("-inf") if text.startswith("-") else float("inf")
        if text == ".nan":
            return float("nan")
        return float(text)

    def load_marked(self) -> tuple[Any, Lines]:
        node = self.get_single_node()
        self.lines: Lines = {}
        if node is None:
            return None, self.lines
        _check_list_lengths(node)
        _check_size(node)
        self.lines[()] = node.start_mark.line + 1
        self._mark(node, (), set())
        return self.construct_document(node), self.lines

    def _mark(self, node: yaml.Node, path: tuple, active: set[int]) -> None:
        if id(node) in active:  # a recursive alias: its lines are already marked
            return
        active = active | {id(node)}
        if isinstance(node, yaml.MappingNode):
            seen: dict[Any, int] = {}
            for key_node, value_node in node.value:
                if key_node.tag == "tag:yaml.org,2002:merge":
                    continue
                key = self.construct_object(key_node, deep=True)
                line = key_node.start_mark.line + 1
                try:
                    first = seen.get(key)
                except TypeError:  # unhashable key: construct_document reports it
                    continue
                if first is not None:
                    raise ConfigError(
                        f"duplicate key '{key}' (first given at line {first}); "
                        "expected each key once in a mapping",
                        line=line, field=path_text(path + (key,)))
                seen[key] = line
                self.lines[path + (key,)] = line
                if isinstance(key_node, yaml.ScalarNode):
                    _printable(key_node, path + (key,))
                self._mark(value_node, path + (key,), active)
        elif isinstance(node, yaml.SequenceNode):
            for i, item in enumerate(node.value):
                self.lines[path + (i,)] = item.start_mark.line + 1
                self._mark(item, path + (i,), active)
        else:
            _printable(node, path)


def _printable(node: yaml.Node, path: tuple) -> None:
    found = _CONTROL.search(node.value)
    if found:
        raise ConfigError(f"the value holds the control character U+{ord(found.group()):04X}; "
                          "expected printable text", line=node.start_mark.line + 1,
                          field=path_text(path) or None)


for _tag, _pattern, _first in _CORE_RESOLVERS:
    MarkedLoader.add_implicit_resolver(_tag, re.compile(_pattern), _first)
MarkedLoader.add_constructor("tag:yaml.org,2002:int", MarkedLoader.construct_yaml_int)
MarkedLoader.add_constructor("tag:yaml.org,2002:float", MarkedLoader.construct_yaml_float)
# The merge key ('<<') of YAML 1.1 is kept: designs may share blocks with it.
MarkedLoader.add_implicit_resolver("tag:yaml.org,2002:merge", re.compile(r"^(?:<<)$"), ["<"])


#: Control characters no design value may hold (tab, newline and carriage
#: return are fine in YAML text).
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")


#: Lists of a design with an upper length, checked on the parsed document
#: before anything walks it: (path of keys, limit).
_LIST_LIMITS = [(("bands",), limits.MAX_BANDS), (("feed",), limits.MAX_FEED_ELEMENTS),
                (("antenna", "wires"), limits.MAX_WIRES),
                (("report", "alternatives"), limits.MAX_ALTERNATIVES),
                (("report", "elevations"), limits.MAX_ELEVATIONS)]


def _check_list_lengths(root: yaml.Node) -> None:
    """Refuse a list of a design longer than its limit, naming it."""
    for path, limit in _LIST_LIMITS:
        node = root
        for key in path:
            if not isinstance(node, yaml.MappingNode):
                node = None
                break
            node = next((v for k, v in node.value
                         if isinstance(k, yaml.ScalarNode) and k.value == key), None)
            if node is None:
                break
        if isinstance(node, yaml.SequenceNode) and len(node.value) > limit:
            raise ConfigError(f"has {len(node.value):,} entries, more than the limit of {limit}",
                              line=node.start_mark.line + 1, field=".".join(path))


def _check_size(root: yaml.Node) -> None:
    """Refuse a document too large or too deep once its aliases are expanded.

    Counts the nodes every walk of the data would visit (an alias counts as
    a copy of what it names), memoised per node so the count costs one pass
    over the distinct nodes however large the expansion; a node that
    contains itself through an alias is refused as well.  Raised before any
    walk of the expanded data.
    """
    size: dict[int, int] = {}
    depth: dict[int, int] = {}
    busy: set[int] = set()
    stack: list[tuple[yaml.Node, bool]] = [(root, False)]
    while stack:
        node, done = stack.pop()
        key = id(node)
        if done:
            busy.discard(key)
            kids = _children(node)
            size[key] = min(1 + sum(size[id(k)] for k in kids), limits.MAX_YAML_NODES + 1)
            depth[key] = 1 + max((depth[id(k)] for k in kids), default=0)
            continue
        if key in size:
            continue
        if key in busy:
            raise ConfigError("the document refers to itself through an alias (a recursive "
                              "anchor); expected plain data", line=node.start_mark.line + 1)
        busy.add(key)
        stack.append((node, True))
        stack.extend((k, False) for k in _children(node) if id(k) not in size)
    if size[id(root)] > limits.MAX_YAML_NODES:
        if len(size) > limits.MAX_YAML_NODES:
            raise ConfigError(f"the document holds more than {limits.MAX_YAML_NODES:,} values; "
                              "a design is far smaller", line=root.start_mark.line + 1)
        raise ConfigError(f"the document expands to more than {limits.MAX_YAML_NODES:,} values "
                          "once its aliases (*name) are followed; a design is far smaller: "
                          "write the data out, or share less through anchors",
                          line=root.start_mark.line + 1)
    if depth[id(root)] > limits.MAX_YAML_DEPTH:
        raise ConfigError(f"the document nests deeper than {limits.MAX_YAML_DEPTH} levels; a "
                          "design nests about six", line=root.start_mark.line + 1)


def _children(node: yaml.Node) -> list[yaml.Node]:
    if isinstance(node, yaml.MappingNode):
        return [n for pair in node.value for n in pair]
    if isinstance(node, yaml.SequenceNode):
        return list(node.value)
    return []


def _yaml_problem(exc: yaml.YAMLError) -> tuple[str, int | None]:
    mark = getattr(exc, "problem_mark", None) or getattr(exc, "context_mark", None)
    line = mark.line + 1 if mark is not None else None
    problem = getattr(exc, "problem", None) or str(exc).splitlines()[0]
    context = getattr(exc, "context", None)
    text = f"{context}, {problem}" if context else problem
    hint = "check the indentation, colons and quotes on this line or the one before"
    if "\\t" in text or "\t" in text or "tab character" in text:
        hint = "indent with spaces; YAML does not allow tabs"
    return f"not valid YAML: {text}; {hint}", line


def parse_yaml(text: str, file: str | None = None) -> tuple[Any, Lines]:
    """Parse YAML text safely into plain data and its line map.

    Raises
    ------
    ConfigError
        For malformed YAML or a key given twice, with the line.
    """
    if len(text) > limits.MAX_DESIGN_BYTES:
        raise ConfigError(f"the text is more than {limits.MAX_DESIGN_BYTES // 1024 ** 2} MiB, "
                          "the most a design may have", file=file)
    nul = text.find("\x00")
    if nul >= 0:
        raise ConfigError("the file holds a NUL byte (binary data?); expected YAML text",
                          file=file, line=text.count("\n", 0, nul) + 1)
    loader = MarkedLoader(text)
    try:
        return loader.load_marked()
    except ConfigError as exc:
        raise ConfigError(exc.message, file=file, line=exc.line, field=exc.field) from None
    except yaml.YAMLError as exc:
        msg, line = _yaml_problem(exc)
        raise ConfigError(msg, file=file, line=line) from None
    except RecursionError:
        raise ConfigError("not valid YAML: nesting too deep", file=file) from None
    finally:
        loader.dispose()


def locate(error: ConfigError, path: str | os.PathLike) -> ConfigError:
    """Fill in the file and line of an error raised after loading.

    Checks that run on a loaded design (search spaces, tolerances, targets)
    know the field but not where it stands; this finds the line of the field,
    or of its nearest parent the file has.  Never raises: if the file cannot
    be read again the error is returned with the file name alone.
    """
    if error.line is not None or (error.file is not None and error.file != os.fspath(path)):
        return error
    line = None
    try:
        _, lines = parse_yaml(Path(path).read_text(encoding="utf-8"), file=str(path))
        where = parse_path(error.field or "")
        line = None
        while where and line is None:
            # a key may hold dots itself (search, uncertain and adjustable
            # sections are keyed by field paths): try the tail joined up
            for k in range(len(where)):
                joined = where[:k] + (".".join(map(str, where[k:])),)
                if joined in lines:
                    line = lines[joined]
                    break
            where = where[:-1]
    except (OSError, UnicodeDecodeError, ConfigError):
        pass
    return ConfigError(error.message, file=str(path), line=line, field=error.field)


# ----------------------------------------------------------------------------
# Entry points


def read_design_text(path: str | os.PathLike, what: str = "a design file (YAML)",
                     limit: int = limits.MAX_DESIGN_BYTES) -> str:
    """The text of a design (or batch) file, its size checked before reading.

    Raises
    ------
    ConfigError
        A folder, a missing or unreadable file, one larger than ``limit``
        bytes, or one that is not UTF-8 text.
    """
    name = os.fspath(path)
    p = Path(path)
    if p.is_dir():
        raise ConfigError(f"is a directory; expected {what}", file=name)
    try:
        size = p.stat().st_size
        if size > limit:
            raise ConfigError(f"the file is {size / 1024 ** 2:.1f} MiB, more than the "
                              f"{limit / 1024 ** 2:g} MiB {what} may have", file=name)
        with p.open("rb") as fh:
            raw = fh.read(limit + 1)
        if len(raw) > limit:
            raise ConfigError(f"the file is more than {limit / 1024 ** 2:g} MiB, the most "
                              f"{what} may have", file=name)
    except FileNotFoundError:
        raise ConfigError(f"no such file; expected the path of {what}", file=name) from None
    except PermissionError:
        raise ConfigError("cannot read the file: permission denied", file=name) from None
    except OSError as exc:
        raise ConfigError(f"cannot read the file: {exc.strerror or exc}", file=name) from None
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[:exc.start].count(b"\n") + 1
        raise ConfigError(f"not UTF-8 text (byte 0x{raw[exc.start]:02x}); save the file "
                          "as UTF-8", file=name, line=line) from None


def validate_design_file(path: str | os.PathLike) -> tuple[Design, Lines]:
    """Read a design file and validate it against the schema and the catalogs.

    The physics checks that need a wire model (wires that cross, legs below
    ground, a model too large) come on top in
    :func:`necflow.chain.load_design`, which is what jobs call.

    Returns
    -------
    design : Design
        Validated; every value in SI units.
    lines : dict
        The line of every key and list item (for later messages).

    Raises
    ------
    ConfigError
        The most useful problem as ``FILE:LINE: field: message``, carrying
        every other problem of the file in ``others`` (its text adds
        ``(and N more problems)``; ``lines()`` gives one line each).
    """
    return validate_design_text(read_design_text(path), file=os.fspath(path))


def validate_design_text(text: str, file: str = "<string>") -> tuple[Design, Lines]:
    """:func:`validate_design_file` of YAML text (``file`` names it in messages)."""
    data, lines = parse_yaml(text, file)
    if data is None:
        raise ConfigError("the file is empty; expected a design: a mapping with name, "
                          "bands, antenna, ground and feed", file=file)
    if not isinstance(data, dict):
        raise ConfigError(f"expected a mapping (key: value) at the top level, got "
                          f"{describe(data)}", file=file, line=lines.get(()))
    try:
        design = Design.model_validate(data, context={"from_file": True})
    except ValidationError as exc:
        problems = translate(exc, data)
        seen = {path for _, path in problems}
        problems += [p for p in _raw_name_problems(data) if p[1] not in seen]
        raise first_error(problems, file, lines) from None
    problems = _semantic_problems(design)
    if problems:
        raise first_error(problems, file, lines)
    return design, lines


def at_field(exc: ConfigError | ModelError, file: str, lines: Lines) -> ConfigError:
    """An error found after validation, placed at its field's line."""
    field = getattr(exc, "field", None)
    message = getattr(exc, "message", None) or str(exc)
    return first_error([(message, parse_path(field) if field else None)], file, lines)


# ----------------------------------------------------------------------------
# Checks after validation


def _raw_name_problems(data: dict) -> list[tuple[str, tuple | None]]:
    """The catalog names of a design that did not validate: bands, line
    types and the ground surface, read from the raw data so that they are
    reported with the schema's problems instead of after their fix."""
    out: list[tuple[str, tuple | None]] = []
    region = data.get("region", 2)
    bands = data.get("bands")
    if region in TABLES and isinstance(bands, list):
        for i, b in enumerate(bands):
            if isinstance(b, str) and b not in TABLES[region].edges:
                out.append((unknown_band_message(b, region), ("bands", i)))
    feed = data.get("feed")
    for i, e in enumerate(feed if isinstance(feed, list) else []):
        line = e.get("line") if isinstance(e, dict) else None
        if isinstance(line, str) and line != "custom" and line not in LINE_TYPES:
            out.append((_unknown_line(line), ("feed", i, "line")))
    ground = data.get("ground")
    s = ground.get("surface") if isinstance(ground, dict) else None
    if isinstance(s, str) and s not in SURFACES:
        out.append((_unknown_surface(s), ("ground", "surface")))
    return out


#: Words builders use for the catalog's ground surfaces (ITU-R P.527 names
#: them by wetness; "poor", "average" and "good" ground are common practice
#: for the same range, low to high conductivity).
SURFACE_WORDS = {
    "average": "medium-dry", "medium": "medium-dry", "normal": "medium-dry",
    "typical": "medium-dry", "average ground": "medium-dry", "dry": "very-dry",
    "poor": "very-dry", "sandy": "very-dry", "rocky": "very-dry", "urban": "very-dry",
    "city": "very-dry", "good": "wet", "moist": "wet", "damp": "wet", "marsh": "wet",
    "sea": "sea-water", "salt water": "sea-water", "ocean": "sea-water",
    "fresh": "fresh-water", "lake": "fresh-water", "river": "fresh-water",
}

#: Words builders use for the catalog's line types.
LINE_WORDS = {
    "window": "window-450", "window line": "window-450", "ladder": "window-450",
    "ladder line": "window-450", "450 ohm": "window-450", "450": "window-450",
    "twin lead": "twin-lead-300", "twinlead": "twin-lead-300", "ribbon": "twin-lead-300",
    "300 ohm": "twin-lead-300", "open wire": "open-wire-600", "600 ohm": "open-wire-600",
    "feeder": "open-wire-600", "coax": "rg-213", "rg-8": "rg-8-foam",
}


def _unknown_line(line: str) -> str:
    return (f"unknown line type '{line}'; {did_you_mean(line, LINE_TYPES, LINE_WORDS)}"
            f"expected one of {', '.join(LINE_TYPES)}, or 'custom'")


def _unknown_surface(s: str) -> str:
    return (f"unknown ground surface '{s}'; {did_you_mean(s, SURFACES, SURFACE_WORDS)}"
            f"expected one of {', '.join(SURFACES)}, or give permittivity and conductivity")


def _semantic_problems(design: Design) -> list[tuple[str, tuple | None]]:
    """Names that must exist in the catalogs (bands, line types, chokes,
    surfaces), lines that lose more than anything could pass, and measured
    choke points that do not cover the bands."""
    out: list[tuple[str, tuple | None]] = []
    for i, b in enumerate(design.bands):
        if b.low is None and b.name not in TABLES[design.region].edges:
            out.append((unknown_band_message(b.name, design.region), ("bands", i)))
    for i, e in enumerate(design.feed):
        line = getattr(e, "line", None)
        if line is not None and line != "custom" and line not in LINE_TYPES:
            out.append((_unknown_line(line), ("feed", i, "line")))
    remote = design.report.tuner.remote_line
    if remote is not None and (remote not in LINE_TYPES or LINE_TYPES[remote].balanced):
        coax = [k for k, v in LINE_TYPES.items() if not v.balanced]
        out.append((f"'{remote}' is not an unbalanced catalog line; "
                    f"{did_you_mean(remote, coax, LINE_WORDS)}expected one of {', '.join(coax)}",
                    ("report", "tuner", "remote_line")))
    for path, spec in _chokes(design):
        name = spec.catalog
        if name is not None and name not in CHOKE_TYPES:
            out.append((f"unknown choke '{name}'; {did_you_mean(name, CHOKE_TYPES)}expected one "
                        f"of {', '.join(CHOKE_TYPES)}", path + ("catalog",)))
    if not out:
        out += _line_loss_problems(design)
        out += _choke_span_problems(design)
    s = design.ground.surface
    if s is not None and s not in SURFACES:
        out.append((_unknown_surface(s), ("ground", "surface")))
    return out


def _chokes(design: Design) -> list[tuple[tuple, Any]]:
    """(path of the choke, ChokeSpec) of every choke a design gives: choke
    elements and transformers' chokes, in the feed and in the alternatives."""
    feeds = [(("feed",), design.feed)]
    feeds += [(("report", "alternatives", j, "feed"), a.feed)
              for j, a in enumerate(design.report.alternatives)]
    return [(prefix + (i, "choke"), e.choke) for prefix, feed in feeds
            for i, e in enumerate(feed) if getattr(e, "choke", None) is not None]


def _choke_span_problems(design: Design) -> list[tuple[str, tuple | None]]:
    """Measured choke points must cover every band: outside them the
    impedance is unknown (a ferrite choke's falls on both sides of its
    resistive region, so holding the end values would overstate it)."""
    bands = resolve_bands(design)
    f_lo, f_hi = min(b.low_hz for b in bands), max(b.high_hz for b in bands)
    out: list[tuple[str, tuple | None]] = []
    for path, spec in _chokes(design):
        span = spec.span_hz
        if span is not None and not (span[0] <= f_lo and f_hi <= span[1]):
            out.append((f"the measured points span {span[0] / 1e6:g}-{span[1] / 1e6:g} MHz but "
                        f"the bands reach {f_lo / 1e6:g}-{f_hi / 1e6:g} MHz; give points "
                        "across every band (outside its points a choke's impedance is "
                        "unknown)", path + ("points",)))
    return out


#: Most matched loss one line may have at the top frequency [dB]: beyond it
#: nothing measurable reaches the antenna (and the wave solution overflows
#: near 6000 dB).
MAX_LINE_LOSS_DB = 300.0


def _line_loss_problems(design: Design) -> list[tuple[str, tuple | None]]:
    bands = resolve_bands(design)
    f_max = max(b.high_hz for b in bands)
    out: list[tuple[str, tuple | None]] = []
    for i, el in enumerate(design.feed):
        if getattr(el, "line", None) is None:
            continue
        try:
            lt = resolve_line_type(el.line, el.impedance, el.velocity_factor, el.loss,
                                   el.balanced)
        except KeyError:
            continue                   # named by the catalog check
        db = float(lt.attenuation_db_per_m(f_max)) * el.length
        if not db <= MAX_LINE_LOSS_DB:
            out.append((f"this line loses {db:.3g} dB matched at {f_max / 1e6:g} MHz, more "
                        f"than {MAX_LINE_LOSS_DB:g} dB: nothing would reach the antenna; "
                        "check its length and loss figures", ("feed", i, "length")))
    return out


__all__ = ["MarkedLoader", "parse_yaml", "read_design_text", "validate_design_file",
           "validate_design_text", "at_field", "locate"]
