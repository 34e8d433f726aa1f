"""``report.json``: the numbers behind a build, assembled here and only here.

Keys carry their units (``_mm``, ``_deg``, ``_m_s``...): mm and degrees under
``geometry``, SI under ``flow``. Only values this build actually computed are written;
nothing is null-filled with guesses. Sections: ``geometry`` (the design and the measured
solids), ``flow`` (when the spec has ``[flow]``), ``print`` (when the insert or plug was
built), ``warnings`` and ``files``.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from typing import Any, NamedTuple

import numpy as np

from ductgen.design import Design
from ductgen.design.identity import design_sha256
from ductgen.design.record import SkinRecord, TemplateRecord
from ductgen.errors import DesignWarning
from ductgen.flow.record import FlowRecord
from ductgen.flow.stall import steepest_wall_report
from ductgen.geometry.inlet import InletGeometry
from ductgen.solids.results import InsertPiece, Mesh, SolidResult
from ductgen.spec.model import Spec

__all__ = [
    "BuildRecord",
    "InsertSplit",
    "MeshChecks",
    "flow_report",
    "geometry_section",
    "mesh_checks",
    "report_bytes",
    "split_plan",
    "start_record",
]


@dataclass(frozen=True)
class InsertSplit:
    """Where the insert must be split to fit the printer's bed: stations along the flow
    (x, mm) and the axis it stands on (``"+z"``, ``"-x"``...)."""

    stations_x_mm: tuple[float, ...]
    up: str


@dataclass
class BuildRecord:
    """Everything a build computed, typed where later stages read it; ``report.json`` is
    :meth:`to_report` of this, serialised once at the end of the build.

    Attributes:
        name, spec_sha256, design_sha256, ductgen_version: the header (the design's hash:
            :func:`~ductgen.design.identity.design_sha256`, what the template prints).
        geometry: the ``geometry`` section without its ``skin`` (mm, deg, mm², mm³).
        skin: ``geometry.skin``: the skin, the datum, the outlet's point and axis (mm).
        template: ``template``: how the template is developed.
        flow: the ``flow`` section (SI) and its typed numbers, None without ``[flow]``.
        parts: the ``print`` section's mesh checks of the insert and the plug's layup
            facts, None when neither was built.
        bed: ``print.bed`` (without the insert's pieces), None when no part was meshed.
        insert_up: the axis the insert stands on to print (None: no insert mesh).
        split: where the insert is split to fit the bed, None when it fits (or no station
            set fits).
        warnings: every warning so far (output encoders add theirs).
        panel_cut: ``geometry.skin.panel``, the cut panel's volumes (mm³), when made.
        pieces: the split insert's pieces, when split.
        files: output kind → file name.
        jig: ``jig``: the conformal marking jig's facts (mm), when made.
        not_made: ``not_made``: output kind → why it was not made for this spec.
        cfd: ``cfd``: the CFD cross-check's section, added after the build by
            :func:`ductgen.cfd.cfd_for_build`.
    """

    name: str
    spec_sha256: str
    design_sha256: str | None
    ductgen_version: str
    geometry: dict[str, Any]
    skin: SkinRecord
    template: TemplateRecord
    flow: FlowRecord | None
    parts: dict[str, Any] | None
    bed: dict[str, Any] | None
    insert_up: str | None
    split: InsertSplit | None
    warnings: list[DesignWarning]
    panel_cut: dict[str, Any] | None = None
    pieces: list[InsertPiece] = field(default_factory=list)
    files: dict[str, str] = field(default_factory=dict)
    jig: dict[str, Any] | None = None
    not_made: dict[str, str] = field(default_factory=dict)
    cfd: dict[str, Any] | None = None

    def to_report(self) -> dict[str, Any]:
        """The ``report.json`` document (sections in their written order)."""
        skin = dict(self.skin.section)
        if self.panel_cut is not None:
            skin["panel"] = self.panel_cut
        report: dict[str, Any] = {
            "name": self.name,
            "spec_sha256": self.spec_sha256,
            "design_sha256": self.design_sha256,
            "ductgen_version": self.ductgen_version,
            "geometry": {**self.geometry, "skin": skin},
            "template": self.template.section(),
        }
        if self.flow is not None:
            report["flow"] = self.flow.section
        section = None if self.parts is None else dict(self.parts)
        if self.bed is not None:
            bed = dict(self.bed)
            if self.pieces:
                bed["insert"] = {**bed["insert"], "pieces": [p.as_dict() for p in self.pieces]}
            section = {**(section or {}), "bed": bed}
        if section is not None:
            report["print"] = section
        if self.jig is not None:
            report["jig"] = self.jig
        if self.not_made:
            report["not_made"] = dict(self.not_made)
        report["warnings"] = [w.to_dict() for w in self.warnings]
        report["files"] = dict(self.files)
        if self.cfd is not None:
            report["cfd"] = self.cfd
        return report


def geometry_section(g: InletGeometry, solids: dict[str, SolidResult]) -> dict[str, Any]:
    """The ``geometry`` section from the pure geometry and the measured solids."""
    pf, fl = g.planform, g.floor
    geo: dict[str, Any] = {
        "throat_width_mm": g.width_mm,
        "throat_depth_mm": g.depth_mm,
        "throat_area_mm2": g.throat_area_mm2,
        "ramp_angle_deg": fl.angle_deg,
        "ramp_length_mm": g.length_mm,
        "ramp_entry_radius_mm": fl.entry_radius_mm,
        "floor_drop_mm": g.drop_mm,
        "apex_width_mm": pf.apex_width_mm,
        "max_wall_divergence_deg": pf.max_divergence_deg,
        "edge_radius_mm": g.edge_radius_mm,
        "lip_style": g.lip.style,
        "lip_thickness_mm": g.lip.thickness_mm,
        "lip_nose_length_mm": g.lip.semi_major_mm,
        "ramp_cavity_volume_mm3": g.ramp_cavity_volume_mm3,
        "profile": pf.profile.name,
        "profile_source": pf.profile.source,
    }
    if g.transition is not None:
        t = g.transition
        geo["transition"] = {
            "outlet_kind": t.kind,
            "length_mm": t.length_mm,
            "outlet_area_mm2": t.outlet_area_mm2,
            "area_ratio": t.area_ratio,
            "equivalent_cone_half_angle_deg": t.equivalent_cone_half_angle_deg,
            "equivalent_cone_included_angle_deg": 2.0 * t.equivalent_cone_half_angle_deg,
            "outlet_x_mm": t.x_end_mm,
            "outlet_centre_z_mm": t.outlet_centre_z_mm,
        }
    for kind, m in solids.items():
        geo[f"{kind}_volume_mm3"] = m.volume_mm3
        if m.wetted_area_mm2 is not None:
            geo["wetted_area_mm2"] = m.wetted_area_mm2
    geo["offsets"] = g.offsets()
    return geo


def _print_mesh(d: Design, mesh: Mesh) -> tuple[Any, Any]:
    """A part's mesh in the frame its print orientation is judged in: model coordinates,
    except on the user's panel (arbitrary pose), where it is the datum's frame (x along the
    flow, z out of the panel), as on the analytic skins."""
    frame = d.panel_frame
    verts, faces = mesh
    return (verts if frame is None else frame.to_local(verts)), faces


#: How far inside a surface bezel's feathered band the wall check stops (mm): covers the
#: bezel's own height across a sloping skin; the bezel there is still full thickness.
FEATHER_CHECK_MARGIN_MM = 0.5


def _feathered_band(d: Design) -> tuple[np.ndarray, str] | None:
    """For a surface bezel with a feathered edge: the plan polygon inside which the insert's
    walls are judged, and the report's words on what lies outside it; else None."""
    from ductgen.geometry.fabrication import bezel_land_mm, feather_inner_edge

    ins = d.fab.insert
    inner = feather_inner_edge(d.geometry, ins, FEATHER_CHECK_MARGIN_MM)
    if inner is None:
        return None
    # into the print mesh's frame (_print_mesh): the plan line carried onto the skin, whose
    # x, y move from the plan's by millimetres on a curved skin
    on_skin = d.skin.to_model(np.column_stack([inner, np.zeros(len(inner))]))
    frame = d.panel_frame
    inner = (on_skin if frame is None else frame.to_local(on_skin))[:, :2]
    words = (
        f"the surface bezel's outer {ins.feather_width + FEATHER_CHECK_MARGIN_MM:g} mm, "
        f"feathered by design from {ins.bezel_thickness:g} mm to a "
        f"{bezel_land_mm(ins):g} mm land at its edge"
    )
    return inner, words


def _print_section(
    spec: Spec, d: Design, solids: dict[str, SolidResult]
) -> tuple[dict[str, Any] | None, list[DesignWarning]]:
    """``print`` section from the insert mesh, and the plug's layup facts."""
    from ductgen.printability import plug_section, print_section

    warnings: list[DesignWarning] = []
    section: dict[str, Any] | None = None
    ins = spec.insert
    if "insert" in solids:
        verts, faces = _print_mesh(d, solids["insert"].mesh)
        section, warns = print_section(
            verts,
            faces,
            ins.material,
            ins.near_heat,
            ins.service_temperature,
            _feathered_band(d),
        )
        warnings += warns
    if "plug" in solids:
        plug, warns = plug_section(d.fab.plug, d.geometry.edge_radius_mm)
        section = {**(section or {}), "plug": plug}
        warnings += warns
    return section, warnings


def _bed_section(
    spec: Spec, d: Design, solids: dict[str, SolidResult]
) -> tuple[dict[str, Any] | None, list[DesignWarning], str | None, InsertSplit | None]:
    """``print.bed``: does each printed part fit ``[print] bed`` in its suggested
    orientation; where the insert does not, the stations of a keyed split across the flow
    (estimate from the mesh; the pieces themselves: :func:`ductgen.solids.split.split_for_bed`).
    Also the axis the insert stands on and its split (None when it fits)."""
    from ductgen.printability import overhang_by_orientation
    from ductgen.solids.bed import bed_fit, estimate_stations

    warnings: list[DesignWarning] = []
    bed = spec.print.bed
    section: dict[str, Any] = {"bed_mm": list(bed)}
    insert_up: str | None = None
    split: InsertSplit | None = None
    for kind in ("insert", "plug"):
        if kind not in solids:
            continue
        verts, faces = _print_mesh(d, solids[kind].mesh)
        over = overhang_by_orientation(verts, faces)
        up = min(over, key=over.__getitem__)
        fit = bed_fit(verts, bed, up)
        entry = fit.as_dict()
        if kind == "insert":
            insert_up = up
        if kind == "insert" and not fit.fits:
            xs = estimate_stations(verts, bed, up)
            entry["split_stations_x_mm"] = xs
            split = InsertSplit(tuple(xs), up) if xs else None
            more = (
                f"split it across the flow at x = {', '.join(f'{x:.1f}' for x in xs)} mm "
                f"into {len(xs) + 1} keyed pieces"
                if xs
                else "it does not fit even in 8 pieces across the flow"
            )
            warnings.append(
                DesignWarning(
                    "print_exceeds_bed",
                    f"the insert ({' x '.join(f'{s:.0f}' for s in fit.size_mm)} mm standing "
                    f"{up}) does not fit the {' x '.join(f'{b:.0f}' for b in bed)} mm bed: " + more,
                )
            )
        if kind == "plug" and not fit.fits:
            warnings.append(
                DesignWarning(
                    "plug_exceeds_bed",
                    "the plug does not fit the printer bed: make it in one piece (CNC-cut "
                    "foam or tooling board), since a printed plug's joints print through "
                    "the laminate (common practice)",
                )
            )
        section[kind] = entry
    return (section if len(section) > 1 else None), warnings, insert_up, split


class MeshChecks(NamedTuple):
    """What the record takes from the solids' meshes (:func:`mesh_checks`): the ``print``
    section, ``print.bed``, their warnings, the axis the insert stands on and its split."""

    parts: dict[str, Any] | None
    bed: dict[str, Any] | None
    warnings: list[DesignWarning]
    insert_up: str | None
    split: InsertSplit | None


def mesh_checks(spec: Spec, d: Design, solids: dict[str, SolidResult]) -> MeshChecks:
    """The print checks (thinnest wall, overhangs, mesh health, material) and the bed fit
    of the solids' meshes: they read only the meshes, the design and the spec's ``[insert]``
    material keys and ``[print] bed``, so a build of the same solids may take them from the
    solid cache (:meth:`~ductgen.pipeline.solid_cache.SolidStage.mesh_checks`)."""
    parts, print_warnings = _print_section(spec, d, solids)
    bed, bed_warnings, insert_up, split = _bed_section(spec, d, solids)
    return MeshChecks(parts, bed, print_warnings + bed_warnings, insert_up, split)


def split_plan(spec: Spec, d: Design, solids: dict[str, SolidResult]) -> InsertSplit | None:
    """Where the insert will be split to fit the bed: the record's ``split``
    (:func:`start_record`), from the insert's mesh alone, so a build can start the split
    before the rest of the record is made."""
    return _bed_section(spec, d, {k: v for k, v in solids.items() if k == "insert"})[3]


def _skin_section(d: Design) -> dict[str, Any]:
    """The skin, the installation datum, and where the straight outlet points (mm)."""
    out: dict[str, Any] = dict(d.skin_summary)
    out["datum"] = "ramp start on the centreline; u along the flow, v across, w outward"
    if d.placement.outlet_point is not None:
        out["outlet_point_mm"] = list(d.placement.outlet_point)
        out["outlet_axis"] = list(d.placement.outlet_axis or ())
    return out


def flow_report(spec: Spec, d: Design) -> tuple[dict[str, Any], list[DesignWarning]]:
    """The ``flow`` section and its warnings (needs no solids: ``bench/compare_reports.py
    --refresh-flow`` uses it to refresh the stored references' flow numbers alone)."""
    from ductgen.flow.report import flow_section

    assert spec.flow is not None
    section, warnings = flow_section(spec.flow, d.duct)
    if spec.skin.shape != "flat":
        section["curvature_note"] = (
            "the skin's curvature is not turned into a pressure gradient by ductgen: the "
            "boundary layer is the flat-plate estimate over the run length along the surface "
            "unless flow.inlet_cp and flow.inlet_cp_gradient_per_m give the surface pressure "
            "(then Head's method)"
        )
    return section, warnings


def start_record(
    spec: Spec,
    d: Design,
    solids: dict[str, SolidResult],
    spec_sha256: str,
    version: str,
    checks: MeshChecks | None = None,
) -> BuildRecord:
    """Every computed section of the report and the warnings so far (the design's, the flow
    model's, the printability check's); the build adds the panel cut, the insert's pieces,
    the encoders' warnings and the files. ``checks``: :func:`mesh_checks` of ``solids``, if
    made already."""
    geometry = geometry_section(d.geometry, solids)
    if "transition" in geometry:
        geometry["transition"].update(steepest_wall_report(d.duct))
    warnings = list(d.warnings)
    flow: FlowRecord | None = None
    if spec.flow is not None:
        section, flow_warnings = flow_report(spec, d)
        flow = FlowRecord.of_section(section)
        warnings += flow_warnings
    parts, bed, mesh_warnings, insert_up, split = checks or mesh_checks(spec, d, solids)
    warnings += mesh_warnings
    return BuildRecord(
        name=spec.name,
        spec_sha256=spec_sha256,
        design_sha256=design_sha256(d),
        ductgen_version=version,
        geometry=geometry,
        skin=SkinRecord.of_section(_skin_section(d)),
        template=TemplateRecord(
            "exact" if d.development.exact else "least-distortion (LSCM + ARAP)",
            d.development.max_length_distortion_pct,
        ),
        flow=flow,
        parts=parts,
        bed=bed,
        insert_up=insert_up,
        split=split,
        warnings=warnings,
    )


def report_bytes(report: dict[str, Any]) -> bytes:
    """Serialise a report as indented UTF-8 JSON."""

    def default(o: Any) -> Any:
        if isinstance(o, DesignWarning):
            return o.to_dict()
        if hasattr(o, "tolist"):
            return o.tolist()
        raise TypeError(f"not JSON-serialisable: {type(o).__name__}")

    return (json.dumps(report, indent=2, default=default, allow_nan=False) + "\n").encode()
