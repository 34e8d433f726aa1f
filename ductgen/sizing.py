"""``ductgen size``: the smallest throat that delivers a flow target.

This module sits above the geometry and the flow model: it composes a spec from both, so
neither of them has to know about the other. :func:`run_size` is the whole command (size,
optionally write a buildable spec); the CLI only parses options and prints.

At a fixed width-to-depth ratio W/D and ramp angle, the delivered volume flow of the
operating point (:mod:`ductgen.flow.operating_point`) is evaluated as a function of the
throat depth D, with everything else (lip, outlet, losses, flight condition) taken from a
base spec. D is scanned on a geometric grid and the first grid interval where the flow
reaches the target is refined with ``scipy.optimize.brentq``; W and D are then rounded *up*
to 0.01 mm so the written spec still meets the target.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from scipy.optimize import brentq

from ductgen.design.build import duct_shape, geometry_from_spec
from ductgen.errors import DesignWarning, SpecError
from ductgen.flow.operating_point import solve
from ductgen.flow.report import flow_section
from ductgen.flow.stall import steepest_wall
from ductgen.flow.system import build_system
from ductgen.flow.warnings import geometry_warnings
from ductgen.geometry.inlet import InletGeometry
from ductgen.geometry.profile import Profile, load_profile
from ductgen.spec.flow import FlowSpec, flow_data
from ductgen.spec.model import DEFAULT_RAMP_ANGLE_DEG, RampSpec, Spec, ThroatSpec

__all__ = [
    "MAX_IVR",
    "SizeRequest",
    "SizeResult",
    "delivered_flow",
    "run_size",
    "size_result_dict",
    "size_throat",
    "sized_spec_data",
    "spec_with_throat",
]

_D_MIN_MM = 0.5
#: Default upper limit of the inlet velocity ratio for sizing (common practice, no source:
#: a passive inlet should not need the air faster in its throat than in the free stream).
MAX_IVR = 1.0
_ROUND_MM = 0.01


@dataclass(frozen=True)
class SizeResult:
    """The sized inlet: its spec (buildable), geometry, flow section and warnings."""

    spec: Spec
    geometry: InletGeometry
    flow: dict[str, Any]
    warnings: list[DesignWarning]
    target_m3_s: float
    aspect: float
    limited_by: str = "flow"
    max_ivr: float = 1.0


def spec_with_throat(base: Spec, depth_mm: float, aspect: float, angle_deg: float) -> Spec:
    """``base`` with a throat ``depth_mm`` deep (mm), ``aspect`` times as wide, and a ramp at
    ``angle_deg`` (deg) whose length follows from the floor drop."""
    # values are already in internal units and in range: copy without re-validating (fast)
    throat = base.throat.model_copy(update={"width": aspect * depth_mm, "depth": depth_mm})
    ramp = base.ramp.model_copy(update={"angle_deg": angle_deg, "length": None})
    return base.model_copy(update={"throat": throat, "ramp": ramp})


def _limit(field: str, bound: str) -> float:
    """The spec's limit ``bound`` ("le" or "ge") of a throat dimension (mm)."""
    for m in ThroatSpec.model_fields[field].metadata:
        if getattr(m, bound, None) is not None:
            return float(getattr(m, bound))
    raise AssertionError(f"throat.{field} has no {bound} limit")  # pragma: no cover


def _upper(field: str) -> float:
    """The spec's upper limit of a throat dimension (mm)."""
    return _limit(field, "le")


def delivered_flow(spec: Spec, profile: Profile | None = None) -> float:
    """Delivered volume flow (m³/s) of a spec with a [flow] section; 0 when no flow balances
    or the geometry is impossible at this size (``profile``: the loaded wall table, reused)."""
    assert spec.flow is not None
    try:
        g = geometry_from_spec(spec, profile)
    except SpecError:
        return 0.0
    p = solve(build_system(spec.flow, duct_shape(g))[0])
    return float(p.volume_flow_m3_s) if p.found and p.volume_flow_m3_s else 0.0


