"""The wetted surface of the CFD case on a curved skin or the user's panel: the cutter in
the datum frame, the skin round it as the domain's floor (:mod:`ductgen.cfd.skin_wall`),
and the straight extension behind the outlet along the outlet's own axis, shortened where
a convex skin falls away below it (a straight run would break out through the skin)."""

from __future__ import annotations

from dataclasses import replace
from typing import Any

import numpy as np

from ductgen.cfd.extension import ExtensionPlan, extension_plan
from ductgen.cfd.skin_wall import SkinDomain, SkinWallError, datum_frame, skin_sheet
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
    axis = _outlet_axis(design, axes, verts, np.asarray(faces))
    g = design.geometry
    delta = flow.boundary_layer_thickness_m * 1e3
    h = cell_m * 1e3
    w, length = g.width_mm, g.length_mm
    half = w / 2.0 + max(0.75 * w, 2.0 * delta) + 3.0 * h
    x0 = -max(0.5 * length, 2.0 * delta) - 3.0 * h
    along = verts @ axis
    end = verts[along > along.max() - 1e-3]  # the outlet face's corners
    size = float(np.max(end.max(axis=0) - end.min(axis=0)))
    # a first plan for the footprint: the full run from the outlet, its diameter the first
    # hose's or the outlet face's largest extent (at least its hydraulic diameter)
    d_guess = extension_plan(spec, size * 1e-3, diameters, 1e-3).diameter_m * 1e3
    x1 = max(float(verts[:, 0].max()) + diameters * d_guess * max(axis[0], 0.0),
             g.throat_end_mm + 0.5 * length) + 4.0 * h  # fmt: skip
    sheet = skin_sheet(design, spec, (x0, x1, -half, half))
    domain = SkinDomain(sheet, design.skin, origin, axes)
    z_top = max(float(sheet.points[:, 2].max()), float(verts[:, 2].max())) + 50.0
    a3 = (float(axis[0]), float(axis[1]), float(axis[2]))
    surface = wetted_surface_on_skin(verts, np.asarray(faces), sheet, z_top, a3)
    plan = extension_plan(
        spec, surface.outlet_hydraulic_diameter_m, diameters, surface.outlet_area_m2
    )
    notes: list[str] = []
    fit = domain.fit_extension(surface, plan.length_m, cell_m)
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
