"""The conformal marking jig: its underside on the skin, its inner edge on the opening.

Independent checks: the cylinder's own geometry (distance of a point from the cylinder's
axis, closed form), the cutter's own mesh (trimesh's closest-point query on the cutter STL:
the opening is where the cutter's walls cross the skin), the wall curve sampled straight from
the planform (not through the offset code), the kernel's shape analyser on the STEP read
back, and trimesh's watertightness and volume on the STL read back.
"""

from __future__ import annotations

import numpy as np
import pytest
import trimesh

from ductgen.geometry.jig import jig_layout, jig_stations
from ductgen.geometry.planform import Planform
from ductgen.geometry.profile import load_profile
from ductgen.solids.panel_cut import precise_volume
from tests.conftest import ROOT
from tests.test_solids_cad_io import _analyser_findings


def _planform() -> Planform:
    return Planform(load_profile("naca-standard"), width_mm=80.0, length_mm=200.0)


@pytest.mark.parametrize("kerf", [0.0, 1.0, 3.0])
def test_cut_line_is_the_opening_moved_in_by_half_the_kerf(kerf: float) -> None:
    # the template's kerf rule (the opening is a hole: its cut line moves inward by kerf/2;
    # common practice, no source); distances to the wall curve sampled densely from the
    # planform's half-width, the straight lip line and the apex line
    pf = _planform()
    jig = jig_layout(pf, kerf)
    x = np.linspace(0.0, pf.length_mm, 200001)
    wall = np.column_stack([x, pf.half_width(x)])
    side = np.column_stack([jig.wall_x_mm, jig.wall_y_mm])
    from scipy.spatial import cKDTree

    d, _ = cKDTree(wall).query(side)
    # points near the corners are nearer the apex or lip line than the wall
    d = np.minimum(d, np.minimum(side[:, 0], pf.length_mm - side[:, 0]))
    assert np.allclose(d, kerf / 2.0, atol=2e-3)
    assert jig.wall_x_mm[0] == pytest.approx(kerf / 2.0)
    assert jig.wall_x_mm[-1] == pytest.approx(pf.length_mm - kerf / 2.0)


def test_frame_width_and_stations() -> None:
    pf = _planform()
    jig = jig_layout(pf)
    # the outer edge is the opening offset by the frame width: beside the lip it is W/2 + 20
    assert float(jig.outer_half_width(pf.length_mm)) == pytest.approx(40.0 + jig.width_mm, abs=1e-6)
    assert float(np.min(jig.outer_xy[:, 0])) == pytest.approx(-jig.width_mm, abs=1e-6)
    xs = jig_stations(jig, 3)
    assert len(xs) == 2 and all(0 < s < pf.length_mm for s in xs)


def _cylinder_r(p: np.ndarray, axis: str, radius: float) -> np.ndarray:
    """Distance of points from a convex cylinder's axis (the skin's outer surface at the
    datum is z = 0, the axis a radius below it): streamwise axis along x, spanwise along y."""
    if axis == "streamwise":
        return np.hypot(p[:, 1], p[:, 2] + radius)
    return np.hypot(p[:, 0], p[:, 2] + radius)


def _underside(m: trimesh.Trimesh, axis: str, radius: float) -> trimesh.Trimesh:
    """The faces that face the cylinder's axis (the jig's underside), as a mesh."""
    out = m.triangles_center.copy()
    out[:, 0 if axis == "streamwise" else 1] = 0.0
    out[:, 2] += radius
    radial = out / np.linalg.norm(out, axis=1)[:, None]
    down = np.einsum("ij,ij->i", m.face_normals, radial) < -0.9
    return m.submesh([np.flatnonzero(down)], append=True)


