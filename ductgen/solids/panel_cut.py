"""``NAME-panel.step``: the user's panel with the inlet cut, in the kernel worker.

A closed solid panel is used as it is; an open surface (a face or shell) is first thickened
by ``skin.thickness`` into the body, its offset face then put in B-spline form
(:mod:`ductgen.solids.thicken`: the Booleans ~3x faster, the volumes steady). The cutter
(and the insert, whose walls pass through the skin, through its cut-out) are subtracted;
the panel's volume before and after is reported.

Nothing is trusted unproven: a Boolean between an offset-surface panel and a mapped B-spline
cutter can fail silently (the result looks valid but keeps the skin). So the cut is proven
two ways, independently of the Boolean that made it: points inside the opening, half-way
through the skin, must lie outside the result (and inside the panel); and the volume removed
must equal the panel's common part with the largest tool (a different Boolean) within
:data:`REMOVED_REL` — both volumes by the kernel's adaptive mass properties, since its plain
``Volume()`` is off by 0.1 % of the panel on offset surfaces, which is 10 % of the cut-out,
and the removed volume measured inside a box round the tools (the panel's part there before
and after the cut), since the volume of a whole tube whose seam runs through the opening
reads far from the truth.
A cut that fails either proof is retried with a fuzzy tolerance; if it still fails, the
build stops naming the stage: never a panel without its opening.
"""

from __future__ import annotations

from itertools import pairwise
from pathlib import Path
from typing import Any

import numpy as np

from ductgen.design import Design
from ductgen.errors import GeometryError
from ductgen.geometry.fabrication import cutout_runs
from ductgen.geometry.panel_surface import PanelFrame
from ductgen.panel_file import load_panel
from ductgen.solids.thicken import thicken

__all__ = [
    "BOX_MARGIN_MM",
    "CUTOUT_STEP_MM",
    "CUTOUT_TOL_MM",
    "CUT_FUZZY_MM",
    "REMOVED_REL",
    "SLIVER_FRACTION",
    "cut_panel_job",
    "cutout_tool",
]

#: Largest total volume of the thin films dropped from a cut panel, as a fraction of its
#: volume.
SLIVER_FRACTION = 1e-4
#: Largest relative difference between the volume a panel cut removed and the panel's
#: common part with the cutting tool.
REMOVED_REL = 5e-3
#: Fuzzy tolerances (mm) tried in turn when a cut fails its proof.
CUT_FUZZY_MM = (0.0, 1e-4, 1e-3)
#: Margin (mm) of the box round the tools inside which the removed volume is measured.
BOX_MARGIN_MM = 2.0
#: Largest distance (mm) of the cut-out tool's edges from the mapped cut-out outline.
CUTOUT_TOL_MM = 0.005
#: Spacing (mm) of the outline's points along its straight runs before mapping (a mapped
#: straight line bends with the panel).
CUTOUT_STEP_MM = 1.0


def _dense(run: np.ndarray, step: float) -> np.ndarray:
    """The polyline ``run`` (k, 2) with a point at least every ``step`` mm (its long
    segments divided evenly), near-duplicate points (< 1e-6 mm apart) dropped."""
    keep = np.r_[True, np.hypot(*np.diff(run, axis=0).T) > 1e-6]
    run = run[keep]
    out = [run[:1]]
    for a, b in pairwise(run):
        m = max(int(np.ceil(float(np.hypot(*(b - a))) / step)), 1)
        out.append(a + np.outer(np.arange(1, m + 1) / m, b - a))
    return np.vstack(out)


def _run_curves(run: np.ndarray, levels: list[np.ndarray]) -> list[Any]:
    """Cubic B-spline edges, one per level, each within :data:`CUTOUT_TOL_MM` of its points
    (k, 3) in mm and through the first and the last: the mapped images of one outline run
    ``run`` (k, 2) at several heights, fitted by least squares on one knot vector over the
    run's chord length, so point i of every level lies at one parameter (the ruled walls
    between two levels join images of the same outline point). Spans where a level departs
    too far are halved until none does: a few dozen poles on the samples' longest runs,
    fitted in milliseconds (the kernel's approximation took ~0.2 s a run and level)."""
    from scipy.interpolate import BSpline, make_lsq_spline

    s = np.r_[0.0, np.cumsum(np.hypot(*np.diff(run, axis=0).T))]
    s /= s[-1]
    ys, w = np.hstack(levels), np.ones(len(s))
    w[[0, -1]] = 1e6  # the ends held: the neighbouring runs meet there
    inner = np.linspace(0.0, 1.0, 5)[1:-1] if len(s) > 8 else np.zeros(0)
    for _ in range(24):
        knots = np.r_[np.zeros(4), inner, np.ones(4)]
        try:
            poles = np.array(make_lsq_spline(s, ys, knots, k=3, w=w).c)
        except (ValueError, np.linalg.LinAlgError):
            break  # a span without points: no finer fit on these points
        poles[[0, -1]] = ys[[0, -1]]
        fitted = BSpline(knots, poles, 3)(s)
        off = np.max(np.linalg.norm((fitted - ys).reshape(len(s), -1, 3), axis=2), axis=1)
        if off.max() <= CUTOUT_TOL_MM:
            return [_edge(knots, poles[:, i : i + 3]) for i in range(0, ys.shape[1], 3)]
        edges = np.r_[0.0, inner, 1.0]
        at = np.searchsorted(edges, s[off > CUTOUT_TOL_MM]) - 1
        bad = np.unique(np.clip(at, 0, len(edges) - 2))
        inner = np.sort(np.r_[inner, 0.5 * (edges[bad] + edges[bad + 1])])
    raise GeometryError("panel", "the insert's cut-out outline could not be fitted")


