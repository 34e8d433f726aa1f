"""The boundary layer the flow model uses: the flat plate, or Head's method along a Cp gradient.

``flow.inlet_cp_gradient_per_m`` switches from the flat-plate layer
(:mod:`ductgen.flow.boundary_layer`) to Head's entrainment method along a linear Cp
(:mod:`ductgen.flow.head_method`); this module reads the spec's keys, checks them, and writes
the report's boundary-layer keys (SI).
"""

from __future__ import annotations

import functools
from typing import Any

from ductgen.errors import DesignWarning, SpecError
from ductgen.flow.atmosphere import Air
from ductgen.flow.boundary_layer import BoundaryLayer
from ductgen.flow.head_method import HEAD_SOURCE, SEPARATION_H, HeadLayer, head_layer
from ductgen.spec.flow import FlowSpec

__all__ = [
    "CP_RANGE",
    "FLAT_PLATE_METHOD",
    "check_inlet_cp_gradient",
    "gradient_layer",
    "layer_keys",
    "model_thickness_m",
]

#: The range of ``flow.inlet_cp`` (spec), which the run's start must respect too.
CP_RANGE = (-3.0, 0.9)
FLAT_PLATE_METHOD = "turbulent flat plate, delta = 0.37 x Re^-1/5, 1/7-power profile (Schlichting)"


@functools.lru_cache(maxsize=64)
def _head(speed: float, run: float, nu: float, cp: float, gradient: float) -> HeadLayer:
    return head_layer(speed, run, nu, cp, gradient)


def gradient_layer(flow: FlowSpec, air: Air) -> HeadLayer | None:
    """Head's layer at the ramp start when ``flow.inlet_cp_gradient_per_m`` is given."""
    g = flow.inlet_cp_gradient_per_m
    if g is None:
        return None
    return _head(flow.speed, flow.run_length, air.kinematic_viscosity_m2_s, flow.inlet_cp, g)


def model_thickness_m(flow: FlowSpec, air: Air, flat: BoundaryLayer) -> float:
    """δ the recovery model is given (m): Head's 8·δ* with a Cp gradient, else the flat
    plate's."""
    head = gradient_layer(flow, air)
    return flat.thickness_m if head is None else head.thickness_m


def check_inlet_cp_gradient(flow: FlowSpec) -> None:
    """Refuse a Cp gradient that puts the run's start outside the range ``inlet_cp`` allows.

    Raises:
        SpecError: on ``flow.inlet_cp_gradient_per_m``, with the range that keeps the start's
            Cp in [-3, 0.9] (the range of ``flow.inlet_cp``).
    """
    g = flow.inlet_cp_gradient_per_m
    if g is None:
        return
    start = flow.inlet_cp - g * flow.run_length
    if not CP_RANGE[0] <= start <= CP_RANGE[1]:
        lo = (flow.inlet_cp - CP_RANGE[1]) / flow.run_length
        hi = (flow.inlet_cp - CP_RANGE[0]) / flow.run_length
        raise SpecError(
            "flow.inlet_cp_gradient_per_m",
            f"{g:g} 1/m",
            f"{lo:.4g} to {hi:.4g} 1/m with this inlet_cp and run_length",
            f"Cp at the run's start would be {start:.3g}, outside {CP_RANGE[0]:g} to "
            f"{CP_RANGE[1]:g} (the range of flow.inlet_cp; at 1 the air stands still)",
        )


def layer_keys(
    flow: FlowSpec, air: Air, flat: BoundaryLayer, depth_m: float
) -> tuple[dict[str, Any], float, float, list[DesignWarning]]:
    """The report's boundary-layer keys, the δ/D and δ (m) the ``boundary_layer_thick``
    warning judges, and the warnings of Head's method.

    Without a gradient δ/D is the larger of the flat plate's two estimates (0.37 Re^-1/5 and
    White's); with one it is Head's, and the flat plate's values are kept beside it.
    """
    d_white = flat.thickness_white_m / depth_m
    keys: dict[str, Any] = {
        "run_length_m": flat.run_length_m,
        "reynolds_run": flat.reynolds,
        "boundary_layer_thickness_white_m": flat.thickness_white_m,
        "delta_over_depth_white": d_white,
    }
    head = gradient_layer(flow, air)
    if head is None:
        d = flat.thickness_m / depth_m
        keys.update(_flat_keys(flat, d, max(d, d_white)))
        return keys, max(d, d_white), max(flat.thickness_m, flat.thickness_white_m), []
    d = head.thickness_m / depth_m
    keys.update(_head_keys(flow, flat, head, d))
    return keys, d, head.thickness_m, _head_warnings(flow, head)


def _flat_keys(flat: BoundaryLayer, d: float, d_max: float) -> dict[str, Any]:
    """The flat plate's method, thicknesses (m) and δ/D keys (``d``; ``d_max`` the larger of
    it and White's)."""
    return {
        "boundary_layer_method": FLAT_PLATE_METHOD,
        "boundary_layer_thickness_m": flat.thickness_m,
        "displacement_thickness_m": flat.displacement_thickness_m,
        "momentum_thickness_m": flat.momentum_thickness_m,
        "delta_over_depth": d,
        "delta_over_depth_max": d_max,
    }


def _head_keys(flow: FlowSpec, flat: BoundaryLayer, head: HeadLayer, d: float) -> dict[str, Any]:
    """Head's method, thicknesses (m), δ/D (``d``) and the ``boundary_layer_gradient`` block
    (Cp, 1/m, m/s, m), the flat plate's δ (m) kept beside it."""
    return {
        "boundary_layer_method": HEAD_SOURCE,
        "boundary_layer_thickness_m": head.thickness_m,
        "displacement_thickness_m": head.displacement_thickness_m,
        "momentum_thickness_m": head.momentum_thickness_m,
        "delta_over_depth": d,
        "delta_over_depth_max": d,
        "boundary_layer_gradient": {
            "inlet_cp_gradient_per_m": flow.inlet_cp_gradient_per_m,
            "cp_at_run_start": flow.inlet_cp
            - (flow.inlet_cp_gradient_per_m or 0.0) * flow.run_length,
            "cp_at_inlet": flow.inlet_cp,
            "edge_speed_m_s": head.edge_speed_m_s,
            "shape_factor": head.shape_factor,
            "skin_friction": head.skin_friction,
            "thickness_head_m": head.thickness_head_m,
            "flat_plate_thickness_m": flat.thickness_m,
            "separated": head.separated,
            "note": "delta given to the recovery model is 8 * delta* (the 1/7-power layer "
            "with Head's displacement thickness); delta_over_depth_max is Head's alone "
            "(White's flat-plate value is kept for comparison)",
        },
    }


def _head_warnings(flow: FlowSpec, head: HeadLayer) -> list[DesignWarning]:
    """``boundary_layer_separates`` when Head's shape factor passed the separation value."""
    if not head.separated:
        return []
    return [
        DesignWarning(
            "boundary_layer_separates",
            f"with dCp/dx = {flow.inlet_cp_gradient_per_m:g} /m the boundary layer's shape "
            f"factor passes H = {SEPARATION_H:g} before the ramp (Head's method): it is "
            "near separation and the inlet swallows stalled air; the values are those where "
            "it did - place the inlet where the pressure does not rise so steeply",
        )
    ]