def _base_spec(base: Spec | None, flow_m3_s: float, speed_m_s: float, name: str | None) -> Spec:
    if base is None:
        base = Spec.model_validate(
            {"name": name or "sized-inlet", "throat": {"width": 100, "depth": 25}}
        )
    if base.flow is None:
        flow = FlowSpec.model_validate(
            {"speed": f"{speed_m_s!r} m/s", "required_flow": f"{flow_m3_s!r} m^3/s"}
        )
    else:
        flow = base.flow.model_copy(update={"speed": speed_m_s, "required_flow": flow_m3_s})
    upd: dict[str, Any] = {"flow": flow}
    if name:
        upd["name"] = name
    return base.model_copy(update=upd)


def _depth_for_ivr(
    q_of: Callable[[float], float],
    ivr_of: Callable[[float, float], float],
    grid: np.ndarray,
    qs: list[float],
    depth: float,
    max_ivr: float,
    d_max: float,
) -> float:
    """The depth (mm) above ``depth`` where the inlet velocity ratio falls to ``max_ivr``
    (bracketed on ``grid``, where the flows are ``qs``, then Brent's method); ``d_max`` the
    deepest throat tried (mm)."""
    excess = [ivr_of(d, q) - max_ivr for d, q in zip(grid, qs, strict=True)]
    j = next((i for i, e in enumerate(excess) if grid[i] > depth and e <= 0), None)
    if j is None:
        raise SpecError(
            "--max-ivr",
            max_ivr,
            "a larger limit",
            f"no throat up to {d_max:g} mm keeps IVR below it",
        )
    lo = max(depth, float(grid[j - 1]))
    return float(brentq(lambda d: ivr_of(d, q_of(d)) - max_ivr, lo, grid[j], xtol=1e-6))


def _check_not_below_smallest(
    q_of: Callable[[float], float], depth: float, aspect: float, flow_m3_s: float
) -> None:
    """Raise :class:`SpecError` when ``depth`` (mm) is below the smallest throat the spec
    builds at W/D ``aspect``: that throat already delivers more than ``flow_m3_s``."""
    d_min = max(_limit("depth", "ge"), _limit("width", "ge") / aspect)
    if depth < d_min:  # a throat below the spec's smallest would not build
        q_min = q_of(d_min)
        raise SpecError(
            "--flow",
            flow_m3_s,
            f">= {q_min:.3g} m^3/s for this speed and system",
            f"the smallest throat ductgen builds ({aspect * d_min:g} x {d_min:g} mm at W/D "
            f"{aspect:g}) already delivers {q_min:.3g} m^3/s; a smaller flow needs no sizing",
        )


def size_throat(
    flow_m3_s: float,
    speed_m_s: float,
    *,
    aspect: float = 4.0,
    angle_deg: float = DEFAULT_RAMP_ANGLE_DEG,
    base: Spec | None = None,
    name: str | None = None,
    max_ivr: float = MAX_IVR,
) -> SizeResult:
    """Smallest throat at W/D = ``aspect`` delivering ``flow_m3_s`` at ``speed_m_s``.

    Args:
        flow_m3_s: target volume flow (m³/s), > 0.
        speed_m_s: vehicle speed (m/s), > 0.
        aspect: width-to-depth ratio W/D.
        angle_deg: ramp angle (deg).
        base: spec giving everything else (lip, outlet, [flow] losses...); None = defaults,
            no outlet and no losses.
        name: spec name of the result.
        max_ivr: largest inlet velocity ratio accepted. A throat so small that the air must
            be faster in it than in the free stream delivers the flow only on paper (the
            1-D balance lets the diffuser pay it back); when this limit binds, the throat is
            enlarged until IVR = ``max_ivr`` and delivers more than the target.

    Raises:
        SpecError: bad arguments, or no throat up to the spec's size limits delivers the flow.
    """
    _check_args(flow_m3_s, speed_m_s, aspect, angle_deg, max_ivr)
    spec0 = _base_spec(base, flow_m3_s, speed_m_s, name)
    d_max = min(_upper("depth"), _upper("width") / aspect)
    grid = np.geomspace(_D_MIN_MM, d_max, 48)
    profile = load_profile(spec0.planform.profile)

    def q_of(d: float) -> float:
        return delivered_flow(spec_with_throat(spec0, float(d), aspect, angle_deg), profile)

    def ivr_of(d: float, q: float) -> float:
        return q / (aspect * d * d * 1e-6 * speed_m_s)  # throat area in m², d in mm

    qs = [q_of(d) for d in grid]
    depth = _depth_for_flow(q_of, grid, qs, flow_m3_s, d_max)
    limited_by = "flow"
    if ivr_of(depth, q_of(depth)) > max_ivr:
        limited_by = "ivr"
        depth = _depth_for_ivr(q_of, ivr_of, grid, qs, depth, max_ivr, d_max)
    _check_not_below_smallest(q_of, depth, aspect, flow_m3_s)
    spec = _rounded_spec(spec0, depth, aspect, angle_deg)
    return _result(spec, flow_m3_s, aspect, limited_by, max_ivr)


