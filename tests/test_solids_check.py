"""The volumes the check compares on a solid mapped onto a curved skin: the kernel's adaptive
mass properties at :data:`~ductgen.solids.check.EXACT_VOLUME_EPS`, and the expected volume
of the flat triangulation refined and mapped (:func:`~ductgen.solids.jobs.mapped_volume_mm3`).

Independent checks: the volume element of cylindrical coordinates, dV = (1 + s·w/R) du dv dw
(derived), integrated in closed form over a box in design coordinates, u in [0, a],
v in [−b, b], w in [−h, 0]: V = 2ab·(h − s·h²/(2R)); and over the flat cavity, V_flat +
s·(∫w dV_flat)/R with the flat solid's volume and first moment from the kernel's mass
properties at a 1e-9 tolerance. The mapped B-rep departs from the exactly mapped solid by at
most ``MAP_TOL_MM`` on its surface (its splines are fitted to the map), so its volume can differ
from the closed form by at most area × MAP_TOL_MM; the integral's own error must stay far
below that.
"""

from __future__ import annotations

import pytest

cq = pytest.importorskip("cadquery")

from ductgen.design import build_design  # noqa: E402
from ductgen.solids.check import CHECK_MESH_CURVED, check_solid  # noqa: E402
from ductgen.solids.cutter import make_cavity  # noqa: E402
from ductgen.solids.deform import MAP_TOL_MM, map_solid  # noqa: E402
from ductgen.solids.jobs import EXPECTED_SAG_MM, expected_step_mm, mapped_volume_mm3  # noqa: E402
from ductgen.spec import parse_spec  # noqa: E402
from ductgen.tolerances import DEFAULT_TOLERANCES  # noqa: E402
from tests.helpers import CURVED_BASE  # noqa: E402

R = 600.0


def _design(axis: str, side: str):  # type: ignore[no-untyped-def]
    skin = {"shape": "cylinder", "radius": R, "axis": axis, "side": side, "thickness": 2.0}
    return build_design(parse_spec({**CURVED_BASE, "skin": skin}))


def _kernel_volume(shape, eps: float = 1e-9) -> tuple[float, float]:  # type: ignore[no-untyped-def]
    """Volume (mm³) and first moment ∫z dV (mm⁴) by the kernel's adaptive mass properties."""
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(shape.wrapped, props, eps, False)
    return props.Mass(), props.Mass() * props.CentreOfMass().Z()


def _as_bsplines(shape):  # type: ignore[no-untyped-def]
    from OCP.BRepBuilderAPI import BRepBuilderAPI_NurbsConvert

    return cq.Shape.cast(BRepBuilderAPI_NurbsConvert(shape.wrapped, True).Shape())


@pytest.mark.slow
@pytest.mark.parametrize(("axis", "side"), [("streamwise", "convex"), ("spanwise", "concave")])
def test_mapped_box_volume_is_the_cylindrical_closed_form(axis: str, side: str) -> None:
    d = _design(axis, side)
    s = 1.0 if side == "convex" else -1.0
    a, b, h = 200.0, 60.0, 40.0
    box = cq.Solid.makeBox(a, 2.0 * b, h, cq.Vector(0.0, -b, -h))
    mapped = map_solid(box, d.skin.to_model, "box")
    exact = 2.0 * a * b * (h - s * h * h / (2.0 * R))
    res = check_solid(
        mapped, "box", exact, DEFAULT_TOLERANCES, mesh=CHECK_MESH_CURVED, exact_volume=True
    )
    area = 2.0 * (a * 2.0 * b + a * h + 2.0 * b * h)
    bound = area * MAP_TOL_MM / exact  # the mapped splines' departure, at most (1.6e-4)
    assert res.volume_mm3 == pytest.approx(exact, rel=bound / 5.0)
    # the expected volume (the flat triangulation, refined and mapped; the box's flat mesh is
    # exact): its chords sag at most EXPECTED_SAG_MM off the mapped surface
    expected = mapped_volume_mm3(box, d.skin.to_model, expected_step_mm(1.0 / R))
    assert expected == pytest.approx(exact, rel=area * EXPECTED_SAG_MM / exact)


@pytest.mark.slow
def test_mapped_cavity_volume_keeps_its_precision() -> None:
    # the flat cavity (wall splines, ramp arc and line, lip) mapped onto a convex cylinder: its
    # splines carry many knot spans, where the integral's cost lies
    d = _design("streamwise", "convex")
    flat = make_cavity(d.geometry)
    # measured on the flat cavity written as B-splines (an exact conversion): the adaptive
    # integral scatters on its extrusion faces (see ductgen.solids.heal)
    vol, moment = _kernel_volume(_as_bsplines(flat))
    mapped = map_solid(flat, d.skin.to_model, "cavity")
    closed = vol + moment / R
    res = check_solid(
        mapped, "cavity", closed, DEFAULT_TOLERANCES, mesh=CHECK_MESH_CURVED, exact_volume=True
    )
    area = float(mapped.Area())
    assert res.volume_mm3 == pytest.approx(closed, rel=area * MAP_TOL_MM / closed)
    # the integral itself: the same mapped B-rep's volume at a 1e-9 tolerance, to a tenth of
    # the B-rep's own bound (the reported volume carries the map's error, not the integral's)
    bound = area * MAP_TOL_MM / closed
    assert res.volume_mm3 == pytest.approx(_kernel_volume(mapped)[0], rel=bound / 10.0)
