"""The printable insert: a valid closed solid, the hose spigot's fit, the flange holes and
the wall thickness measured on the mesh of every sample.

Kernel work runs in this process (tests may import the solids layer directly).
"""

from __future__ import annotations

import io
import math
from pathlib import Path

import numpy as np
import pytest

cq = pytest.importorskip("cadquery")

from ductgen.design import build_design  # noqa: E402
from ductgen.geometry.fabrication import flange_layout, spigot_of  # noqa: E402
from ductgen.meshstats import mesh_stats  # noqa: E402
from ductgen.printability import min_wall_mm  # noqa: E402
from ductgen.solids.cad_io import stl_bytes  # noqa: E402
from ductgen.solids.check import CHECK_MESH  # noqa: E402
from ductgen.solids.insert import make_insert  # noqa: E402
from ductgen.solids.mesh import triangulate  # noqa: E402
from ductgen.spec import load_spec, parse_spec  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = sorted((ROOT / "samples").glob("*.toml"))

ROUND = {
    "name": "t-round",
    "throat": {"width": 100, "depth": 26},
    "ramp": {"angle_deg": 7, "entry_radius": 100},
    "lip": {"thickness": 5},
    "outlet": {
        "kind": "round",
        "diameter": 70,
        "transition_length": 150,
        "spigot_length": 45,
        "fit_clearance": 0.3,
    },
    "skin": {"thickness": 2.5},
    "insert": {"wall": 2.4, "flange_width": 18, "holes": {"count": 7, "diameter": 4.2}},
}


def _build(spec):  # type: ignore[no-untyped-def]
    d = build_design(spec)
    solid = make_insert(d)
    return d.geometry, d.fab, solid, triangulate(solid, *CHECK_MESH)


@pytest.fixture(scope="module")
def round_insert():  # type: ignore[no-untyped-def]
    return _build(parse_spec(ROUND))


@pytest.fixture(scope="module")
def surface_insert():  # type: ignore[no-untyped-def]
    data = {**ROUND, "name": "t-surface", "insert": {**ROUND["insert"], "mount": "surface"}}
    return _build(parse_spec(data))


def _section_edges(solid, origin, normal):  # type: ignore[no-untyped-def]
    plane = cq.Face.makePlane(2000, 2000, cq.Vector(*origin), cq.Vector(*normal))
    return solid.intersect(plane).Edges()


@pytest.mark.slow
@pytest.mark.parametrize("which", ["round_insert", "surface_insert"])
def test_insert_is_one_valid_closed_solid(which: str, request: pytest.FixtureRequest) -> None:
    _, _, solid, (v, f) = request.getfixturevalue(which)
    assert solid.isValid() and len(solid.Solids()) == 1
    tight, winding, vol, _ = mesh_stats(v, f)
    assert tight and winding and vol > 0
    # the STL as written, read back independently: watertight and winding-consistent
    import trimesh

    m = trimesh.load(io.BytesIO(stl_bytes(v, f)), file_type="stl")
    assert m.is_watertight and m.is_winding_consistent
    assert m.volume == pytest.approx(vol, rel=1e-4)


@pytest.mark.slow
def test_spigot_outer_diameter_is_hose_id_minus_clearance(round_insert) -> None:  # type: ignore[no-untyped-def]
    g, fab, solid, _ = round_insert
    sp = spigot_of(g, fab)
    x = 0.5 * (sp.x0_mm + sp.shoulder_mm + sp.bead_x0_mm)  # on the clamp land
    radii = [
        e.radius()
        for e in _section_edges(solid, (x, 0, sp.centre_z_mm), (1, 0, 0))
        if e.geomType() == "CIRCLE"
    ]
    # hose inner diameter 70 mm minus fit clearance 0.3 mm (the spec's own definition)
    assert 2.0 * max(radii) == pytest.approx(70.0 - 0.3, abs=0.05)
    assert 2.0 * min(radii) == pytest.approx(70.0 - 0.3 - 2 * 2.4, abs=0.05)  # bore: OD − 2·wall
    assert sp.clamp_land_mm >= 15.0  # clamp land ≥ 15 mm (the spec's lower limit)