def _edge(knots: np.ndarray, poles: np.ndarray) -> Any:
    """A kernel edge on the cubic B-spline (clamped ``knots``, ``poles`` (n, 3) in mm)."""
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeEdge
    from OCP.Geom import Geom_BSplineCurve
    from OCP.gp import gp_Pnt
    from OCP.TColgp import TColgp_Array1OfPnt
    from OCP.TColStd import TColStd_Array1OfInteger, TColStd_Array1OfReal

    values, counts = np.unique(knots, return_counts=True)
    ka, ma = TColStd_Array1OfReal(1, len(values)), TColStd_Array1OfInteger(1, len(values))
    for i, (k, m) in enumerate(zip(values, counts, strict=True), start=1):
        ka.SetValue(i, float(k))
        ma.SetValue(i, int(m))
    arr = TColgp_Array1OfPnt(1, len(poles))
    for i, pt in enumerate(poles, start=1):
        arr.SetValue(i, gp_Pnt(*map(float, pt)))
    return BRepBuilderAPI_MakeEdge(Geom_BSplineCurve(arr, ka, ma, 3)).Edge()


def _frame(d: Design) -> PanelFrame:
    """The datum's frame of a design on the user's panel."""
    frame = d.panel_frame
    if frame is None:
        raise GeometryError("panel", "the design's skin is not a panel: there is no panel to cut")
    return frame


def cutout_tool(d: Design) -> Any:
    """The insert's skin cut-out as a cutting tool in model coordinates: a ruled solid whose
    walls run along the skin normals through the cut-out outline from 1 mm under the skin's
    inner surface to 1 mm above its outer one, closed beyond by planar caps square to the
    datum normal. Each smooth run of the outline (an offset wall, line or round join) is one
    spline edge within :data:`CUTOUT_TOL_MM` of it, so the tool has a few dozen faces: a
    polygon of the outline (one face per point) made each Boolean with the panel ~15×
    slower. Nothing of it lies on a panel face (the insert itself does: its rim and flange
    follow the panel's surfaces to the mapping tolerance, which defeats a Boolean)."""
    import cadquery as cq
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeWire

    t = d.geometry.skin_thickness_mm
    # at least 8 points a run, so its least-squares fit has points in every span
    runs = [
        _dense(r, min(CUTOUT_STEP_MM, float(np.sum(np.hypot(*np.diff(r, axis=0).T))) / 8))
        for r in cutout_runs(d.geometry, d.fab.insert)
    ]
    n = _frame(d).axes[2]
    lows = [d.placement.solid_map(np.column_stack([r, np.full(len(r), -(t + 1.0))])) for r in runs]
    highs = [d.placement.solid_map(np.column_stack([r, np.full(len(r), 1.0)])) for r in runs]
    floor = min(float(np.min(p @ n)) for p in lows) - 1.0
    roof = max(float(np.max(p @ n)) for p in highs) + 1.0
    below = [p + (floor - p @ n)[:, None] * n for p in lows]
    above = [p + (roof - p @ n)[:, None] * n for p in highs]
    levels = (below, lows, highs, above)
    curves = [_run_curves(r, [lv[i] for lv in levels]) for i, r in enumerate(runs)]
    wires = []
    for j in range(len(levels)):
        wire = BRepBuilderAPI_MakeWire()
        for run in curves:
            wire.Add(run[j])
        if not wire.IsDone():
            raise GeometryError("panel", "the insert's cut-out outline is not one closed wire")
        wires.append(cq.Wire(wire.Wire()))
    tool = cq.Solid.makeLoft(wires, ruled=True)
    if not tool.isValid():
        raise GeometryError("panel", "the insert's cut-out tool is not a valid solid")
    return tool


