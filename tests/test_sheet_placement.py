"""The drawing sheet on curved skins and on the user's panel: every text clear of every other
text and of every drawn line, the section drawn on the skin, the datum and the outlet stated
in a named frame. Read back with pymupdf (an independent PDF reader), as the flat sheets'
label test does.

Independent checks: the skin falls below the tangent plane by R(1 - cos(s/R)) at arc length
s along a cylinder curving along the flow (circle geometry, closed form), so the drawn skin
line's lowest point is measured against it; the outlet axis leaves a spanwise cylinder along
its tangent at the outlet station, s/R below the datum's x axis (closed form); on a moved
cylinder panel the datum is the point the spec names, and the outlet point the analytic
skin's moved by the same rigid motion. Text clear of lines is drafting practice (common
practice, no source).
"""

from __future__ import annotations

import re

import numpy as np
import pymupdf
import pytest

from ductgen.design import build_design
from ductgen.design.record import SkinRecord, TemplateRecord
from ductgen.flow.record import FlowRecord
from ductgen.flow.report import flow_section
from ductgen.sheets import skin_lines
from ductgen.sheets.sheet import sheet_pdf
from ductgen.spec import load_spec, parse_spec, read_spec_data, spec_sha256
from tests.conftest import ROOT
from tests.pdf_overlap import PT, audit_page, text_overlaps

CURVED = ["kitcar-bonnet-intake", "round-cowling-vent"]
#: every sample, flat ones included: the same rules hold on every sheet
SAMPLES = sorted(p.stem for p in (ROOT / "samples").glob("*.toml"))


def _sheet(spec, split=()) -> pymupdf.Page:  # type: ignore[no-untyped-def]
    """The sheet as a build draws it (AIRFLOW block included when the spec has [flow]),
    without the preview picture (an image, not text or lines)."""
    d = build_design(spec)
    skin = SkinRecord.of_section(dict(d.skin_summary))
    flow = (
        FlowRecord.of_section(flow_section(spec.flow, d.duct)[0]) if spec.flow is not None else None
    )
    pdf = sheet_pdf(
        d.geometry,
        spec,
        spec_sha256(spec),
        "0",
        None,
        flow,
        split,
        skin_lines(skin, TemplateRecord("exact", 0.0)),
        design=d,
    )
    return pymupdf.open(stream=pdf, filetype="pdf")[0]


def _clear(page: pymupdf.Page) -> None:
    a = audit_page(page, edge_mm=5.0)
    assert a.text_hits == []
    assert a.off_page == []
    assert text_overlaps(page) == []


@pytest.mark.parametrize("paper", ["A4", "Letter"])
@pytest.mark.parametrize("name", SAMPLES)
def test_no_text_overlaps_text_or_lines(name: str, paper: str) -> None:
    data = read_spec_data(ROOT / "samples" / f"{name}.toml")
    data["template"] = {**data.get("template", {}), "paper": paper}
    spec = parse_spec(data, base_dir=ROOT / "samples")  # a panel file is beside its spec
    length = build_design(spec).geometry.length_mm
    page = _sheet(spec, split=(0.55 * length, 1.2 * length))  # a split insert's glue faces
    assert "split 1" in page.get_text()
    _clear(page)


#: Skins beyond the samples: concave (the skin rises over the duct), doubly curved both ways.
SKINS = {
    "cylinder-spanwise-concave": {
        "shape": "cylinder",
        "radius": 900,
        "axis": "spanwise",
        "side": "concave",
    },
    "cylinder-streamwise-concave": {
        "shape": "cylinder",
        "radius": 500,
        "axis": "streamwise",
        "side": "concave",
    },
    "doubly-convex": {"shape": "doubly", "radius_streamwise": 1000, "radius_spanwise": 400},
    "doubly-concave": {
        "shape": "doubly",
        "radius_streamwise": 1200,
        "radius_spanwise": 600,
        "side": "concave",
    },
}


@pytest.mark.parametrize("skin", list(SKINS.values()), ids=list(SKINS))
def test_no_overlaps_on_other_skins(skin: dict) -> None:
    from tests.helpers import CURVED_BASE as BASE

    spec = parse_spec({**BASE, "skin": {"thickness": 2.0, **skin}})
    page = _sheet(spec, split=(0.6 * build_design(spec).geometry.length_mm,))
    _clear(page)
    assert "PLACEMENT" in page.get_text() and "datum (0.0, 0.0, 0.0)" in page.get_text()


def test_the_overlap_measure_sees_overlaps() -> None:
    """The measure can fail: two texts drawn on one spot, and one across a line, are found."""
    doc = pymupdf.open()
    page = doc.new_page()
    page.insert_text((100, 100), "KEY DIMENSIONS", fontsize=7)
    page.insert_text((100, 102), "throat width W", fontsize=7)
    page.draw_line((90, 150), (200, 150))
    page.insert_text((120, 152), "D 16.00", fontsize=7)
    assert text_overlaps(page)
    assert [t for t, _ in audit_page(page).text_hits] == ["D 16.00"]