@pytest.mark.slow
def test_bead_stands_above_the_spigot(round_insert) -> None:  # type: ignore[no-untyped-def]
    g, fab, solid, _ = round_insert
    sp = spigot_of(g, fab)
    x = sp.bead_x0_mm + 0.5 * (sp.bead_x1_mm - sp.bead_x0_mm) * 0.5
    edges = _section_edges(solid, (x, 0, sp.centre_z_mm), (1, 0, 0))
    r = max(e.radius() for e in edges if e.geomType() == "CIRCLE")
    assert r == pytest.approx(sp.od_mm / 2.0 + fab.insert.bead_height, abs=0.05)


@pytest.mark.slow
@pytest.mark.parametrize("which", ["round_insert", "surface_insert"])
def test_flange_slice_shows_the_requested_holes(which: str, request: pytest.FixtureRequest) -> None:
    g, fab, solid, _ = request.getfixturevalue(which)
    lay = flange_layout(g, fab.insert)
    z = 0.5 * (lay.z_top_mm + lay.z_bottom_mm) if fab.insert.mount == "behind" else 0.2
    d = fab.insert.holes.diameter
    holes = [
        e
        for e in _section_edges(solid, (0, 0, z), (0, 0, 1))
        if e.geomType() == "CIRCLE" and abs(2 * e.radius() - d) < 1e-6
    ]
    centres = {tuple(np.round(e.arcCenter().toTuple(), 3)) for e in holes}
    assert len(centres) == 7
    for c in centres:  # each lies where the layout (used by the template) puts it
        assert np.min(np.hypot(*(lay.hole_centres_xy - np.array(c[:2])).T)) < 1e-3


@pytest.mark.slow
@pytest.mark.parametrize("path", SAMPLES, ids=[p.stem for p in SAMPLES])
def test_min_wall_on_every_sample(path: Path) -> None:
    spec = load_spec(path)
    d = build_design(spec)
    need = spec.insert.wall - 0.05
    if d.placement.curvature == 0.0:
        _, _, _, (v, f) = _build(spec)
    else:
        # on a curved skin: the mesh the build writes (the design mesh, mapped; the kernel's
        # own mesh of mapped splines sags); inside a convex skin the walls converge toward
        # its centre, thinning by the factor 1 − κ·depth (closed form of the normal offset)
        from ductgen.solids.insert import build_insert
        from ductgen.solids.jobs import mapped_mesh

        k = d.placement.curvature
        v, f = mapped_mesh(build_insert(d), d.placement.solid_map, *CHECK_MESH, k)
        deep = d.geometry.drop_mm + spec.insert.wall
        need = spec.insert.wall * (1.0 - k * deep) - 0.05
    wall = min_wall_mm(v, f)
    # measured by ray casting on the check mesh (0.05 mm chord): ≥ insert.wall − 0.05 mm
    # (rays neither start on nor stop at slivers, whose normals mean nothing on a mesh
    # carried onto a curved skin)
    assert wall["min_wall_mm"] >= need, wall
    assert mesh_stats(v, f)[0]


@pytest.mark.slow
def test_behind_mount_is_flush_with_the_skin(round_insert) -> None:  # type: ignore[no-untyped-def]
    g, fab, _, (v, _) = round_insert
    assert float(np.max(v[:, 2])) == pytest.approx(
        0.0, abs=1e-6
    )  # ramp edge meets the outer surface
    lay = flange_layout(g, fab.insert)
    assert lay.z_top_mm == -2.5 and lay.z_bottom_mm == pytest.approx(-2.5 - 2.4)
    assert math.isfinite(lay.spacing_mm)