def cut_panel_job(
    d: Design, path: str, units: str | None, tools: list[str], staging: str, with_cutout: bool
) -> dict[str, Any]:
    """``NAME-panel.step``: the panel (a closed solid, or its surface thickened inward by
    ``skin.thickness``) minus the cutter (the STEP files ``tools`` in ``staging``) and, when
    the insert is made, its skin cut-out (:func:`cutout_tool`); its volume and the volume
    removed (mm³). Runs in the worker."""
    import cadquery as cq

    from ductgen.solids.cad_io import step_bytes

    name = d.name
    body, source = _panel_body(d, path, units)
    before = precise_volume(body)
    cutters = [cq.importers.importStep(str(Path(staging) / t)).val() for t in tools]
    if with_cutout:
        cutters.insert(0, cutout_tool(d))
    # the largest tool, cut first, holds every other one's part in the skin (the cut-out's
    # outline holds the opening; without the insert, the cutter is the only tool); cut
    # first, it leaves the cutter little panel to meet (measured 6.6 → 5.4 s on a bonnet)
    expected = precise_volume(_boolean("common", body, cutters[0], 0.0))
    cut, removed, slivers = _cut_panel(d, body, cutters, before, expected)
    file = f"{name}-panel.step"
    # its edges rebuilt on their faces: 17 -> 6 edges off a face read back on the side-pod
    # sample, for ~1.3 CPU s
    (Path(staging) / file).write_bytes(step_bytes(cut, f"{name}-panel", exact_edges=True))
    return {
        "file": file,
        "source": source,
        "volume_mm3": before - removed,
        "panel_volume_mm3": before,
        "removed_mm3": removed,
        "removed_expected_mm3": expected,
        "slivers_dropped_mm3": slivers,
    }


def _panel_body(d: Design, path: str, units: str | None) -> tuple[Any, str]:
    """The panel as a solid: the file's closed solid(s), or its surface thickened inward by
    ``skin.thickness`` (mm); and which of the two it is."""
    import cadquery as cq

    kind, shape = load_panel(path, units)
    if kind != "brep":
        raise GeometryError("panel", "a mesh scan is not a CAD solid: no panel STEP is made")
    solids = [s for s in shape.Solids() if s.isValid()]
    if solids:
        body: Any = solids[0] if len(solids) == 1 else cq.Compound.makeCompound(solids)
        return body, "closed solid"
    outward = _frame(d).axes[2]
    thickness_mm = d.geometry.skin_thickness_mm
    return thicken(shape, np.asarray(outward, dtype=float), thickness_mm), "surface thickened"


def _cut_panel(
    d: Design, body: Any, cutters: list[Any], before: float, expected: float
) -> tuple[Any, float, float]:
    """The panel ``body`` minus every tool, tried at each fuzzy tolerance of
    :data:`CUT_FUZZY_MM` until the cut is one valid solid that removes what the tools hold
    (``expected``, mm³); the cut solid, the volume removed and the slivers dropped (mm³).

    Raises:
        GeometryError: no tolerance gives a cut that stands up to the checks.
    """
    # the volume removed is measured inside a box round the tools (nothing outside it can
    # change): the kernel's volume of a whole panel whose closed face (a tube's) has its
    # seam running through the opening was measured 40 % short of the material removed
    # (10488 against 17484 mm³, the cut itself right), but the panel's part in the box
    # has no face wrapping round, and the smaller volumes are measured more finely
    box = _tool_box(cutters, BOX_MARGIN_MM)
    before_local = precise_volume(_boolean("common", body, box, 0.0))
    inside = _opening_probes(d)
    reasons = []
    for fuzzy in CUT_FUZZY_MM:
        result = body
        for c in cutters:
            result = _boolean("cut", result, c, fuzzy)
        # a film of skin a few micrometres thick might remain where a tool's face follows
        # the panel within the mapping tolerance: dropped (and reported); any larger piece
        # means the cut split the panel, which is an error
        out = sorted(result.Solids(), key=lambda so: -precise_volume(so))
        slivers = sum(precise_volume(so) for so in out[1:])
        if not out or not out[0].isValid() or slivers > SLIVER_FRACTION * before:
            reasons.append(_attempt(fuzzy, "the cut panel is not one valid solid"))
            continue
        removed = before_local - precise_volume(_boolean("common", out[0], box, 0.0))
        failure = _disproof(body, out[0], inside, removed, expected)
        if not failure:
            return out[0], removed, slivers
        reasons.append(_attempt(fuzzy, failure))
    raise GeometryError(
        "panel cut",
        f"{'; '.join(reasons)}; no panel file is written: subtract {d.name}-cutter.step "
        "from the panel in your CAD and check the opening",
    )


