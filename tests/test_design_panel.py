"""The inlet on the user's own panel (``skin.shape = "panel"``), with panels made here by the
CAD kernel (tests/panels.py).

Independent checks: a cylinder or torus patch is the surface the analytic skins describe in
closed form (tests/test_design_skin.py checks those against the cylinder's own geometry), so
a patch moved by a rigid motion must give the analytic skin's outputs moved by the same
motion; on a B-spline bonnet the kernel's own surface (point distance, face normal, line
intersection) and Boolean volumes judge the placed solids; the flat design's floor depth
holds along the surface normal by the definition of design coordinates.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

cq = pytest.importorskip("cadquery")

from ductgen.design import build_design  # noqa: E402
from ductgen.errors import SpecError  # noqa: E402
from ductgen.geometry.fabrication import wall_for_curvature  # noqa: E402
from ductgen.solids.insert import convex_curvature  # noqa: E402
from ductgen.spec import parse_spec  # noqa: E402
from tests.conftest import ROOT  # noqa: E402
from tests.helpers import PANEL_BASE as BASE  # noqa: E402
from tests.helpers import adaptive_volume, opening_from_dxf, panel_skin, panel_spec  # noqa: E402
from tests.panels import (  # noqa: E402
    MOTION,
    bent_plate,
    bonnet_face,
    bonnet_height,
    cylinder_panel,
    torus_panel,
)


def _export(shape, path: Path) -> Path:  # type: ignore[no-untyped-def]
    cq.exporters.export(shape, str(path))
    return path


def _probe_points(d, n: int = 600) -> np.ndarray:  # type: ignore[no-untyped-def]
    """Design points over the parts, the floor and the duct (u, v, w in mm)."""
    rng = np.random.default_rng(7)
    g = d.geometry
    u_hi = g.transition.x_end_mm + 20.0 if g.transition is not None else g.length_mm
    v = 0.5 * g.width_mm + 20.0
    return np.column_stack(
        [rng.uniform(-20.0, u_hi, n), rng.uniform(-v, v, n), rng.uniform(-g.drop_mm - 30, 3, n)]
    )


# --- analytic patches moved anywhere give the analytic skin moved -----------------------


@pytest.mark.slow
@pytest.mark.parametrize(
    ("name", "analytic", "make"),
    [
        (
            "cylinder-streamwise",
            {"shape": "cylinder", "radius": 500, "axis": "streamwise"},
            lambda: cylinder_panel(500.0, "streamwise", 2.0),
        ),
        (
            "cylinder-spanwise",
            {"shape": "cylinder", "radius": 900, "axis": "spanwise"},
            lambda: cylinder_panel(900.0, "spanwise", 2.0),
        ),
        (
            "torus",
            {"shape": "doubly", "radius_streamwise": 1000, "radius_spanwise": 400},
            lambda: torus_panel(1000.0, 400.0, 2.0),
        ),
    ],
)
def test_a_moved_analytic_patch_maps_as_the_analytic_skin(tmp_path, name, analytic, make) -> None:  # type: ignore[no-untyped-def]
    path = _export(MOTION.shape(make()), tmp_path / f"{name}.step")
    d = build_design(
        panel_spec(panel_skin(path, MOTION.points(np.zeros(3)), MOTION.vector([1.0, 0.0, 0.0])))
    )
    ref = build_design(panel_spec(analytic))
    p = _probe_points(ref)
    # every solid's map (skin, fading duct, rigid spigot) and the plug's over its plate, to
    # 0.01 mm
    trim = ref.plug_trim_xy
    plug = p[(p[:, 0] <= trim[:, 0].max()) & (np.abs(p[:, 1]) <= np.abs(trim[:, 1]).max())]
    for got, want, q in (
        (d.placement.solid_map, ref.placement.solid_map, p),
        (d.placement.plug_map, ref.placement.plug_map, plug),
    ):
        assert np.max(np.linalg.norm(got(q) - MOTION.points(want(q)), axis=1)) < 0.01
    assert np.allclose(
        d.placement.outlet_point, MOTION.points(ref.placement.outlet_point), atol=0.01
    )
    # the template: flattened from the panel, equal to the analytic development to 0.05 mm
    uv = p[:, :2][np.abs(p[:, 1]) < 0.5 * ref.geometry.width_mm]
    uv = uv[uv[:, 0] < ref.geometry.length_mm]
    assert np.max(np.abs(d.development.xy(uv) - ref.development.xy(uv))) < 0.05
    s = d.skin_summary
    assert s["shape"] == "panel" and s["at_distance_mm"] < 1e-6
    smallest = 500.0 if name == "cylinder-streamwise" else 900.0 if "spanwise" in name else 400.0
    assert s["smallest_radius_mm"] == pytest.approx(smallest, rel=1e-3)
    assert s["smallest_radius_side"] == "convex"
    # the insert's walls are widened as on the analytic skin: by the closed form
    # 1/(1 − depth/R) of the patch's smallest convex radius R (the torus's 400 mm), to 1e-4
    k = convex_curvature(d)
    assert k == pytest.approx(1.0 / smallest, rel=1e-4)
    wall, depth = d.fab.insert.wall, d.geometry.drop_mm + d.fab.insert.wall
    assert wall_for_curvature(wall, k, depth) == pytest.approx(
        wall / (1.0 - depth / smallest), rel=1e-4
    )


def _stl_points(path: Path) -> np.ndarray:
    import trimesh

    return np.asarray(trimesh.load(str(path), force="mesh").vertices)


def _to_polyline(p: np.ndarray, ring: np.ndarray) -> float:
    """Largest distance (mm) from the points ``p`` to the closed polyline ``ring``."""
    a, b = ring, np.roll(ring, -1, axis=0)
    ab = b - a
    t = np.einsum("pk,sk->ps", p, ab) - np.einsum("sk,sk->s", a, ab)[None, :]
    t = np.clip(t / np.maximum(np.einsum("sk,sk->s", ab, ab), 1e-300)[None, :], 0.0, 1.0)
    foot = a[None, :, :] + t[:, :, None] * ab[None, :, :]
    return float(np.max(np.min(np.linalg.norm(p[:, None, :] - foot, axis=2), axis=1)))


@pytest.mark.slow
def test_a_moved_cylinder_panel_builds_the_sample_moved(sample_builds, tmp_path) -> None:  # type: ignore[no-untyped-def]
    import trimesh

    from ductgen.pipeline import build
    from ductgen.spec.load import read_spec_data

    name = "kitcar-bonnet-intake"
    ref, ref_dir = sample_builds[name]
    data = read_spec_data(ROOT / "samples" / f"{name}.toml")
    radius, t = ref.report["geometry"]["skin"]["radius_mm"], ref.design.geometry.skin_thickness_mm
    path = _export(MOTION.shape(cylinder_panel(radius, "spanwise", t)), tmp_path / "bonnet.step")
    data["skin"] = {
        "thickness": t,
        **panel_skin(path, MOTION.points(np.zeros(3)), MOTION.vector([1.0, 0.0, 0.0])),
    }
    data["name"] = "moved"
    got = build(parse_spec(data), tmp_path / "out")
    geo, want = got.report["geometry"], ref.report["geometry"]
    # the insert's walls are widened the same way on both (mounted behind: a prism of the
    # widened offset up to the skin's inner face), so the insert too
    for key in ("cutter_volume_mm3", "plug_volume_mm3", "insert_volume_mm3"):
        assert geo[key] == pytest.approx(want[key], rel=1e-3), key
    # the placed cutter: every vertex of the sample's mesh, moved, lies on the panel build's
    # mesh to 0.05 mm (trimesh's closest point on the triangles)
    for kind in ("cutter",):
        mesh = trimesh.load(str(tmp_path / "out" / f"moved-{kind}.stl"), force="mesh")
        pts = MOTION.points(_stl_points(ref_dir / f"{name}-{kind}.stl"))
        sample = pts[:: max(1, len(pts) // 3000)]
        _, dist, _ = trimesh.proximity.closest_point(mesh, sample)
        assert float(np.max(dist)) < 0.05, kind
    # the template's opening, flat, to 0.05 mm: every point of either outline lies within
    # 0.05 mm of the other (a point-to-segment distance; the panel's flattened outline is
    # densified, the sample's developed one keeps its arcs, both read through ezdxf)
    a = opening_from_dxf(tmp_path / "out" / "moved-template.dxf")
    b = opening_from_dxf(ref_dir / f"{name}-template.dxf")
    assert max(_to_polyline(a, b), _to_polyline(b, a)) < 0.05
    # the panel itself, cut: one valid solid in the file's own frame
    cut = cq.importers.importStep(str(tmp_path / "out" / "moved-panel.step")).val()
    assert len(cut.Solids()) == 1 and cut.isValid()
    assert geo["skin"]["panel"]["source"] == "closed solid"


@pytest.mark.slow
def test_an_inlet_15_mm_from_the_panels_edge_builds(tmp_path) -> None:  # type: ignore[no-untyped-def]
    from ductgen.pipeline import build

    radius = 900.0
    ref = build_design(panel_spec({"shape": "cylinder", "radius": radius, "axis": "spanwise"}))
    flange = ref.layout.outline_xy  # design (u, v): u arc length along the flow
    x0 = radius * np.sin(float(flange[:, 0].min()) / radius) - 15.0
    width = 2.0 * (float(np.abs(flange[:, 1]).max()) + 15.0)
    # upstream and to each side the panel ends 15 mm beyond the flange; downstream it runs
    # past the duct's outlet face
    panel = cylinder_panel(radius, "spanwise", 2.0, size=(400.0 - x0, width), x0=x0)
    path = _export(panel, tmp_path / "edge.step")
    spec = panel_spec(panel_skin(path, [0.0, 0.0, 0.0], [1.0, 0.0, 0.0]))
    out = tmp_path / "out"
    result = build(spec, out, only=["cutter", "plug", "jig", "sheet"])
    for name in ("cutter.step", "plug.step", "jig.step", "sheet.pdf", "preview.png", "panel.step"):
        assert (out / f"panel-{name}").stat().st_size > 0, name
    # the same inlet as on the analytic cylinder: the cutter's volume to 1e-3
    want = build(
        parse_spec(
            {
                **BASE,
                "name": "ref",
                "skin": {
                    "thickness": 2.0,
                    "shape": "cylinder",
                    "radius": radius,
                    "axis": "spanwise",
                },
            }
        ),
        tmp_path / "ref",
        only=["cutter"],
    )
    got = result.report["geometry"]["cutter_volume_mm3"]
    assert got == pytest.approx(want.report["geometry"]["cutter_volume_mm3"], rel=1e-3)


# --- a doubly curved B-spline bonnet (an open surface: thickened by skin.thickness) ---------


@pytest.fixture(scope="module")
def bonnet(tmp_path_factory) -> tuple[Path, object]:  # type: ignore[no-untyped-def]
    folder = tmp_path_factory.mktemp("bonnet")
    face = bonnet_face()
    return _export(face, folder / "bonnet.step"), face


AT = np.array([40.0, 30.0, float(bonnet_height(np.array(40.0), np.array(30.0)))])


def _surface_normal(face, p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:  # type: ignore[no-untyped-def]
    """The face's nearest point to ``p`` and its unit normal there (+z side)."""
    from OCP.BRep import BRep_Tool
    from OCP.GeomAPI import GeomAPI_ProjectPointOnSurf
    from OCP.gp import gp_Pnt, gp_Vec

    srf = BRep_Tool.Surface_s(face.wrapped)
    proj = GeomAPI_ProjectPointOnSurf(gp_Pnt(*p), srf)
    u, v = proj.LowerDistanceParameters()
    q, du, dv = gp_Pnt(), gp_Vec(), gp_Vec()
    srf.D1(u, v, q, du, dv)
    n = np.cross(np.array(du.Coord()), np.array(dv.Coord()))
    n /= np.linalg.norm(n)
    return np.array(q.Coord()), n if n[2] > 0 else -n


