"""One inlet design, built and checked once from a validated spec.

:func:`build_design` is the only place that reads the spec's geometry and fabrication
sections: it makes the pure :class:`~ductgen.geometry.inlet.InletGeometry`, the insert and
plug values, the flange and trim layout and the skin map, checks every cross-field rule
(raising :class:`~ductgen.errors.SpecError` naming the key) and gathers the design warnings.
Solids, templates, sheets and the report all read the resulting frozen :class:`Design`.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from ductgen.design.skin import Placement, distortion_warnings, placement, skin_from_spec
from ductgen.errors import DesignWarning, SpecError
from ductgen.flow.inputs import DuctShape
from ductgen.flow.stall import length_under_stall_line
from ductgen.flow.warnings import geometry_warnings
from ductgen.geometry.fabrication import (
    Fabrication,
    FlangeLayout,
    HolesParams,
    InsertParams,
    PlugParams,
    Spigot,
    flange_layout,
    plug_trim_outline,
    spigot_of,
)
from ductgen.geometry.fabrication_rules import fabrication_warnings, validate_fabrication
from ductgen.geometry.flatten import Development, develop
from ductgen.geometry.floor import Floor, ramp_angle_for_length
from ductgen.geometry.inlet import InletGeometry, min_transition_length_mm
from ductgen.geometry.lip import Lip
from ductgen.geometry.panel import PanelSkin
from ductgen.geometry.panel_surface import PanelFrame
from ductgen.geometry.planform import Planform
from ductgen.geometry.profile import Profile, load_profile
from ductgen.geometry.skin import SkinMap
from ductgen.geometry.transition import Transition
from ductgen.spec.model import (
    DEFAULT_RAMP_ANGLE_DEG,
    NoOutlet,
    PlanformSpec,
    RectOutlet,
    RoundOutlet,
    Spec,
)
from ductgen.spec.types import MAX_LENGTH_MM
from ductgen.worker import KernelWorker

__all__ = [
    "Design",
    "build_design",
    "duct_shape",
    "fabrication_from_spec",
    "geometry_from_spec",
]


@dataclass(frozen=True)
class Design:
    """Everything a build needs to know about one inlet, in design coordinates (mm, deg).

    Attributes:
        name: file prefix (the spec's ``name``).
        geometry: planform, floor, lip, transition and their integrals.
        fab: insert, plug and hose-fit values.
        layout: the insert's flange, skin cut-out and fastener holes in plan.
        spigot: the round hose spigot, or None (rectangular collar / no outlet).
        plug_trim_xy: the plug's base-plate edge in plan, (N, 2) CCW.
        skin: the skin map from design to model coordinates.
        placement: the maps the solids are placed with (the duct straightens to its outlet).
        skin_summary: the skin as the report states it (shape, side, radii in mm, axis).
        development: design (u, v) → flat template coordinates (the identity where the skin
            develops exactly; a least-distortion flattening on a doubly curved skin).
        duct: the numbers the airflow model reads.
        warnings: design warnings on the shape and the fabrication layout.
        fabrication_checked: whether the insert/plug rules were checked (a cutter-only
            build skips them, so a cutter can be made for a throat too small for a part).
    """

    name: str
    geometry: InletGeometry
    fab: Fabrication
    layout: FlangeLayout
    spigot: Spigot | None
    plug_trim_xy: np.ndarray
    skin: SkinMap
    placement: Placement
    skin_summary: dict[str, object]
    development: Development
    duct: DuctShape
    warnings: tuple[DesignWarning, ...]
    fabrication_checked: bool = True

    @property
    def panel_frame(self) -> PanelFrame | None:
        """On the user's panel, the datum's frame (x along the flow, z outward; the frame
        print orientations and bed fits are judged in); else None (model coordinates are
        already that frame)."""
        return self.skin.frame if isinstance(self.skin, PanelSkin) else None


def duct_shape(g: InletGeometry) -> DuctShape:
    """The numbers the flow model needs from the geometry (mm, mm², deg). The walls count
    as standard when their table has the ordinates of the spec's default wall table."""
    t, pf = g.transition, g.planform.profile
    std = load_profile(PlanformSpec.model_fields["profile"].default)
    same = pf.x.shape == std.x.shape and bool(
        np.allclose(pf.x, std.x, rtol=0, atol=1e-12)
        and np.allclose(pf.f, std.f, rtol=0, atol=1e-12)
    )
    wall = None if t is None else t.steepest_wall()
    return DuctShape(
        throat_width_mm=g.width_mm,
        throat_depth_mm=g.depth_mm,
        throat_area_mm2=g.throat_area_mm2,
        ramp_angle_deg=g.floor.angle_deg,
        ramp_length_mm=g.length_mm,
        max_wall_divergence_deg=g.planform.max_divergence_deg,
        standard_walls=same,
        transition_length_mm=None if t is None else t.length_mm,
        transition_inlet_area_mm2=None if t is None else t.throat_area_mm2,
        transition_outlet_area_mm2=None if t is None else t.outlet_area_mm2,
        transition_cone_half_angle_deg=None if t is None else t.equivalent_cone_half_angle_deg,
        steepest_wall_angle_deg=None if wall is None else wall.angle_deg,
        steepest_wall_included_deg=None if wall is None else wall.included_deg,
        steepest_wall_across_mm=None if wall is None else wall.across_mm,
        steepest_wall_name=None if wall is None else wall.wall,
        transition_length_under_stall_mm=None if t is None else _length_under_stall(t),
    )


def _length_under_stall(t: Transition) -> float | None:
    """Transition length (mm) that brings the steepest wall under the two-dimensional
    diffuser's stall line (:mod:`ductgen.flow.stall`), the outlet held where it is."""
    wall = t.steepest_wall()

    def included(length: float) -> float:
        return dataclasses.replace(t, length_mm=length).steepest_wall(n=61, m=5).included_deg

    return length_under_stall_line(included, wall.across_mm, t.length_mm)


def fabrication_from_spec(spec: Spec) -> Fabrication:
    """The ``[insert]``, ``[plug]`` and hose-fit values of a spec as plain numbers."""
    ins, plug, holes = spec.insert, spec.plug, spec.insert.holes
    return Fabrication(
        insert=InsertParams(
            wall=ins.wall,
            flange_width=ins.flange_width,
            flange_thickness_mm=ins.flange_thickness_mm,
            mount=ins.mount,
            bezel_thickness=ins.bezel_thickness,
            feather_width=ins.feather_width,
            holes=HolesParams(holes.count, holes.diameter, holes.edge_distance),
            bead_height=ins.bead_height,
            clamp_land=ins.clamp_land,
        ),
        plug=PlugParams(plug.draft_deg, plug.trim_margin, plug.base_thickness),
        fit_clearance_mm=float(getattr(spec.outlet, "fit_clearance", 0.2)),
    )


def build_design(
    spec: Spec,
    profile: Profile | None = None,
    *,
    check_fabrication: bool = True,
    worker: KernelWorker | None = None,
) -> Design:
    """The design of ``spec``: geometry, fabrication layout, skin map, warnings.
    ``worker``: the kernel worker that samples a user's panel file (default: the
    process-wide one).

    Raises:
        SpecError: a cross-field rule is broken (every fabrication problem at once).
    """
    if spec.flow is not None:  # before any kernel work: a speed the model cannot estimate
        from ductgen.flow.gradient import check_inlet_cp_gradient
        from ductgen.flow.system import check_speed

        check_speed(spec.flow)
        check_inlet_cp_gradient(spec.flow)
    g = geometry_from_spec(spec, profile)
    fab = fabrication_from_spec(spec)
    duct = duct_shape(g)
    warnings: list[DesignWarning] = list(geometry_warnings(duct))
    if check_fabrication:
        validate_fabrication(g, fab)
        warnings += fabrication_warnings(g, fab)
    layout = flange_layout(g, fab.insert)
    spigot = spigot_of(g, fab)
    trim = plug_trim_outline(g, fab.plug)
    skin, skin_summary, skin_warnings = skin_from_spec(
        spec.skin, g, layout, trim, spigot, fab.insert.wall, worker
    )
    warnings += skin_warnings
    place, place_warnings = placement(skin, g, float(np.max(layout.outline_xy[:, 0])))
    warnings += place_warnings
    dev = develop(skin, np.vstack([layout.outline_xy, trim, layout.opening_xy]))
    warnings += distortion_warnings(dev)
    return Design(
        name=spec.name,
        geometry=g,
        fab=fab,
        layout=layout,
        spigot=spigot,
        plug_trim_xy=trim,
        skin=skin,
        placement=place,
        skin_summary=skin_summary,
        development=dev,
        duct=duct,
        warnings=tuple(warnings),
        fabrication_checked=check_fabrication,
    )


def geometry_from_spec(spec: Spec, profile: Profile | None = None) -> InletGeometry:
    """Pure geometry from a spec; raises :class:`SpecError` on cross-field problems."""

    profile = profile or load_profile(spec.planform.profile)
    w, d = spec.throat.width, spec.throat.depth
    drop = d + spec.lip.thickness if spec.lip.style == "flush" else d
    floor = _floor(spec, drop)
    length = floor.length_mm
    planform = Planform(profile=profile, width_mm=w, length_mm=length)
    lip = _lip(spec, length)
    r_edge = spec.planform.edge_radius
    _check_edge_radius(spec, planform)
    transition: Transition | None = None
    spigot = 0.0
    out = spec.outlet
    if isinstance(out, RoundOutlet | RectOutlet):
        transition = _transition(spec, out, lip, drop)
        spigot = out.spigot_length
    else:
        assert isinstance(out, NoOutlet)

    return InletGeometry(
        name=spec.name,
        width_mm=w,
        depth_mm=d,
        planform=planform,
        floor=floor,
        lip=lip,
        transition=transition,
        edge_radius_mm=r_edge,
        skin_thickness_mm=spec.skin.thickness,
        spigot_length_mm=spigot,
        overcut_mm=spec.cutter.overcut,
    )


def _floor(spec: Spec, drop: float) -> Floor:
    """The ramp floor for ``drop`` (mm): the spec's angle or its length; at most
    :data:`MAX_LENGTH_MM` long."""
    r_entry = spec.ramp.entry_radius
    if spec.ramp.length is not None:
        angle = ramp_angle_for_length(spec.ramp.length, drop, r_entry)
    else:
        angle = spec.ramp.angle_deg if spec.ramp.angle_deg is not None else DEFAULT_RAMP_ANGLE_DEG
    floor = Floor(angle_deg=angle, entry_radius_mm=r_entry, drop_mm=drop)
    length = floor.length_mm
    if length > MAX_LENGTH_MM:
        key, value = (
            ("ramp.angle_deg", angle) if spec.ramp.length is None else ("ramp.length", length)
        )
        raise SpecError(
            key,
            value,
            f"a ramp at most {MAX_LENGTH_MM:.0f} mm long (this one: {length:.0f} mm)",
            "20 m is beyond any vehicle panel: a steeper ramp or a smaller throat",
        )
    return floor


def _lip(spec: Spec, length: float) -> Lip:
    """The lip at the ramp's end ``length`` (mm), its fairing and nose checked."""
    lip_t = spec.lip.thickness
    if spec.lip.style == "raised":
        fairing = spec.lip.fairing_length if spec.lip.fairing_length is not None else 6.0 * lip_t
    else:
        if spec.lip.fairing_length is not None:
            raise SpecError(
                "lip.fairing_length",
                spec.lip.fairing_length,
                "only with lip.style = 'raised'",
                "a flush lip has no fairing: its top is the skin",
            )
        fairing = 0.0
    lip = Lip(spec.lip.style, lip_t, spec.lip.nose_ratio, length, fairing)
    if lip.semi_major_mm > 0.5 * length:
        raise SpecError(
            "lip.nose_ratio",
            spec.lip.nose_ratio,
            f"<= {length / lip_t:.2f} for this lip",
            "the elliptical nose would be longer than half the ramp",
        )
    return lip


def _check_edge_radius(spec: Spec, planform: Planform) -> None:
    """The edge round must fit the throat, the apex and (flush lip) the lip (mm)."""
    r_edge, d, lip_t = spec.planform.edge_radius, spec.throat.depth, spec.lip.thickness
    if r_edge <= 0:
        return
    # flush lip: the nose cut through a round larger than ~0.6 t was measured to fail
    lip_limit = 0.6 * lip_t if spec.lip.style == "flush" else d / 2.0
    limit = min(d / 2.0, planform.apex_width_mm / 2.0, lip_limit)
    if r_edge > limit:
        raise SpecError(
            "planform.edge_radius",
            r_edge,
            f"<= {limit:.2f} mm",
            "the round must fit in half the throat depth, half the apex width "
            "and (flush lip) 0.6 x the lip thickness",
        )


def _transition(spec: Spec, out: RoundOutlet | RectOutlet, lip: Lip, drop: float) -> Transition:
    """The rectangle-to-outlet transition behind the lip (mm), roof-aligned but low enough
    that the insert's wall over the duct clears the skin; refused when it is a step."""
    roof = lip.roof_z_mm
    top = min(roof, -(spec.skin.thickness + spec.insert.wall))
    if isinstance(out, RoundOutlet):
        ow = oh = out.diameter
    else:
        ow, oh = out.width, out.height
    transition = Transition(
        x_start_mm=lip.nose_end_mm,
        length_mm=out.transition_length,
        width_mm=spec.throat.width,
        roof_z_mm=roof,
        floor_z_mm=-drop,
        kind=out.kind,
        outlet_width_mm=ow,
        outlet_height_mm=oh,
        outlet_top_z_mm=top,
    )
    # the insert's wall over a sloping duct is thickened by √(1 + slope²) to stay square
    # to the steepest ruling; lower the outlet until that wall clears the skin too
    for _ in range(2):
        wall = spec.insert.wall * transition.ruling_stretch
        top = min(roof, -(spec.skin.thickness + wall))
        transition = dataclasses.replace(transition, outlet_top_z_mm=top)
    half = abs(transition.equivalent_cone_half_angle_deg)
    if half > 30.0:
        raise SpecError(
            "outlet.transition_length",
            out.transition_length,
            f">= {min_transition_length_mm(transition):.0f} mm for this outlet",
            f"equivalent-cone half-angle {half:.1f}° > 30°: "
            "the duct would be a sudden step, not a transition",
        )
    return transition
