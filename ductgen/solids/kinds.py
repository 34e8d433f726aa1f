"""Names of the solids, importable without the CAD kernel."""

from __future__ import annotations

__all__ = ["SOLID_KINDS"]

#: Solid kinds in build order.
SOLID_KINDS: tuple[str, ...] = ("cutter", "insert", "plug")
