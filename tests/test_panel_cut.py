"""``NAME-panel.step`` is never a panel without its opening, and the outside of an open panel
surface is taken from evidence.

Panels are made here with the kernel: an S-shaped open B-spline surface (convex, then
concave along the flow) in both face orientations, and the doubly curved bonnet with its face
reversed. Each check is independent of ductgen's own map: the opening is probed at points
computed from the surfaces' height functions, and the volume a cut removed is compared with
the panel's common part with the cutter (the kernel's adaptive mass properties, a different
Boolean from the cut).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

cq = pytest.importorskip("cadquery")

from ductgen.errors import DuctgenError, SpecError  # noqa: E402
from ductgen.spec import parse_spec  # noqa: E402
from tests.helpers import CURVED_BASE as BASE  # noqa: E402
from tests.panels import bonnet_face, bonnet_height, s_height, s_panel_face  # noqa: E402

T = 2.5  # skin thickness, mm


def _spec(name: str, path: Path, at: list[float], **skin: object):  # type: ignore[no-untyped-def]
    return parse_spec(
        {
            **BASE,
            "name": name,
            "skin": {
                "shape": "panel",
                "file": str(path),
                "at": at,
                "flow_direction": [1.0, 0.0, 0.0],
                "thickness": T,
                **skin,
            },
        }
    )


def _volume(shape) -> float:  # type: ignore[no-untyped-def]
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(shape.wrapped, props, 1e-7, False)
    return float(props.Mass())


def _state(shape, p: np.ndarray) -> str:  # type: ignore[no-untyped-def]
    from OCP.BRepClass3d import BRepClass3d_SolidClassifier
    from OCP.gp import gp_Pnt
    from OCP.TopAbs import TopAbs_IN, TopAbs_OUT

    s = BRepClass3d_SolidClassifier(shape.wrapped, gp_Pnt(*map(float, p)), 1e-6).State()
    return {TopAbs_IN: "in", TopAbs_OUT: "out"}.get(s, "on")


def _below(height, x: float, y: float, depth: float) -> np.ndarray:  # type: ignore[no-untyped-def]
    """The point ``depth`` mm under the surface z = height(x, y), along its normal."""
    e = 1e-3
    hx = (height(x + e, y) - height(x - e, y)) / (2 * e)
    hy = (height(x, y + e) - height(x, y - e)) / (2 * e)
    n = np.array([-hx, -hy, 1.0]) / np.sqrt(1.0 + hx * hx + hy * hy)
    return np.array([x, y, float(height(x, y))]) - depth * n


@pytest.mark.slow
@pytest.mark.parametrize("reverse", [False, True], ids=["faces-out", "faces-in"])
def test_an_s_shaped_panel_is_cut_with_its_opening_or_refused(tmp_path, reverse) -> None:  # type: ignore[no-untyped-def]
    from ductgen.pipeline import build

    face = s_panel_face(reverse)
    path = tmp_path / "s.step"
    cq.exporters.export(face, str(path))
    at = [40.0, 10.0, float(s_height(40.0, 10.0))]
    out = tmp_path / "out"
    try:
        result = build(_spec("s", path, at), out, only=["cutter"])
    except DuctgenError as err:
        # a refusal names what went wrong, and nothing is published
        assert "panel" in str(err) or "skin" in str(err)
        assert not (out / "s-panel.step").exists()
        return
    assert not reverse or result.report["geometry"]["skin"]["outward"][2] < 0
    body = face.thicken(-T if not reverse else T)  # into the body, by the file's faces
    cutter = cq.importers.importStep(str(out / "s-cutter.step")).val()
    cut = cq.importers.importStep(str(out / "s-panel.step")).val()
    assert len(cut.Solids()) == 1 and cut.isValid()
    removed = _volume(body) - _volume(cut)
    common = _volume(body.intersect(cutter))
    assert removed > 0
    assert removed == pytest.approx(common, rel=5e-3)
    # half-way through the skin inside the opening (centreline, 3/4 along the ramp; the
    # ramp length from the closed form L = R sin θ + (H − R(1 − cos θ))/tan θ): cut away
    g = result.design.geometry
    x = at[0] + 0.75 * g.length_mm
    for y in (at[1], at[1] + 0.25 * g.width_mm):
        p = _below(s_height, x, y, 0.5 * T)
        assert _state(body, p) == "in" and _state(cut, p) == "out", p


@pytest.mark.slow
def test_a_reversed_open_bonnet_asks_for_skin_outward(tmp_path) -> None:  # type: ignore[no-untyped-def]
    from ductgen.design import build_design

    at = [40.0, 30.0, float(bonnet_height(np.array(40.0), np.array(30.0)))]
    path = tmp_path / "bonnet-in.step"
    face = bonnet_face()
    cq.exporters.export(cq.Face(face.wrapped.Reversed()), str(path))
    with pytest.raises(SpecError) as err:
        build_design(_spec("rev", path, at))
    assert err.value.key == "skin.outward"
    assert "a vector pointing out of the body" in str(err.value)
    # told which side is out, it lays the inlet on the outside (normal up at the crown)
    d = build_design(_spec("rev", path, at, outward=[0.0, 0.0, 1.0]))
    assert d.skin.frame.axes[2][2] > 0.99  # type: ignore[union-attr]
    # the bonnet as drawn (faces out): the shape confirms the faces, no question asked
    good = tmp_path / "bonnet.step"
    cq.exporters.export(face, str(good))
    d = build_design(_spec("fwd", good, at))
    assert d.skin.frame.axes[2][2] > 0.99  # type: ignore[union-attr]