def _result(
    spec: Spec, flow_m3_s: float, aspect: float, limited_by: str, max_ivr: float
) -> SizeResult:
    """The sized ``spec`` with its geometry, flow section and warnings; ``flow_m3_s`` the
    target (m³/s), ``limited_by`` ``"flow"`` or ``"ivr"``."""
    g = geometry_from_spec(spec)
    assert spec.flow is not None
    shape = duct_shape(g)
    section, warnings = flow_section(spec.flow, shape)
    return SizeResult(
        spec=spec,
        geometry=g,
        flow=section,
        warnings=geometry_warnings(shape) + warnings,
        target_m3_s=flow_m3_s,
        aspect=aspect,
        limited_by=limited_by,
        max_ivr=max_ivr,
    )


def _check_args(
    flow_m3_s: float, speed_m_s: float, aspect: float, angle_deg: float, max_ivr: float
) -> None:
    """Refuse sizing arguments out of range, every one at once (SpecError, exit 2)."""
    checks = [
        ("--flow", flow_m3_s, "> 0 m^3/s", flow_m3_s > 0),
        ("--speed", speed_m_s, "> 0 and <= 400 m/s", 0 < speed_m_s <= 400),
        ("--aspect", aspect, "0.2 to 50", 0.2 <= aspect <= 50),
        ("--angle", angle_deg, "> 0 and < 30 deg", 0 < angle_deg < 30),
        ("--max-ivr", max_ivr, "0.1 to 3", 0.1 <= max_ivr <= 3),
    ]
    bad = [(k, v, a, "sizing input") for k, v, a, ok in checks if not (ok and math.isfinite(v))]
    if bad:
        raise SpecError.many(bad)


def _depth_for_flow(
    q_of: Callable[[float], float],
    grid: np.ndarray,
    qs: list[float],
    flow_m3_s: float,
    d_max: float,
) -> float:
    """The smallest depth (mm) on or between the ``grid`` depths (up to ``d_max``)
    delivering ``flow_m3_s`` (``qs`` the flows at the grid's depths); SpecError when none
    does."""
    hit = next((i for i, q in enumerate(qs) if q >= flow_m3_s), None)
    if hit is None:
        raise SpecError(
            "--flow",
            flow_m3_s,
            f"<= {max(qs):.4g} m^3/s for this speed and system",
            f"no throat up to {d_max:g} mm deep delivers it: the losses behind the inlet or the "
            "speed limit the flow",
        )
    if hit == 0:
        return float(grid[0])
    return float(brentq(lambda d: q_of(d) - flow_m3_s, grid[hit - 1], grid[hit], xtol=1e-6))


def _rounded_spec(spec0: Spec, depth: float, aspect: float, angle_deg: float) -> Spec:
    """``spec0`` with the throat rounded up to the sizing step and the ramp at ``angle_deg``."""
    depth = math.ceil(depth / _ROUND_MM - 1e-9) * _ROUND_MM
    width = math.ceil(aspect * depth / _ROUND_MM - 1e-9) * _ROUND_MM
    throat = ThroatSpec(width=round(width, 6), depth=round(depth, 6))
    ramp = RampSpec(angle_deg=angle_deg, length=None, entry_radius=spec0.ramp.entry_radius)
    return spec0.model_copy(update={"throat": throat, "ramp": ramp})


