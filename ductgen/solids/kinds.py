"""Names of the solids, importable without the CAD kernel."""

from __future__ import annotations

__all__ = ["INSERT_BODIES", "SOLID_KINDS"]

#: Solid kinds in build order.
SOLID_KINDS: tuple[str, ...] = ("cutter", "insert", "plug")

#: Not a kind: the key under which the insert's outer body and inner pieces, made ahead in
#: another worker (:func:`ductgen.solids.handoff.insert_bodies_job`), reach its build.
INSERT_BODIES = "insert bodies"
