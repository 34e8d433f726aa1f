"""The straight extension behind the duct outlet (ductgen.cfd.surface.extend_outlet) and the
duct system left behind it (ductgen.cfd.extension), without the solver."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

from tests.conftest import SAMPLES


def _square_outlet(side: float, x: float) -> np.ndarray:
    """Two triangles of a square face at x, normal +x (counter-clockwise seen from +x)."""
    a, b, c, d = ((x, 0, 0), (x, side, 0), (x, side, side), (x, 0, side))
    return np.array([(a, b, c), (a, c, d)], dtype=float)


def test_extension_is_a_closed_prism_of_the_outlet() -> None:
    from ductgen.cfd.surface import WettedSurface, extend_outlet

    side, x0, length = 0.05, 0.4, 0.4
    out = _square_outlet(side, x0)
    s = WettedSurface(
        triangles={"floor": np.zeros((0, 3, 3)), "cavity": np.zeros((0, 3, 3)), "outlet": out},
        outlet_x_m=x0,
        outlet_area_m2=side * side,
        outlet_centre_m=(x0, side / 2, side / 2),
        cavity_bounds_m=((0.0, 0.0, 0.0), (x0, side, side)),
        transition_exit_x_m=x0,
        outlet_hydraulic_diameter_m=side,
    )
    e = extend_outlet(s, length)
    hose = e.triangles["hose"]
    # four rim edges, two triangles each; the lateral area is perimeter × length (derived)
    assert hose.shape == (8, 3, 3)
    area = 0.5 * np.linalg.norm(np.cross(hose[:, 1] - hose[:, 0], hose[:, 2] - hose[:, 0]), axis=1)
    assert area.sum() == pytest.approx(4 * side * length, rel=1e-12)
    # every wall faces away from the axis (outward normals, so snappyHexMesh keeps the inside)
    n = np.cross(hose[:, 1] - hose[:, 0], hose[:, 2] - hose[:, 0])
    radial = hose.mean(axis=1) - np.array([0.0, side / 2, side / 2])
    radial[:, 0] = 0.0
    assert np.all(np.einsum("ij,ij->i", n, radial) > 0.0)
    assert np.all(np.abs(n[:, 0]) < 1e-15)  # parallel to the axis
    # the outlet moved by the length; the transition's exit stays where the cutter ended
    assert np.all(e.triangles["outlet"][:, :, 0] == pytest.approx(x0 + length))
    assert e.outlet_x_m == pytest.approx(x0 + length) and e.transition_exit_x_m == x0
    assert e.extension_m == length and e.outlet_area_m2 == s.outlet_area_m2
    # closed: with both end faces every edge is shared by exactly two triangles
    allt = np.vstack([hose, out[:, ::-1], e.triangles["outlet"]])
    keys = np.round(allt * 1e9).astype(np.int64)
    edges: dict = {}
    for t in keys:
        for i in range(3):
            k = tuple(sorted((tuple(t[i]), tuple(t[(i + 1) % 3]))))
            edges[k] = edges.get(k, 0) + 1
    assert set(edges.values()) == {2}
    with pytest.raises(ValueError):
        extend_outlet(s, 0.0)


def test_system_behind_the_extension_is_the_budget_with_a_shorter_hose(tmp_path: Path) -> None:
    from ductgen.cfd.extension import downstream_need, extension_plan
    from ductgen.design import build_design
    from ductgen.flow.system import TRANSITION_NAME, build_system
    from ductgen.spec import load_spec

    club = next(p for p in SAMPLES if p.stem == "club-racer-brake")
    spec = load_spec(club)
    design = build_design(spec, check_fabrication=False)
    plan = extension_plan(spec, 0.07, 8.0, math.pi * 0.0762**2 / 4.0)
    # the first hose's diameter (3 in) sets the length: 8 × 76.2 mm
    assert plan.diameter_m == pytest.approx(0.0762) and plan.length_m == pytest.approx(0.6096)
    assert plan.diameters == 8.0 and plan.source == "first hose diameter"
    need = downstream_need(spec, design, plan)
    # derived: with the extension as wide as the hose, the rest of the budget is the budget
    # of the same system with the hose shorter by the extension's length
    text = club.read_text().replace('length = "1.5 m"', f'length = "{1.5 - plan.length_m} m"')
    short = tmp_path / "short.toml"
    short.write_text(text)
    system = build_system(load_spec(short).flow, design.duct)[0]
    # the lines the CFD resolves itself (the transition; the non-uniform outflow's mixing
    # and dump) are not on the outlet's curve
    resolved = {TRANSITION_NAME, "hose mixing", "plenum dump", "plenum dump (alpha - 1)"}
    for q in (0.02, 0.06, 0.1):
        rest = sum(i.dp_pa for i in system.budget(q) if i.element not in resolved)
        assert need(q) == pytest.approx(rest, rel=1e-9)
    # no hose: the outlet's hydraulic diameter, a smooth run
    drone = load_spec(next(p for p in SAMPLES if p.stem == "drone-avionics-vent"))
    p2 = extension_plan(drone, 0.02, 8.0, 0.036 * 0.01)
    assert p2.diameter_m == 0.02 and p2.roughness_m == 0.0 and p2.length_m == pytest.approx(0.16)
    # a rectangular run of hydraulic diameter D_h loses f·L/D_h at its own velocity Q/A
    # (Darcy with the hydraulic diameter; textbook, recalled): the credit is the smooth
    # hose element's loss evaluated at that velocity
    from ductgen.flow.losses import HoseElement

    need2 = downstream_need(drone, build_design(drone, check_fabrication=False), p2)
    air = build_system(drone.flow, build_design(drone, check_fabrication=False).duct)[0]
    q = 0.008
    v = q / (0.036 * 0.01)
    run = HoseElement("r", 0.16, 0.02, 0.0).evaluate(v * math.pi * 0.02**2 / 4.0, air.air)
    assert run.velocity_m_s == pytest.approx(v)
    rest = sum(i.dp_pa for i in air.budget(q) if i.element not in resolved)
    assert need2(q) == pytest.approx(rest - run.dp_pa, rel=1e-12)