def size_result_dict(r: SizeResult, spec_file: Path | None = None) -> dict[str, Any]:
    """The sizing result with report.json key names (geometry keys at the top level), and
    ``spec_file`` when the sized spec was written there."""
    g = r.geometry
    out: dict[str, Any] = {
        "name": r.spec.name,
        "throat_width_mm": g.width_mm,
        "throat_depth_mm": g.depth_mm,
        "throat_area_mm2": g.throat_area_mm2,
        "aspect_ratio": g.width_mm / g.depth_mm,
        "ramp_angle_deg": g.floor.angle_deg,
        "ramp_length_mm": g.length_mm,
        "floor_drop_mm": g.drop_mm,
        "required_flow_m3_s": r.target_m3_s,
        "max_inlet_velocity_ratio": r.max_ivr,
        "size_limited_by": r.limited_by,
        "flow": r.flow,
        "warnings": [w.to_dict() for w in r.warnings],
    }
    wall = steepest_wall(duct_shape(g))
    if wall is not None and g.transition is not None:
        # the transition's steepest wall and the length that clears the stall line
        out = {**out, "transition": {"length_mm": g.transition.length_mm, **wall.report()}}
    if spec_file is not None:
        out["spec_file"] = str(spec_file)
    return out


def sized_spec_data(r: SizeResult, raw: dict[str, Any] | None = None) -> dict[str, Any]:
    """Plain spec data of the sized inlet: the base spec file's own sections (``raw``, units
    as the user wrote them) with throat, ramp and flow replaced; CSV paths made absolute."""
    s = r.spec
    data: dict[str, Any] = {k: v for k, v in (raw or {}).items()}
    data["name"] = s.name
    data["throat"] = {"width": s.throat.width, "depth": s.throat.depth}
    data["ramp"] = {"angle_deg": s.ramp.angle_deg, "entry_radius": s.ramp.entry_radius}
    if s.planform.profile.lower().endswith(".csv"):
        data["planform"] = {**data.get("planform", {}), "profile": s.planform.profile}
    assert s.flow is not None
    data["flow"] = flow_data(s.flow)
    order = ["name", "throat", "ramp", "planform", "lip", "outlet", "skin"]
    keys = [*(k for k in order if k in data), *(k for k in data if k not in order)]
    return {k: data[k] for k in keys}


@dataclass(frozen=True)
class SizeRequest:
    """What ``ductgen size`` was asked (quantities already in SI).

    Attributes:
        flow_m3_s: target volume flow (m³/s); speed_m_s: vehicle speed (m/s).
        aspect: W/D; angle_deg: ramp angle (deg); max_ivr: largest IVR accepted (None:
            :data:`MAX_IVR`).
        spec_path: base spec file (lip, outlet, [flow] losses...), or None.
        name: spec name of the result, or None.
        write_spec: path of a .toml/.json spec to write, or None; force: replace it.
        header: comment line(s) at the top of a written TOML spec.
    """

    flow_m3_s: float
    speed_m_s: float
    aspect: float = 4.0
    angle_deg: float = DEFAULT_RAMP_ANGLE_DEG
    max_ivr: float | None = None
    spec_path: Path | None = None
    name: str | None = None
    write_spec: Path | None = None
    force: bool = False
    header: str = ""


def run_size(req: SizeRequest) -> SizeResult:
    """Size the throat and, when asked, write a buildable spec of it (atomically) to
    ``req.write_spec``; returns the sized inlet (:func:`size_result_dict` is its JSON form).

    Raises:
        SpecError: bad input (nothing written); ExportError: the spec file exists.
    """
    from ductgen.atomic import check_free, write_atomic
    from ductgen.spec import load_spec, parse_spec, read_spec_data
    from ductgen.spec.write import SPEC_SUFFIXES, spec_text

    if req.write_spec is not None:
        if req.write_spec.suffix.lower() not in SPEC_SUFFIXES:
            raise SpecError(
                "--write-spec",
                str(req.write_spec),
                "a .toml or .json path",
                "the format follows the suffix",
            )
        check_free([req.write_spec], req.force)  # refuse before any work
    base = load_spec(req.spec_path) if req.spec_path is not None else None
    raw = read_spec_data(req.spec_path) if req.spec_path is not None else None
    result = size_throat(
        req.flow_m3_s,
        req.speed_m_s,
        aspect=req.aspect,
        angle_deg=req.angle_deg,
        base=base,
        name=req.name,
        max_ivr=MAX_IVR if req.max_ivr is None else req.max_ivr,
    )
    if req.write_spec is not None:
        data = sized_spec_data(result, raw)
        parse_spec(data, source="(sized spec)")  # it must load back as written
        text = spec_text(data, req.write_spec, req.header)
        write_atomic(req.write_spec, text.encode(), force=req.force)
    return result