def _attempt(fuzzy: float, why: str) -> str:
    """One failed cut's reason, named by its fuzzy tolerance (mm)."""
    return why if fuzzy == 0.0 else f"with a fuzzy tolerance of {fuzzy:g} mm, {why}"


def precise_volume(shape: Any) -> float:
    """A solid's volume (mm³) by the kernel's adaptive mass properties (relative error
    1e-7): its plain ``Volume()`` was measured 0.16 % high on a thickened B-spline panel."""
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(shape.wrapped, props, 1e-7, False)
    return float(props.Mass())


def _boolean(kind: str, a: Any, b: Any, fuzzy: float) -> Any:
    """``a`` cut by / in common with ``b`` (serial, oriented boxes, optional fuzzy mm)."""
    import cadquery as cq
    from OCP.BRepAlgoAPI import BRepAlgoAPI_Common, BRepAlgoAPI_Cut
    from OCP.TopTools import TopTools_ListOfShape

    op = BRepAlgoAPI_Cut() if kind == "cut" else BRepAlgoAPI_Common()
    args, tools = TopTools_ListOfShape(), TopTools_ListOfShape()
    args.Append(a.wrapped)
    tools.Append(b.wrapped)
    op.SetArguments(args)
    op.SetTools(tools)
    op.SetUseOBB(True)
    op.SetRunParallel(False)
    if fuzzy > 0.0:
        op.SetFuzzyValue(fuzzy)
    try:
        op.Build()
    except Exception as err:  # kernel exceptions share no base class
        raise GeometryError("panel cut", f"the {kind} failed in the kernel: {err}") from err
    if not op.IsDone():
        raise GeometryError("panel cut", f"the {kind} failed in the kernel")
    return cq.Shape.cast(op.Shape())


def _tool_box(tools: list[Any], margin: float) -> Any:
    """A box (solid) holding every tool, ``margin`` mm clear of them on every side."""
    import cadquery as cq

    bb = tools[0].BoundingBox()
    for t in tools[1:]:
        bb = bb.add(t.BoundingBox())
    lo = cq.Vector(bb.xmin - margin, bb.ymin - margin, bb.zmin - margin)
    return cq.Solid.makeBox(bb.xlen + 2 * margin, bb.ylen + 2 * margin, bb.zlen + 2 * margin, lo)


def _opening_probes(d: Design) -> np.ndarray:
    """Points (model mm) that must be cut away: inside the opening, half-way through the
    skin, at five stations along the ramp and across the throat."""
    g = d.geometry
    t = g.skin_thickness_mm
    pts = []
    for frac in (0.45, 0.6, 0.75, 0.9, 0.99):
        x = frac * g.length_mm
        if float(g.floor.depth(x)) <= t:  # the floor is still inside the skin there
            continue
        half = float(g.planform.half_width(x))
        for v in (0.0, 0.5 * half, -0.5 * half):
            pts.append((x, v, -0.5 * t))
    return d.skin.to_model(np.asarray(pts, dtype=float))


def _disproof(body: Any, cut: Any, probes: np.ndarray, removed: float, expected: float) -> str:
    """Why the cut ``cut`` of ``body`` is wrong, or "" when both proofs hold."""
    from OCP.BRepClass3d import BRepClass3d_SolidClassifier
    from OCP.gp import gp_Pnt
    from OCP.TopAbs import TopAbs_IN, TopAbs_OUT

    if removed <= 0.0:
        return f"the cut removed no material ({removed:.1f} mm³)"
    if abs(removed - expected) > REMOVED_REL * max(expected, 1e-9):
        return (
            f"the cut removed {removed:.1f} mm³ but the tool's common part with the panel is "
            f"{expected:.1f} mm³ (more than {REMOVED_REL:.1%} apart)"
        )
    in_body = 0
    # one classifier a solid, asked at each point (its face boxes are built once)
    body_has, cut_has = (
        BRepClass3d_SolidClassifier(body.wrapped),
        BRepClass3d_SolidClassifier(cut.wrapped),
    )
    for p in probes:
        pnt = gp_Pnt(*map(float, p))
        body_has.Perform(pnt, 1e-6)
        if body_has.State() != TopAbs_IN:
            continue
        in_body += 1
        cut_has.Perform(pnt, 1e-6)
        if cut_has.State() != TopAbs_OUT:
            where = ", ".join(f"{c:.1f}" for c in p)
            return f"the panel still has material inside the opening at ({where}) mm"
    if len(probes) and not in_body:
        return (
            "the panel's material is not where the opening is (the points half-way through "
            "the skin inside the opening lie outside the panel): the panel lies on the other "
            "side of its surface from the inlet"
        )
    return ""
