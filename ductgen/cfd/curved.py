"""The wetted surface of the CFD case on a curved skin or the user's panel: the cutter in
the datum frame, the skin round it as the domain's floor (:mod:`ductgen.cfd.skin_wall`),
and the straight extension behind the outlet along the outlet's own axis. Where a convex
skin falls away below that axis (a straight run would break out through the skin) the
floor runs on along the skin's tangent from the outlet's station
(:func:`~ductgen.cfd.floor_fill.fair_downstream`), and the run is shortened only where
even that does not leave it room."""

from __future__ import annotations

from dataclasses import replace
from typing import Any

import numpy as np

from ductgen.cfd.extension import ExtensionPlan, extension_plan
from ductgen.cfd.floor_fill import fair_downstream
from ductgen.cfd.skin_wall import (
    SkinDomain,
    SkinSheet,
    SkinWallError,
    datum_frame,
    skin_sheet,
)
from ductgen.cfd.surface import WettedSurface, extend_outlet, wetted_surface_on_skin
from ductgen.flow.record import FlowRecord

__all__ = ["MIN_EXTENSION_DIAMETERS", "curved_surface"]

#: Shortest straight run behind the outlet (diameters) a case is written with; below it the
#: outlet boundary would sit in the transition's distorted outflow (common practice, no source).
MIN_EXTENSION_DIAMETERS = 1.0


def _outlet_axis(
    design: Any, domain_axes: np.ndarray, verts: np.ndarray, faces: np.ndarray
) -> np.ndarray:
    """The outlet's unit normal in the datum frame: the duct's straight outlet direction,
    or (no duct behind the throat) the normal of the cutter's most downstream face."""
    axis = design.placement.outlet_axis
    if axis is not None:
        a = domain_axes @ np.asarray(axis, float)
        return np.asarray(a / np.linalg.norm(a))
    tri = verts[faces]
    n = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
    n /= np.maximum(np.linalg.norm(n, axis=1), 1e-300)[:, None]
    cand = np.where(n[:, 0] > 0.9)[0]
    best = cand[np.argmax(tri[cand].mean(axis=1)[:, 0])]
    return np.asarray(n[best])


def curved_surface(
    spec: Any,
    design: Any,
    flow: FlowRecord,
    vertices_mm: np.ndarray,
    faces: np.ndarray,
    diameters: float,
    cell_m: float,
) -> tuple[WettedSurface, SkinDomain, ExtensionPlan, list[str]]:
    """The extended wetted surface, the skin domain, the extension's plan and notes, for a
    cutter mesh in model coordinates (mm). ``cell_m`` is the coarsest background cell (m):
    the sheet reaches two of them past the coarse domain, and the extension's rim stays
    one of them under the skin.

    Raises:
        SkinWallError: the skin cannot be the domain's floor, or not even
            :data:`MIN_EXTENSION_DIAMETERS` of straight run fits under it.
    """
    origin, axes = datum_frame(design)
    verts = (np.asarray(vertices_mm, float) - origin) @ axes.T
    faces = np.asarray(faces)
    axis = _outlet_axis(design, axes, verts, faces)
    along = verts @ axis
    end = verts[along > along.max() - 1e-3]  # the outlet face's corners
    sheet = _sheet(spec, design, flow, verts, axis, end, diameters, cell_m)
    z_top = max(float(sheet.points[:, 2].max()), float(verts[:, 2].max())) + 50.0
    a3 = (float(axis[0]), float(axis[1]), float(axis[2]))
    notes = [_filled_note(sheet)] if sheet.filled_mm > 0.0 else []

    def fitted(floor: SkinSheet) -> tuple[WettedSurface, ExtensionPlan, SkinDomain, float]:
        surface = wetted_surface_on_skin(verts, faces, floor, z_top, a3)
        plan = extension_plan(
            spec, surface.outlet_hydraulic_diameter_m, diameters, surface.outlet_area_m2
        )
        domain = SkinDomain(floor, design.skin, origin, axes)
        return surface, plan, domain, domain.fit_extension(surface, plan.length_m, cell_m)

    surface, plan, domain, fit = fitted(sheet)
    if fit < plan.length_m - 1e-9:  # the skin falls away below the outlet's direction
        faired = _faired(sheet, float(end[:, 0].max()))
        if faired is not None:
            notes.append(_faired_note(sheet, faired))
            surface, plan, domain, fit = fitted(faired)
    if fit < plan.length_m - 1e-9:
        n = fit / plan.diameter_m
        if n < MIN_EXTENSION_DIAMETERS:
            raise SkinWallError(
                f"a straight run behind the outlet breaks out through the skin after "
                f"{fit * 1e3:.0f} mm ({n:.2f} diameters; at least "
                f"{MIN_EXTENSION_DIAMETERS:g} is needed for the outlet boundary): the skin "
                "falls away below the duct's outlet direction"
            )
        notes.append(
            f"the straight extension is {n:.1f} instead of {diameters:g} diameters: a longer "
            "straight run would break out through the skin, which falls away below the "
            "outlet's direction"
        )
        plan = replace(plan, length_m=fit, diameters=n)
    return extend_outlet(surface, plan.length_m), domain, plan, notes


