"""The skin and the template as typed records: the report's ``geometry.skin`` and
``template`` sections as written, and the numbers later stages read (the drawing sheet's key
dimensions) as attributes (mm, %).

The skin section's keys are read here, once, beside the modules that write them
(:mod:`ductgen.design.skin`, :mod:`ductgen.design.panel`); every other stage reads the
attributes.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

__all__ = ["SkinRecord", "TemplateRecord"]


def _opt_float(section: Mapping[str, Any], key: str) -> float | None:
    v = section.get(key)
    return None if v is None else float(v)


def _opt_str(section: Mapping[str, Any], key: str) -> str | None:
    v = section.get(key)
    return None if v is None else str(v)


@dataclass(frozen=True)
class SkinRecord:
    """The ``geometry.skin`` section (``section``, written to ``report.json`` unchanged)
    and its numbers as typed attributes; None where the shape has no such entry.

    Attributes:
        shape: ``flat``, ``cylinder``, ``doubly`` or ``panel``.
        side: ``convex`` or ``concave`` (curved analytic skins).
        radius_mm, axis: the cylinder's radius (mm) and axis.
        radius_streamwise_mm, radius_spanwise_mm: the doubly curved skin's radii (mm).
        file: the user's panel file's name (panel).
        smallest_radius_mm, smallest_radius_side: the panel's smallest radius under the
            parts (mm; None when practically flat) and its side.
        fit_rms_mm, fit_max_mm: the spline fit to a scanned panel, rms and largest (mm).
    """

    section: dict[str, Any]
    shape: str
    side: str | None = None
    radius_mm: float | None = None
    axis: str | None = None
    radius_streamwise_mm: float | None = None
    radius_spanwise_mm: float | None = None
    file: str | None = None
    smallest_radius_mm: float | None = None
    smallest_radius_side: str | None = None
    fit_rms_mm: float | None = None
    fit_max_mm: float | None = None

    @classmethod
    def of_section(cls, section: dict[str, Any]) -> SkinRecord:
        """The record of a ``geometry.skin`` section (a design's ``skin_summary``, with or
        without the report's datum and outlet entries)."""
        s = section
        return cls(
            section=section,
            shape=str(s.get("shape", "flat")),
            side=_opt_str(s, "side"),
            radius_mm=_opt_float(s, "radius_mm"),
            axis=_opt_str(s, "axis"),
            radius_streamwise_mm=_opt_float(s, "radius_streamwise_mm"),
            radius_spanwise_mm=_opt_float(s, "radius_spanwise_mm"),
            file=_opt_str(s, "file"),
            smallest_radius_mm=_opt_float(s, "smallest_radius_mm"),
            smallest_radius_side=_opt_str(s, "smallest_radius_side"),
            fit_rms_mm=_opt_float(s, "fit_rms_mm"),
            fit_max_mm=_opt_float(s, "fit_max_mm"),
        )


@dataclass(frozen=True)
class TemplateRecord:
    """The ``template`` section: how the template was developed (``exact`` or the
    least-distortion method) and its largest length distortion (%)."""

    development: str
    max_length_distortion_pct: float

    def section(self) -> dict[str, Any]:
        """The ``template`` section as written to ``report.json``."""
        return {
            "development": self.development,
            "max_length_distortion_pct": self.max_length_distortion_pct,
        }
