"""``report.json``: the numbers behind a build (brief §5).

Keys carry their units (``_mm``, ``_deg``, ``_m_s``...): mm and degrees under
``geometry``, SI under ``flow``. Only values this build actually computed are written;
nothing is null-filled with guesses.
"""

from __future__ import annotations

import json
from typing import Any

from ductgen.errors import DesignWarning
from ductgen.flow.inputs import DuctShape
from ductgen.geometry.inlet import InletGeometry

__all__ = ["duct_shape", "geometry_report", "report_bytes"]

#: Name of the bundled standard wall table (the spec's default profile).
_STANDARD_PROFILE = "naca-standard"


def duct_shape(g: InletGeometry) -> DuctShape:
    """The numbers the flow model needs from a built inlet (mm, mm², deg). The walls count
    as standard when their table has the bundled standard table's ordinates."""
    import numpy as np

    from ductgen.geometry.profile import load_profile

    t, pf, std = g.transition, g.planform.profile, load_profile(_STANDARD_PROFILE)
    same = pf.x.shape == std.x.shape and bool(
        np.allclose(pf.x, std.x, rtol=0, atol=1e-12)
        and np.allclose(pf.f, std.f, rtol=0, atol=1e-12)
    )
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
    )


def geometry_report(g: InletGeometry, solids: dict[str, dict[str, Any]]) -> dict[str, Any]:
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
        geo[f"{kind}_volume_mm3"] = m["volume_mm3"]
        if "wetted_area_mm2" in m:
            geo["wetted_area_mm2"] = m["wetted_area_mm2"]
    geo["offsets"] = g.offsets()
    return geo


def report_bytes(report: dict[str, Any]) -> bytes:
    """Serialise a report as indented UTF-8 JSON."""

    def default(o: Any) -> Any:
        if isinstance(o, DesignWarning):
            return o.to_dict()
        if hasattr(o, "tolist"):
            return o.tolist()
        raise TypeError(f"not JSON-serialisable: {type(o).__name__}")

    return (json.dumps(report, indent=2, default=default, allow_nan=False) + "\n").encode()