def _sheet(
    spec: Any,
    design: Any,
    flow: FlowRecord,
    verts: np.ndarray,
    axis: np.ndarray,
    end: np.ndarray,
    diameters: float,
    cell_m: float,
) -> SkinSheet:
    """The skin under the domain's footprint (datum frame, mm): the inlet with two boundary
    layers or three quarters of its width each side, half its length or two boundary
    layers ahead, the full straight run behind the outlet (``end``: the outlet face's
    corners) and three coarse cells round it; the panel file must cover the cutter."""
    g = design.geometry
    delta = flow.boundary_layer_thickness_m * 1e3
    h = cell_m * 1e3
    w, length = g.width_mm, g.length_mm
    half = w / 2.0 + max(0.75 * w, 2.0 * delta) + 3.0 * h
    x0 = -max(0.5 * length, 2.0 * delta) - 3.0 * h
    size = float(np.max(end.max(axis=0) - end.min(axis=0)))
    # a first plan for the footprint: the full run from the outlet, its diameter the first
    # hose's or the outlet face's largest extent (at least its hydraulic diameter)
    d_guess = extension_plan(spec, size * 1e-3, diameters, 1e-3).diameter_m * 1e3
    x1 = max(float(verts[:, 0].max()) + diameters * d_guess * max(axis[0], 0.0),
             g.throat_end_mm + 0.5 * length) + 4.0 * h  # fmt: skip
    lo, hi = verts.min(axis=0), verts.max(axis=0)
    core = (float(lo[0]) - 5.0, float(hi[0]) + 5.0, float(lo[1]) - 5.0, float(hi[1]) + 5.0)
    return skin_sheet(design, spec, (x0, x1, -half, half), core)


def _faired(sheet: SkinSheet, x_outlet: float) -> SkinSheet | None:
    """The sheet run on along the skin's tangent from the outlet's station ``x_outlet``
    (datum frame, mm); None when the sheet is no grid or has no row there."""
    if sheet.grid is None:
        return None
    points, x_from = fair_downstream(sheet.points, sheet.grid, x_outlet)
    if x_from is None:
        return None
    return replace(sheet, points=points, faired_from_x_mm=x_from)


def _faired_note(sheet: SkinSheet, faired: SkinSheet) -> str:
    drop = float(np.max(faired.points[:, 2] - sheet.points[:, 2]))
    return (
        f"downstream of the duct's outlet (x = {faired.faired_from_x_mm:.0f} mm in the datum "
        f"frame) the domain's floor runs on along the skin's tangent instead of the skin, "
        f"which falls up to {drop:.0f} mm lower by the domain's end: a straight run behind "
        "the outlet would otherwise break out through it"
    )


def _filled_note(sheet: SkinSheet) -> str:
    return (
        f"the panel file does not cover the domain's floor: past its edge (up to "
        f"{sheet.filled_mm:.0f} mm) the floor continues its least-squares quadratic surface"
    )