@pytest.mark.slow
@pytest.mark.parametrize(
    ("sample", "axis", "radius"),
    [("round-cowling-vent", "streamwise", 320.0), ("kitcar-bonnet-intake", "spanwise", 1400.0)],
)
def test_jig_sits_on_the_skin_and_traces_the_opening(sample_builds, sample, axis, radius) -> None:  # type: ignore[no-untyped-def]
    res, folder = sample_builds[sample]  # the sample built with every output
    facts = res.report["jig"]
    c = facts["clearance_mm"]
    jig_m = trimesh.load(folder / f"{sample}-jig.stl")
    assert jig_m.is_watertight and jig_m.volume > 0
    # underside on the skin (offset by the clearance) within 0.1 mm: the cylinder's closed form
    underside = _underside(jig_m, axis, radius)
    under = underside.vertices
    assert len(under) > 100
    gap = _cylinder_r(under, axis, radius) - radius
    assert np.all(np.abs(gap - c) < 0.1), (gap.min(), gap.max())
    # inner edge on the opening within 0.2 mm: the underside's boundary loop nearest the
    # centreline, carried down to the skin along the cylinder's radius, lies on the cutter's
    # surface (its walls cross the skin along the opening)
    edges = underside.edges_sorted[
        trimesh.grouping.group_rows(underside.edges_sorted, require_count=1)
    ]
    # the boundary falls into two loops: the outer edge and the inner edge (the smaller)
    loops = trimesh.graph.connected_components(edges)
    assert len(loops) == 2
    rim = underside.vertices[min(loops, key=lambda ix: np.ptp(underside.vertices[ix][:, 1]))]
    cutter = trimesh.load(folder / f"{sample}-cutter.stl")
    r = _cylinder_r(rim, axis, radius)
    centre = rim.copy()  # the foot of each point on the cylinder's axis
    centre[:, 1 if axis == "streamwise" else 0] = 0.0
    centre[:, 2] = -radius
    on_skin = centre + (rim - centre) * (radius / r)[:, None]
    # arc lengths on the cylinder (closed form): u along the flow, v across
    ang = np.arctan2(on_skin[:, 1 if axis == "streamwise" else 0], on_skin[:, 2] + radius)
    u = on_skin[:, 0] if axis == "streamwise" else radius * ang
    v = radius * ang if axis == "streamwise" else on_skin[:, 1]
    L, W = res.report["geometry"]["ramp_length_mm"], res.report["geometry"]["throat_width_mm"]
    assert len(rim) > 50
    # the walls and the apex line: on the cutter's surface, whose walls cross the skin there
    walls = u < L - 0.5
    _, dist, _ = trimesh.proximity.closest_point(cutter, on_skin[walls])
    assert np.all(dist < 0.2), dist.max()
    assert u[walls].min() == pytest.approx(0.0, abs=0.2)  # the apex line at the ramp start
    # the lip line: the template's opening ends at the lip station u = L (the cutter runs on
    # under the lip's nose, so it does not show the line)
    lip = u >= L - 0.5
    assert lip.sum() >= 2
    assert np.all(np.abs(u[lip] - L) < 0.2), u[lip]
    assert np.ptp(v[lip]) == pytest.approx(W, abs=0.4)


@pytest.mark.slow
def test_jig_pieces_partition_it_and_read_back(sample_builds) -> None:  # type: ignore[no-untyped-def]
    from OCP.BRepCheck import BRepCheck_Analyzer

    from ductgen.solids.cad_io import read_step
    from ductgen.spec.load import load_spec

    spec = load_spec(ROOT / "samples" / "kitcar-bonnet-intake.toml")
    res, folder = sample_builds["kitcar-bonnet-intake"]  # built with every output
    facts = res.report["jig"]
    assert not facts["fits"] and len(facts["pieces"]) >= 2  # 300 mm long on a 220 mm bed
    whole = trimesh.load(folder / "kitcar-bonnet-intake-jig.stl")
    parts = [trimesh.load(folder / p["stl"]) for p in facts["pieces"]]
    assert all(p.is_watertight for p in parts)
    assert sum(p.volume for p in parts) == pytest.approx(whole.volume, rel=2e-3)
    assert all(p["fits"] for p in facts["pieces"])
    # the plate: every piece, its volume, lying on the bed (units stated: mm)
    scene = trimesh.load(folder / "kitcar-bonnet-intake-jig.3mf", file_type="3mf")
    assert scene.units in ("millimeters", "mm", "millimeter")
    meshes = list(scene.dump())
    assert sorted(m.volume for m in meshes) == pytest.approx(
        sorted(p.volume for p in parts), rel=1e-6
    )
    for m in meshes:
        assert m.bounds[0][2] == pytest.approx(0.0, abs=1e-6)
        assert m.extents[2] < 4.0 + 0.2 + 10.0  # lying as on the skin, not standing up
    for name in ["kitcar-bonnet-intake-jig.step", *(p["step"] for p in facts["pieces"])]:
        shape = read_step(folder / name)
        assert BRepCheck_Analyzer(shape.wrapped).IsValid()
        # every edge on its faces, read back (mapped face by face, 12-16 edges a piece lay
        # 1e-6 to 2e-4 mm off a face; the analyser with every mode on finds nothing either,
        # ~16 s for the whole jig)
        assert _analyser_findings(shape.wrapped, ("CurveOnSurfaceMode",)) == {}, name
    # the whole jig's volume against the closed form of the flat region wrapped on the
    # cylinder (spanwise axis, radius R): A·[(w1 − w0) + (w1² − w0²)/(2R)] (1.4e-7 off when
    # mapped face by face)
    w0, w1 = facts["clearance_mm"], facts["clearance_mm"] + facts["thickness_mm"]
    area = _flat_jig_area(spec)
    closed = area * ((w1 - w0) + (w1**2 - w0**2) / (2.0 * 1400.0))
    got = precise_volume(read_step(folder / "kitcar-bonnet-intake-jig.step"))
    assert got == pytest.approx(closed, rel=2e-8)


