"""The CFD run's comparison with the 1-D model and its three-mesh study (Celik et al.'s
grid convergence index, :mod:`ductgen.cfd.gci`)."""

from __future__ import annotations

from typing import Any

from ductgen.cfd.case import REFINEMENT_RATIO
from ductgen.cfd.gci import gci
from ductgen.flow.record import FlowRecord

__all__ = ["ORDER_RANGE", "STUDY_KEYS", "compare_one_d", "gci_study"]

#: Quantities the mesh study extrapolates.
STUDY_KEYS = ("volume_flow_m3_s", "ram_recovery_flow_avg", "ram_recovery_area_avg")
#: Apparent orders trusted for a GCI (the schemes are first/second order; practice, no source).
ORDER_RANGE = (0.5, 3.0)


def compare_one_d(cfd: dict[str, Any], flow: FlowRecord) -> dict[str, Any]:
    """The 1-D model's numbers beside the CFD result, and their differences."""
    q1, r1 = flow.volume_flow_m3_s, flow.ram_recovery
    out: dict[str, Any] = {
        "volume_flow_m3_s": q1,
        "ram_recovery": r1,
        "inlet_velocity_ratio": flow.inlet_velocity_ratio,
        "kinetic_energy_factor": 1.0,  # the 1-D model assumes uniform flow everywhere
    }
    if flow.transition_k is not None:
        out["transition_k"] = flow.transition_k
        out["transition_k_by_method"] = flow.transition_k_by_method
    q, r = cfd.get("volume_flow_m3_s"), cfd.get("ram_recovery_flow_avg")
    if q is not None and q1:
        out["flow_difference"] = (q - q1) / q1
    if r is not None and r1 is not None:
        out["recovery_difference"] = r - r1
    return out


def gci_study(levels: list[dict[str, Any]]) -> dict[str, Any]:
    """GCI of each study quantity with Celik's representative cell size h = (V/N)^(1/3)
    from each mesh's cell count and volume, so the refinement ratios are the ones the
    meshes really have (prism-layer cells grow with the wall area, as r², not r³, so they
    come out below the nominal ratio)."""
    fine, medium, coarse = levels[2], levels[1], levels[0]
    h = [lv["representative_cell_m"] for lv in (fine, medium, coarse)]
    out: dict[str, Any] = {
        "method": "Celik et al. (2008), J. Fluids Eng. 130(7) 078001; h = (V/N)^(1/3)",
        "representative_cell_m": h,
        "cells": [lv["cells"] for lv in (fine, medium, coarse)],
        "refinement_ratio_nominal": REFINEMENT_RATIO,
        "refinement_ratio_from_cells": {
            "r21": h[1] / h[0],
            "r32": h[2] / h[1],
            "overall": (fine["cells"] / coarse["cells"]) ** (1.0 / 3.0),
        },
    }
    for key in STUDY_KEYS:
        vals = [fine[key], medium[key], coarse[key]]
        out[key] = gci(vals, h).to_dict()
        # with oscillatory convergence (or an order far from the schemes' nominal 1-2) the
        # GCI is not meaningful: seen here, apparent orders of 7 and 13 with GCIs of 0.04 %
        # while the meshes spread by 4 %. Then the spread of the three meshes is stated.
        g = out[key]
        g["range_rel"] = (max(vals) - min(vals)) / abs(fine[key]) if fine[key] else None
        p = g["order"]
        if (
            g["gci_fine"] is not None
            and not g["oscillatory"]
            and ORDER_RANGE[0] <= p <= ORDER_RANGE[1]
        ):
            g["uncertainty_rel"], g["uncertainty_basis"] = g["gci_fine"], "GCI (fine mesh)"
        else:
            g["uncertainty_rel"], g["uncertainty_basis"] = g["range_rel"], "range of three meshes"
    return out