@pytest.mark.slow
def test_bonnet_opening_floor_and_cut_panel(bonnet, tmp_path) -> None:  # type: ignore[no-untyped-def]
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeVertex
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape
    from OCP.gp import gp_Pnt

    from ductgen.pipeline import build
    from tests.helpers import depth_along

    path, face = bonnet
    flow = np.array([1.0, 0.15, 0.0])
    spec = panel_spec(panel_skin(path, AT, flow, thickness=2.5))
    result = build(spec, tmp_path / "out", only=["cutter", "insert"])
    d, g = result.design, result.design.geometry
    # the opening's rim, mapped onto the panel, lies on the B-spline surface to 0.01 mm
    rim = d.skin.to_model(
        np.column_stack([d.layout.opening_xy, np.zeros(len(d.layout.opening_xy))])
    )
    for p in rim[:: max(1, len(rim) // 60)]:
        ext = BRepExtrema_DistShapeShape(
            BRepBuilderAPI_MakeVertex(gp_Pnt(*p)).Vertex(), face.wrapped
        )
        assert ext.Value() < 0.01
    # the floor along the surface's own normal is the design depth, to 0.05 mm
    cutter = cq.importers.importStep(str(tmp_path / "out" / "panel-cutter.step")).val()
    for x in g.planform.node_x_mm[1:-1]:
        for vv in (0.0, 0.4 * float(g.planform.half_width(x))):
            p0, n = _surface_normal(face, d.skin.to_model(np.array([[x, vv, 0.0]]))[0])
            assert depth_along(cutter, p0, n) == pytest.approx(float(g.floor.depth(x)), abs=0.05)
    # NAME-panel.step: one valid closed solid whose volume is the thickened panel's minus
    # the skin inside the insert's cut-out outline (which holds the opening, so the cutter
    # takes nothing more from the skin): a shell of area A and thickness t on a convex
    # surface of mean curvature H holds A·t·(1 − H·t) (the offset surfaces' area, closed
    # form; H from the bonnet's height function), to 1e-4 of the panel's volume
    cut = cq.importers.importStep(str(tmp_path / "out" / "panel-panel.step")).val()
    assert len(cut.Solids()) == 1 and cut.isValid()
    panel = face.thicken(-2.5)
    assert panel.isValid()

    def area(xy: np.ndarray) -> float:
        x, y = xy[:, 0], xy[:, 1]
        return 0.5 * abs(float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1))))

    h_mean = 0.5 * (1 / 1800.0 + 1 / 900.0)
    removed = area(d.layout.cutout_xy) * 2.5 * (1.0 - h_mean * 2.5)
    whole = adaptive_volume(panel)
    assert adaptive_volume(cut) == pytest.approx(whole - removed, abs=1e-4 * whole)
    skin = result.report["geometry"]["skin"]
    assert skin["panel"]["source"] == "surface thickened"
    # the bonnet's radii at the datum, from its height function's second derivatives
    hxx = -1 / 1800.0 - 6 * 2e-8 * AT[0]
    assert skin["smallest_radius_mm"] < 1.0 / abs(hxx)


