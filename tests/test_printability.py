"""Printability measures on meshes with known answers, the material table, the layout
checks (hole edge distance and spacing: common practice, no source) and bad fabrication
input."""

from __future__ import annotations

import numpy as np
import pytest
import trimesh

from ductgen.design import build_design, fabrication_from_spec, geometry_from_spec
from ductgen.errors import SpecError
from ductgen.geometry.fabrication import flange_layout
from ductgen.geometry.fabrication_rules import fabrication_warnings, validate_fabrication
from ductgen.printability import load_materials, min_wall_mm, overhang_by_orientation, print_section
from ductgen.spec import parse_spec


def _hollow_box(outer: float, wall: float) -> trimesh.Trimesh:
    a = trimesh.creation.box(extents=(outer, outer, outer))
    b = trimesh.creation.box(extents=(outer - 2 * wall,) * 3)
    b.invert()
    return trimesh.util.concatenate([a, b])


def test_min_wall_of_a_hollow_box_is_its_wall() -> None:
    m = _hollow_box(20.0, 2.0)  # exact geometry: wall 2 mm everywhere
    assert min_wall_mm(m.vertices, m.faces)["min_wall_mm"] == pytest.approx(2.0, abs=1e-6)
    plate = trimesh.creation.box(extents=(40.0, 30.0, 1.0))
    assert min_wall_mm(plate.vertices, plate.faces)["min_wall_mm"] == pytest.approx(1.0, abs=1e-6)


def _feathered_plate() -> trimesh.Trimesh:
    """A plate 2 mm thick over 0 ≤ x ≤ 20 mm whose edge tapers to a 0.4 mm land at x = 26,
    30 mm wide in y (a bezel's feathered edge in section): convex, so its hull is the part."""
    section = [(0.0, 0.0), (26.0, 0.0), (26.0, 0.4), (20.0, 2.0), (0.0, 2.0)]
    pts = [(x, y, z) for x, z in section for y in (0.0, 30.0)]
    return trimesh.convex.convex_hull(np.array(pts))


def test_min_wall_skips_a_feather_outside_the_given_plan_outline() -> None:
    m = _feathered_plate()
    anywhere = min_wall_mm(m.vertices, m.faces)["min_wall_mm"]
    assert anywhere < 1.2  # the taper reads as a thin wall when it is judged
    plan = np.array([[-1.0, -1.0], [19.5, -1.0], [19.5, 31.0], [-1.0, 31.0]])
    inside = min_wall_mm(m.vertices, m.faces, starts_within=plan)
    assert inside["min_wall_mm"] == pytest.approx(2.0, abs=1e-6)  # the plate's thickness
    sec, warns = print_section(
        m.vertices, m.faces, "PETG", by_design_thin=(plan, "a feathered edge, by design")
    )
    assert sec["min_wall_excludes"] == "a feathered edge, by design"
    assert "print_thin_wall" not in {w.code for w in warns}
    assert "print_thin_wall" in {w.code for w in print_section(m.vertices, m.faces)[1]}


def test_min_wall_ignores_hits_on_slivers() -> None:
    # a 2 mm plate with a sliver triangle (0.01 mm high over a 30 mm edge) just under its
    # top: rays from the top would read a 0.01 mm wall on it; a sliver's normal means
    # nothing (on meshes carried onto a curved skin such strips lie along bent edges)
    plate = trimesh.creation.box(extents=(40.0, 30.0, 2.0))
    z = 1.0 - 0.01
    sliver = np.array([[-15.0, -5.005, z], [15.0, -5.005, z], [0.0, -4.995, z]])
    v = np.vstack([plate.vertices, sliver])
    n = len(plate.vertices)
    f = np.vstack([plate.faces, [[n, n + 1, n + 2], [n, n + 2, n + 1]]])
    assert min_wall_mm(v, f)["min_wall_mm"] == pytest.approx(2.0, abs=1e-6)


def test_overhang_of_a_hollow_box() -> None:
    m = _hollow_box(20.0, 2.0)
    over = overhang_by_orientation(m.vertices, m.faces)
    # the closed cavity's ceiling (16 × 16 mm) faces down in every orientation; the
    # outer bottom face lies on the plate and does not count
    assert all(v == pytest.approx(256.0) for v in over.values())
    solid = trimesh.creation.box(extents=(10.0, 10.0, 10.0))
    assert max(overhang_by_orientation(solid.vertices, solid.faces).values()) == 0.0


