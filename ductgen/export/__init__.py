"""Exporters: encoders that return bytes, and the atomic writer."""

from ductgen.atomic import OutputSet, check_free, write_atomic

__all__ = ["OutputSet", "check_free", "write_atomic"]