@pytest.mark.slow
def test_a_noisy_scan_places_as_the_cad_file(bonnet, tmp_path) -> None:  # type: ignore[no-untyped-def]
    import trimesh

    from ductgen.solids.mesh import triangulate

    path, face = bonnet
    # a scan's even sampling: the kernel's triangulation split to edges of at most 4 mm
    dense = trimesh.Trimesh(*triangulate(face, 0.05, 0.2)).subdivide_to_size(4.0)
    v, f = dense.vertices, dense.faces
    rng = np.random.default_rng(3)
    noise = 0.02  # mm, one standard deviation, along z (a scanner's depth noise)
    v = np.asarray(v, dtype=float) + np.column_stack(
        [np.zeros(len(v)), np.zeros(len(v)), rng.normal(0.0, noise, len(v))]
    )
    scan = tmp_path / "bonnet.stl"
    trimesh.Trimesh(v, f).export(str(scan))
    flow = np.array([1.0, 0.15, 0.0])
    cad = build_design(panel_spec(panel_skin(path, AT, flow)))
    got = build_design(panel_spec(panel_skin(scan, AT, flow, units="mm")))
    p = _probe_points(cad)
    assert (
        np.max(np.linalg.norm(got.placement.solid_map(p) - cad.placement.solid_map(p), axis=1))
        < 0.2
    )
    s = got.skin_summary
    assert s["file_kind"] == "mesh scan"
    assert 0.5 * noise < s["fit_rms_mm"] < 2.0 * noise
    assert s["fit_vertices"] > 1000


