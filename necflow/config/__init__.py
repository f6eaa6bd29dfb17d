"""The design file: schema, validation with one-line errors, field paths,
resolved output, key reference.

``validate_design_file(path)`` reads a design file and checks it against the
schema and the catalogs (:func:`necflow.chain.load_design` adds the checks
that need a wire model); ``resolved_yaml(design)`` writes it back with every
default and unit; ``necflow.config.reference`` generates the README's key
table from the schema.
"""

from necflow.config.load import validate_design_file, validate_design_text
from necflow.config.resolve import config_sha256, resolve_design, resolved_yaml
from necflow.config.schema import Design

__all__ = ["Design", "config_sha256", "resolve_design", "resolved_yaml",
           "validate_design_file", "validate_design_text"]
