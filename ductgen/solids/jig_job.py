"""The conformal marking jig's kernel-worker job, in a module that loads no CAD kernel when
imported (the job table and the build import it in the parent process); the job itself
imports :mod:`ductgen.solids.jig`, which does, in the worker."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from ductgen.design import Design

__all__ = ["jig_job"]


def jig_job(
    d: Design,
    kerf_mm: float,
    bed: tuple[float, float, float],
    quality: str,
    prefix: str,
    staging: str,
) -> dict[str, Any]:
    """Kernel-worker job: build, map, check and stage ``PREFIX-jig.step/.stl`` (and
    ``PREFIX-jig-partK``; kerf and lengths in mm). See :func:`ductgen.solids.jig.jig_job`."""
    from ductgen.solids import jig

    return jig.jig_job(d, kerf_mm, bed, quality, prefix, staging)