# --- bad input: exit 2, the key named -----------------------------------------------------


@pytest.fixture(scope="module")
def panels(tmp_path_factory) -> dict[str, Path]:  # type: ignore[no-untyped-def]
    folder = tmp_path_factory.mktemp("panels")
    out = {
        "plate": _export(cylinder_panel(1e5, "spanwise", 2.0), folder / "plate.step"),
        "small": _export(
            cylinder_panel(800.0, "spanwise", 2.0, size=(200.0, 150.0)), folder / "small.step"
        ),
        "bent": _export(bent_plate(50.0, 12.0), folder / "bent.step"),
        "tight": _export(cylinder_panel(150.0, "spanwise", 2.0), folder / "tight.step"),
    }
    (folder / "garbage.step").write_text("ISO-10303-21;\nthis is not a STEP file\n")
    out["garbage"] = folder / "garbage.step"
    v, f = (np.array([[0, 0, 0], [1, 0, 0], [0, 1, 0]], float), np.array([[0, 1, 2]]))
    import trimesh

    trimesh.Trimesh(v, f).export(str(folder / "scan.stl"))
    out["scan"] = folder / "scan.stl"
    return out


@pytest.mark.slow
@pytest.mark.parametrize(
    ("panel", "skin", "key", "words"),
    [
        ("plate", {"at": [0, 0, 5]}, "skin.at", "5.00 mm away"),
        ("plate", {"flow_direction": [0, 0.1, 1]}, "skin.flow_direction", "off the surface"),
        ("small", {}, "skin.at", "edge"),
        ("bent", {}, "skin.at", "crease"),
        # the analytic skins' limits, with the panel's own radius: R 150 mm along the flow
        ("tight", {}, "skin.at", "smallest radius under the parts is 150 mm"),
        ("missing", {}, "skin.file", "No such file"),
        ("garbage", {}, "skin.file", "STEP reader failed"),
        ("scan", {}, "skin.units", "no units"),
        ("plate", {"units": "mm"}, "skin.units", "states its own units"),
        ("plate", {"radius": 500}, "skin.radius", "not a key of a panel skin"),
    ],
)
def test_bad_panels_name_the_key(panels, panel, skin, key, words) -> None:  # type: ignore[no-untyped-def]
    path = panels.get(panel, Path("/nonexistent/bonnet.step"))
    given = {**panel_skin(path, [0.0, 0.0, 0.0], [1.0, 0.0, 0.0]), **skin}
    with pytest.raises(SpecError) as err:
        build_design(panel_spec(given))
    assert key in {p.key for p in err.value.problems}
    assert words in str(err.value)


def test_a_bad_panel_exits_2_and_writes_nothing(panels, tmp_path) -> None:  # type: ignore[no-untyped-def]
    import tomli_w

    spec = {**BASE, "skin": panel_skin(panels["plate"], [0.0, 0.0, 3.0], [1.0, 0.0, 0.0])}
    (tmp_path / "s.toml").write_text(tomli_w.dumps(spec))
    run = subprocess.run(
        [
            sys.executable,
            "-m",
            "ductgen",
            "build",
            str(tmp_path / "s.toml"),
            "-o",
            str(tmp_path / "o"),
        ],
        capture_output=True,
        text=True,
    )
    assert run.returncode == 2, run.stderr
    assert "skin.at" in run.stderr + run.stdout and "3.00 mm away" in run.stderr + run.stdout
    assert not (tmp_path / "o").exists()