def _flat_jig_area(spec) -> float:  # type: ignore[no-untyped-def]
    """The flat jig's area (mm²): the shoelace sum over its top face's edges, each sampled
    at 4000 points along it, in the face's direction."""
    from OCP.TopAbs import TopAbs_REVERSED

    from ductgen.design import build_design
    from ductgen.solids.jig import build_jig

    d = build_design(spec)
    flat = build_jig(d, jig_layout(d.geometry.planform, float(spec.template.kerf)))
    top = next(f for f in flat.Faces() if f.normalAt().z > 0.5)
    total = 0.0
    for edge in top.Edges():
        t = np.linspace(0.0, 1.0, 4000)
        xy = np.array([edge.positionAt(float(x)).toTuple()[:2] for x in t])
        if edge.wrapped.Orientation() == TopAbs_REVERSED:
            xy = xy[::-1]
        total += 0.5 * float(np.sum(xy[:-1, 0] * xy[1:, 1] - xy[1:, 0] * xy[:-1, 1]))
    return abs(total)


def test_flat_skin_makes_no_jig() -> None:
    from ductgen.pipeline.builder import planned_files
    from ductgen.spec.load import load_spec

    spec = load_spec(ROOT / "samples" / "club-racer-brake.toml")
    assert not any("jig" in n for n in planned_files(spec, ["jig"]))


@pytest.mark.slow
def test_jig_on_a_doubly_curved_bspline_panel(tmp_path) -> None:  # type: ignore[no-untyped-def]
    # the panel made here with the kernel (a B-spline bonnet); the jig's underside measured
    # against the face itself by the kernel's distance query, its inner edge against the
    # cutter's mesh along the face's own normal
    import cadquery as cq
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeVertex
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape
    from OCP.gp import gp_Pnt

    from ductgen.pipeline import build
    from tests.helpers import panel_skin, panel_spec
    from tests.panels import bonnet_face, bonnet_height

    face = bonnet_face()
    path = tmp_path / "bonnet.step"
    cq.exporters.export(face, str(path))
    at = np.array([40.0, 30.0, float(bonnet_height(np.array(40.0), np.array(30.0)))])
    spec = panel_spec(panel_skin(path, at, np.array([1.0, 0.15, 0.0]), thickness=2.5))
    res = build(spec, tmp_path / "out", only=["cutter", "jig"], cache=False)
    c = res.report["jig"]["clearance_mm"]
    m = trimesh.load(tmp_path / "out" / f"{spec.name}-jig.stl")
    assert m.is_watertight
    # underside: faces pointing down (the bonnet rises at most a few degrees here), not
    # slivers along an edge (whose normals say little)
    down = (m.face_normals[:, 2] < -0.9) & (m.area_faces > 1.0)
    under = m.submesh([np.flatnonzero(down)], append=True)
    pts = under.vertices[:: max(1, len(under.vertices) // 150)]
    for p in pts:
        ext = BRepExtrema_DistShapeShape(
            BRepBuilderAPI_MakeVertex(gp_Pnt(*p)).Vertex(), face.wrapped
        )
        assert ext.Value() == pytest.approx(c, abs=0.1)


def test_only_a_region_swept_along_w_is_rebuilt_on_the_skin() -> None:
    """A solid that is not a plane region swept between two heights (a slanted face, a
    sphere, a face at a third height) is left to the face-by-face map (None); a box is
    rebuilt, with the volume of the closed form A·[(w1 − w0) + (w1² − w0²)/(2R)] on a
    spanwise cylinder of radius R."""
    import cadquery as cq

    from ductgen.geometry.skin import CurvedSkin
    from ductgen.solids.prism_map import map_prism

    skin = CurvedSkin(k_stream=1.0 / 500.0, k_span=0.0)
    wedge = cq.Solid.extrudeLinear(
        cq.Face.makeFromWires(cq.Wire.makePolygon([(0, 0, 1), (40, 0, 1), (0, 0, 9)], close=True)),
        cq.Vector(0, 30, 0),
    )
    step = cq.Workplane().box(40, 30, 4, centered=False).faces(">Z").workplane()
    stepped = step.rect(10, 10, centered=False).extrude(2).val()
    for shape in (wedge, cq.Solid.makeSphere(5.0), stepped):
        assert map_prism(shape, skin.to_model) is None
    box = cq.Solid.makeBox(40.0, 30.0, 4.0, cq.Vector(0.0, -15.0, 1.0))
    got = map_prism(box, skin.to_model)
    assert got is not None and got.isValid()
    assert precise_volume(got) == pytest.approx(1200.0 * (4.0 + (25.0 - 1.0) / 1000.0), rel=1e-9)