def _polylines(page: pymupdf.Page, grey: float, width: float) -> list[np.ndarray]:
    """Drawn polylines (pt, y down) stroked in one grey at one width, as pymupdf reads them."""
    out = []
    for d in page.get_drawings():
        c, w = d.get("color"), d.get("width") or 0.0
        if c is None or max(abs(x - grey) for x in c) > 0.02 or abs(w - width) > 0.02:
            continue
        segs = [it for it in d["items"] if it[0] == "l"]
        if segs:
            pts = [(it[1].x, it[1].y) for it in segs] + [(segs[-1][2].x, segs[-1][2].y)]
            out.append(np.array(pts, dtype=float))
    return out


def _scale(text: str, title: str) -> float:
    m = re.search(title + r"[^\n]*scale (\d+(?:\.\d+)?):(\d+(?:\.\d+)?)", text)
    assert m, title
    return float(m.group(1)) / float(m.group(2))


def test_kitcar_section_is_drawn_on_the_falling_skin() -> None:
    """The skin line of the section falls as the cylinder does: R(1 - cos(s/R)) at its far
    end (s its arc length from the datum), read off the PDF's drawing at the sheet's scale."""
    spec = load_spec(ROOT / "samples" / "kitcar-bonnet-intake.toml")
    page = _sheet(spec)
    text = page.get_text()
    scale = _scale(text, "CENTRELINE SECTION")
    radius = spec.skin.radius
    d = build_design(spec)
    g = d.geometry
    s_far = 1.03 * g.transition.x_end_mm  # the skin line runs 3 % past the outlet face
    # the skin line: grey 0.5, 0.4 pt wide (the section's outer skin)
    skin = max(_polylines(page, 0.5, 0.4), key=len)  # the longest: the section's skin line
    drop_pt = float(skin[:, 1].max() - skin[:, 1].min())  # the datum is its highest point
    want = radius * (1 - np.cos(s_far / radius))
    assert drop_pt / PT / scale == pytest.approx(want, rel=0.01)
    assert want > 50.0  # not a flat skin: the drop is measured, not zero
    # the PLACEMENT block: the frame named, the outlet axis s/R below the datum's x
    assert "datum frame" in text and "PLACEMENT" in text
    angle = np.degrees(g.transition.x_end_mm / radius)
    assert f"{angle:.1f} deg down" in text
    assert "+0.0 deg (skin above the outlet centre)" in text


cq = pytest.importorskip("cadquery")


def test_panel_sheet_states_the_panel_frame_and_is_clear(tmp_path) -> None:  # type: ignore[no-untyped-def]
    """A cylinder panel moved anywhere: the sheet gives the datum and the outlet in the
    panel file's coordinates (the analytic sample's, moved) and no text overlaps."""
    from tests.panels import MOTION, cylinder_panel
    from tests.test_design_panel import BASE

    path = tmp_path / "bonnet.step"
    cq.exporters.export(MOTION.shape(cylinder_panel(900.0, "spanwise", 2.0)), str(path))
    at = MOTION.points(np.zeros(3))
    flow = MOTION.vector([1.0, 0.0, 0.0])
    skin = {
        "shape": "panel",
        "file": str(path),
        "at": [float(c) for c in at],
        "flow_direction": [float(c) for c in flow],
        "thickness": 2.0,
    }
    spec = parse_spec({**BASE, "skin": skin})
    page = _sheet(spec, split=(0.6 * build_design(spec).geometry.length_mm,))
    _clear(page)
    text = " ".join(page.get_text().split())
    assert "the panel file's" in text
    assert "(" + ", ".join(f"{c:.1f}" for c in at) + ") mm" in text
    analytic = {"shape": "cylinder", "radius": 900, "axis": "spanwise", "thickness": 2.0}
    ref = build_design(parse_spec({**BASE, "skin": analytic}))
    outlet = MOTION.points(np.asarray(ref.placement.outlet_point))
    m = re.search(r"outlet face centre \(([-\d.]+), ([-\d.]+), ([-\d.]+)\) mm", text)
    assert m, text
    assert np.allclose([float(c) for c in m.groups()], outlet, atol=0.06)
    angle = np.degrees(ref.geometry.transition.x_end_mm / 900.0)
    assert f"{angle:.1f} deg down" in text


@pytest.mark.slow
@pytest.mark.parametrize("name", SAMPLES)
def test_built_sheets_state_the_placement(sample_builds: dict, name: str) -> None:
    """The sheet a build writes (not only :func:`sheet_pdf` called with the design) carries
    the PLACEMENT block."""
    _, folder = sample_builds[name]
    page = pymupdf.open(folder / f"{name}-sheet.pdf")[0]
    text = page.get_text()
    assert "PLACEMENT" in text and "datum" in text