def _distance_to_footprint(pts: np.ndarray, hw, x_end: float, reach: float) -> np.ndarray:  # type: ignore[no-untyped-def]
    """Distance (mm) of plan points (N, 2) to the region |y| ≤ hw(x), 0 ≤ x ≤ x_end: 0 inside,
    inf beyond ``reach``; by a k-d tree over its boundary sampled every 0.02 mm (plain
    geometry, no ductgen code; the chord error is ≤ 0.02²/(8·2 mm) ≈ 3e-5 mm at 2 mm out)."""
    from scipy.spatial import cKDTree

    x = np.linspace(0.0, x_end, int(x_end / 0.02) + 1)
    h = hw(x)
    walls = [np.column_stack([x, -h]), np.column_stack([x, h])]
    ends = [
        np.column_stack([np.full(k, xe), np.linspace(-he, he, k)])
        for xe, he in ((0.0, h[0]), (x_end, h[-1]))
        for k in [int(2 * he / 0.02) + 2]
    ]
    px, py = pts[:, 0], pts[:, 1]
    inside = (px >= 0.0) & (px <= x_end) & (np.abs(py) <= hw(np.clip(px, 0.0, x_end)))
    dist = np.zeros(len(pts))
    dist[~inside] = cKDTree(np.vstack([*walls, *ends])).query(
        pts[~inside], distance_upper_bound=reach
    )[0]
    return dist


@pytest.mark.slow
def test_surface_mount_on_the_club_racer_is_closed_and_its_bezel_has_the_integrated_volume() -> (
    None
):
    """The surface-mount insert of a flat design whose bezel opening once left a sliver face
    on the skin plane (an open triangulation): one valid closed solid, and its part above
    the skin (the bezel) has the volume of an independent plan integral of the bezel's
    height: ``bezel_thickness`` from the edge round's boundary (distance r from the planform,
    0 ≤ x ≤ throat end) out to the feather, falling linearly to the 0.4 mm land over
    ``feather_width``, less the fastener holes (π·d²/4 each through the full thickness)."""
    import tomllib

    data = tomllib.loads((ROOT / "samples" / "club-racer-brake.toml").read_text())
    data["insert"] = {**data["insert"], "mount": "surface"}
    g, fab, solid, (v, f) = _build(parse_spec(data))
    assert solid.isValid() and len(solid.Solids()) == 1
    tight, winding, vol, _ = mesh_stats(v, f)
    assert tight and winding and vol > 0

    ins, r = fab.insert, g.edge_radius_mm
    tb, land, fw = ins.bezel_thickness, 0.4, ins.feather_width
    outer = r + ins.wall + ins.flange_width  # bezel edge: the planform offset by this (mm)
    x_ne = g.throat_end_mm
    above = solid.intersect(cq.Solid.makeBox(2000, 1000, 50, cq.Vector(-500, -500, 0)))
    measured = mesh_stats(*triangulate(above, *CHECK_MESH))[2]

    step = 0.2  # mm, plan grid (midpoint rule)
    xs = np.arange(-outer - 1.0, x_ne + outer + 1.0, step) + step / 2
    ys = np.arange(-g.width_mm / 2 - outer - 1.0, g.width_mm / 2 + outer + 1.0, step) + step / 2
    total = 0.0
    for chunk in np.array_split(xs, 8):
        X, Y = np.meshgrid(chunk, ys, indexing="ij")
        pts = np.column_stack([X.ravel(), Y.ravel()])
        dist = _distance_to_footprint(pts, g.planform.half_width, x_ne, outer + 1.0)
        height = np.where(dist <= outer - fw, tb, land + (tb - land) * (outer - dist) / fw)
        height[dist > outer] = 0.0
        height[(dist <= r) & (pts[:, 0] >= 0.0) & (pts[:, 0] <= x_ne)] = 0.0  # the opening
        total += float(height.sum()) * step * step
    holes = ins.holes.count * math.pi * ins.holes.diameter**2 / 4.0 * tb
    expected = total - holes
    # the 0.2 mm grid, the boundary sampling and the feather loft's rulings (measured 7e-5)
    assert measured == pytest.approx(expected, rel=1e-3), (measured, expected)