def test_mass_and_heat_warning() -> None:
    cube = trimesh.creation.box(extents=(10.0, 10.0, 10.0))
    sec, warns = print_section(cube.vertices, cube.faces, "PETG", near_heat=True)
    assert sec["manifold"] and sec["volume_mm3"] == pytest.approx(1000.0)
    assert sec["mass_g"] == pytest.approx(1.0 * load_materials()["PETG"].density_g_cm3)
    assert "print_near_heat" in {w.code for w in warns}
    _, warns = print_section(cube.vertices, cube.faces, "PETG", service_temperature_c=80.0)
    assert "print_heat_limit" in {w.code for w in warns}


def test_material_table_matches_shop_practice() -> None:
    mats = load_materials()
    # printed material near heat (common practice, no source):
    # PETG softens ~65–85 °C, ASA ~90–100 °C; values in the table are recalled from memory
    assert 65 <= mats["PETG"].hdt_c <= 85
    assert 90 <= mats["ASA"].hdt_c <= 100
    assert {"PETG", "ASA", "PA-CF", "PC"} <= set(mats)
    assert all(0.9 < m.density_g_cm3 < 1.5 for m in mats.values())


BASE = {
    "throat": {"width": 100, "depth": 25},
    "lip": {"thickness": 4},
    "outlet": {"kind": "round", "diameter": 60, "transition_length": 140, "spigot_length": 40},
}


def _g_fab(**over):  # type: ignore[no-untyped-def]
    spec = parse_spec({**BASE, **over})
    return geometry_from_spec(spec), fabrication_from_spec(spec)


def test_holes_spaced_evenly_and_symmetric() -> None:
    g, fab = _g_fab(insert={"holes": {"count": 8, "diameter": 4}})
    lay = flange_layout(g, fab.insert)
    h = lay.hole_centres_xy
    assert len(h) == 8
    mirrored = h * np.array([1.0, -1.0])
    assert np.max(np.min(np.linalg.norm(h[:, None] - mirrored[None], axis=2), axis=1)) < 1e-6
    # none over the transition (keep-out), all on the flange centre line
    assert not np.any((h[:, 0] > lay.keepout[0]) & (np.abs(h[:, 1]) < lay.keepout[1]))


def test_hole_warnings_follow_shop_practice() -> None:
    # edge distance ≥ 2 × d and spacing ≥ 4 × d: common practice, no source
    g, fab = _g_fab(insert={"flange_width": 12, "holes": {"count": 40, "diameter": 4}})
    codes = {w.code for w in fabrication_warnings(g, fab)}
    assert {"hole_edge_distance", "hole_spacing"} <= codes
    g, fab = _g_fab(insert={"flange_width": 20, "holes": {"count": 8, "diameter": 4}})
    codes = {w.code for w in fabrication_warnings(g, fab)}
    assert not codes & {"hole_edge_distance", "hole_spacing"}


@pytest.mark.parametrize(
    ("over", "key"),
    [
        ({"insert": {"wall": 13}}, "insert.wall"),  # thicker than half the 25 mm throat depth
        ({"insert": {"flange_width": 5, "holes": {"diameter": 4.2}}}, "insert.flange_width"),
        ({"insert": {"bead_height": 5}}, "insert.bead_height"),  # spigot larger than the transition
        ({"outlet": {**BASE["outlet"], "diameter": 12}, "insert": {"wall": 3}}, "outlet.diameter"),
        ({"outlet": {**BASE["outlet"], "spigot_length": 12}}, "outlet.spigot_length"),
        ({"insert": {"holes": {"count": 200, "diameter": 6}}}, "insert.holes.count"),
    ],
)
def test_bad_fabrication_input_names_the_key(over: dict, key: str) -> None:
    g, fab = _g_fab(**over)
    with pytest.raises(SpecError) as err:
        validate_fabrication(g, fab)
    assert key in {p.key for p in err.value.problems}


def test_defaults_are_valid() -> None:
    # the default insert and plug make a part for an ordinary throat: no error, and no
    # hole or thin-wall warning (FDM wall ≥ 2 mm, edge ≥ 2 d, spacing ≥ 4 d: common
    # practice, no source)
    d = build_design(parse_spec(BASE))
    codes = {w.code for w in d.warnings}
    assert not codes & {"hole_edge_distance", "hole_spacing", "thin_wall"}
    assert d.fab.insert.wall >= 2.0
