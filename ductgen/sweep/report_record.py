"""What a sweep reads from a variant's ``report.json``, as a typed record.

A report reaches the sweep either from a build in memory or from a cached variant's folder
on disk; either way it is parsed here, once, into a :class:`VariantReport`, and the
comparison table reads its attributes. A file that is not a build report raises
:class:`ReportFormatError`, naming the file and what is wrong with it.
"""

from __future__ import annotations

import json
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

__all__ = ["METRICS", "ReportFormatError", "VariantReport", "metric_value"]

#: Report metrics copied into the table, in column order (names as in report.json).
METRICS: tuple[str, ...] = (
    "ramp_length_mm",
    "throat_area_mm2",
    "ramp_cavity_volume_mm3",
    "cutter_volume_mm3",
    "insert_volume_mm3",
    "plug_volume_mm3",
    "wetted_area_mm2",
    "max_wall_divergence_deg",
    "steepest_wall_angle_deg",
    "length_under_stall_line_mm",
    "delta_over_depth",
    "volume_flow_m3_s",
    "ram_recovery",
    "recovery_uncertainty",
    "recovery_source",
    "momentum_drag_n",
)


class ReportFormatError(ValueError):
    """A ``report.json`` that is not a build report (not JSON, or a section of the wrong
    kind)."""


def metric_value(report: Mapping[str, Any] | None, name: str) -> Any:
    """A metric from a report: under ``geometry``, ``flow``, ``geometry.transition`` or at
    the top level; None if the report does not have it (nothing is invented)."""
    if not report:
        return None
    geo = report.get("geometry")
    transition = geo.get("transition") if isinstance(geo, dict) else None
    for sec in (geo, report.get("flow"), transition):
        if isinstance(sec, dict) and name in sec:
            return sec[name]
    return report.get(name)


def _section(report: Mapping[str, Any], key: str) -> dict[str, Any]:
    """A section that must be an object when present ({} when absent or null)."""
    sec = report.get(key)
    if sec is None:
        return {}
    if not isinstance(sec, dict):
        raise ReportFormatError(f"'{key}' is a {type(sec).__name__}, not an object")
    return sec


@dataclass(frozen=True)
class VariantReport:
    """The numbers the sweep's comparison reads from one variant's report.

    Attributes:
        metrics: every name of :data:`METRICS` → its value (mm, deg, SI, or text), None
            where the report does not have it.
        warnings_count: how many warnings the report lists.
        cutter_stl: the cutter's STL file name (in the variant's folder), None when not made.
        has_cfd: the report has a ``cfd`` section (``ductgen sweep --cfd``).
        cfd_volume_flow_m3_s, cfd_ram_recovery, cfd_flow_difference: the CFD check's flow
            (m³/s), flow-averaged ram recovery and its difference from the 1-D estimate
            (None where absent).
    """

    metrics: dict[str, Any]
    warnings_count: int
    cutter_stl: str | None
    has_cfd: bool = False
    cfd_volume_flow_m3_s: float | None = None
    cfd_ram_recovery: float | None = None
    cfd_flow_difference: float | None = None

    @classmethod
    def of_report(cls, report: Any) -> VariantReport:
        """The record of a report document (as ``report.json`` holds it).

        Raises:
            ReportFormatError: the document is not an object, or a section is of the
                wrong kind.
        """
        if not isinstance(report, dict):
            raise ReportFormatError(f"the report is a {type(report).__name__}, not an object")
        for key in ("geometry", "flow"):
            _section(report, key)
        warnings = report.get("warnings", [])
        if not isinstance(warnings, list):
            raise ReportFormatError(f"'warnings' is a {type(warnings).__name__}, not a list")
        stl = _section(report, "files").get("cutter_stl")
        if stl is not None and not isinstance(stl, str):
            raise ReportFormatError("'files.cutter_stl' is not a file name")
        cfd = _section(report, "cfd")
        result, one_d = _section(cfd, "result"), _section(cfd, "one_d")
        return cls(
            metrics={m: metric_value(report, m) for m in METRICS},
            warnings_count=len(warnings),
            cutter_stl=stl or None,
            has_cfd="cfd" in report,
            cfd_volume_flow_m3_s=result.get("volume_flow_m3_s"),
            cfd_ram_recovery=result.get("ram_recovery_flow_avg"),
            cfd_flow_difference=one_d.get("flow_difference"),
        )

    @classmethod
    def read(cls, path: Path) -> VariantReport:
        """The record of a ``report.json`` file.

        Raises:
            OSError: the file cannot be read.
            ReportFormatError: it is not JSON or not a build report (the message names
                the file).
        """
        try:
            return cls.of_report(json.loads(path.read_text(encoding="utf-8")))
        except ValueError as err:  # not UTF-8, not JSON (JSONDecodeError), not a report
            raise ReportFormatError(f"{path} is not a ductgen build report: {err}") from None
