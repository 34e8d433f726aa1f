"""The sweep's reading of report.json: the keys as ductgen.report writes them (sections
``geometry``, ``geometry.transition``, ``flow``, ``warnings``, ``files``, ``cfd``), and a
clear error for a file that is not a build report."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from ductgen.sweep.report_record import METRICS, ReportFormatError, VariantReport

REPORT = {
    "name": "x",
    "geometry": {
        "ramp_length_mm": 212.5,
        "throat_area_mm2": 2500.0,
        "transition": {"steepest_wall_angle_deg": 6.5},
    },
    "flow": {"volume_flow_m3_s": 0.031, "recovery_source": "capture model"},
    "warnings": [{"code": "a", "message": "m"}, {"code": "b", "message": "n"}],
    "files": {"cutter_stl": "x-cutter.stl"},
}


def test_metrics_come_from_their_sections_and_absent_ones_stay_empty() -> None:
    rec = VariantReport.of_report(REPORT)
    assert set(rec.metrics) == set(METRICS)
    assert rec.metrics["ramp_length_mm"] == 212.5
    assert rec.metrics["steepest_wall_angle_deg"] == 6.5  # geometry.transition
    assert rec.metrics["volume_flow_m3_s"] == 0.031  # flow
    assert rec.metrics["recovery_source"] == "capture model"
    assert rec.metrics["plug_volume_mm3"] is None  # not built: not invented
    assert rec.warnings_count == 2
    assert rec.cutter_stl == "x-cutter.stl"
    assert not rec.has_cfd and rec.cfd_volume_flow_m3_s is None


def test_the_cfd_section_is_read_when_present() -> None:
    cfd = {"result": {"volume_flow_m3_s": 0.03, "ram_recovery_flow_avg": 0.8},
           "one_d": {"flow_difference": -0.05}}  # fmt: skip
    rec = VariantReport.of_report({**REPORT, "cfd": cfd})
    assert rec.has_cfd
    assert (rec.cfd_volume_flow_m3_s, rec.cfd_ram_recovery, rec.cfd_flow_difference) == (
        0.03,
        0.8,
        -0.05,
    )


@pytest.mark.parametrize(
    ("text", "says"),
    [
        ("{not json", "is not a ductgen build report"),
        ("[1, 2]", "not an object"),
        (json.dumps({**REPORT, "geometry": [1]}), "'geometry' is a list"),
        (json.dumps({**REPORT, "warnings": {}}), "'warnings' is a dict, not a list"),
        (json.dumps({**REPORT, "files": {"cutter_stl": 3}}), "files.cutter_stl"),
    ],
)
def test_a_malformed_file_names_itself_and_the_fault(tmp_path: Path, text: str, says: str) -> None:
    path = tmp_path / "report.json"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(ReportFormatError) as err:
        VariantReport.read(path)
    assert str(path) in str(err.value) and says in str(err.value)


def test_a_report_file_round_trips(tmp_path: Path) -> None:
    path = tmp_path / "report.json"
    path.write_text(json.dumps(REPORT), encoding="utf-8")
    assert VariantReport.read(path) == VariantReport.of_report(REPORT)
