"""The design file: schema, loading with one-line errors, resolved output, key reference.

``load_design(path)`` reads and checks a design file; ``resolved_yaml(design)``
writes it back with every default and unit; ``necflow.config.reference``
generates the README's key table from the schema.
"""

from necflow.config.load import load_design, load_design_text
from necflow.config.resolve import config_sha256, resolve_design, resolved_yaml
from necflow.config.schema import Design

__all__ = ["Design", "config_sha256", "load_design", "load_design_text", "resolve_design",
           "resolved_yaml"]
