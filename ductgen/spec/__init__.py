"""Spec files: strict, frozen, unit-aware."""

from ductgen.spec.load import load_spec, parse_spec, read_spec_data, spec_sha256
from ductgen.spec.model import Spec

__all__ = ["Spec", "load_spec", "parse_spec", "read_spec_data", "spec_sha256"]
