"""Reading a finished case: flows, total pressures, the free-stream probe and y+, turned
into the numbers ``cfd.json`` reports (SI). One reference pressure for everything: the
ambient static pressure p = 0 held on the far-field boundaries, which is also the ambient
the outlet's duct-system curve works against; recovery is a fraction of the free-stream
dynamic pressure above it. The probe ahead of the inlet is reported as a check only.

At the transition's exit (a plane inside the domain, where the straight extension begins)
the flow is far from uniform. With ū = Q/A (A the outlet's area):

- kinetic-energy factor α = ∫½|u|² u·n dA / (½ ū³ A), from the flow-weighted averages of
  total and static pressure: α = 2 (p̄0_φ − p̄_φ) / ū²;
- momentum factor β = ∫u_x² dA / (ū² A) = ū_x,φ / ū;
- mixed-out state: the flow evened out in a constant-area duct without wall friction
  keeps its momentum, p_m A + ρ ū² A = ∫(p + ρ u_x²) dA, so p_m = p̄_A + ρ ū² (β − 1),
  and p0_m = p_m + ½ ρ ū² (the standard constant-area mixing analysis; textbook, recalled);
- the transition K as the 1-D model counts it: total pressure from the flow-averaged
  throat to the mixed-out exit, over ½ ρ (Q / A_small)², A_small the smaller of the throat
  and outlet areas.
"""

from __future__ import annotations

import re
import struct
from pathlib import Path
from typing import Any

__all__ = [
    "case_numbers",
    "cells_across_depth",
    "last_row",
    "layer_report",
    "mixed_out",
    "patch_values",
    "total_volume_m3",
]


def last_row(path: Path) -> dict[str, float]:
    """The last data row of an OpenFOAM ``.dat`` file, keyed by the header's column names;
    a vector column ``name`` ``(x y z)`` gives ``name_x``, ``name_y``, ``name_z``."""
    names: list[str] = []
    row: list[str] = []
    for line in path.read_text().splitlines():
        if line.startswith("# Time"):
            names = [c.strip() for c in line[1:].split("\t") if c.strip()]
        elif line.strip() and not line.startswith("#"):
            row = re.findall(r"\([^)]*\)|\S+", line)
    if not names or not row:
        raise ValueError(f"no data in {path}")
    out: dict[str, float] = {}
    for n, v in zip(names, row, strict=False):
        if n == "Time":
            continue
        if v.startswith("("):
            for axis, c in zip("xyz", v.strip("()").split(), strict=False):
                out[f"{n}_{axis}"] = float(c)
        else:
            out[n] = float(v)
    return out


def _post(case: Path, name: str, file: str = "surfaceFieldValue.dat") -> Path:
    paths = sorted((case / "postProcessing" / name).glob(f"*/{file}"))
    if not paths:
        raise ValueError(f"the solver wrote no {name} results in {case}")
    return paths[-1]


def _probe(case: Path, field: str) -> list[float]:
    text = _post(case, "freeStream", field).read_text()
    rows = [ln for ln in text.splitlines() if ln.strip() and not ln.startswith("#")]
    nums = re.findall(r"[-+0-9.eE]+", rows[-1])
    return [float(v) for v in nums[1:]]


def _yplus(case: Path) -> dict[str, dict[str, float]]:
    text = _post(case, "yPlus", "yPlus.dat").read_text()
    rows = [ln.split() for ln in text.splitlines() if ln.strip() and not ln.startswith("#")]
    last_t = rows[-1][0]
    return {
        r[1]: {"min": float(r[2]), "max": float(r[3]), "average": float(r[4])}
        for r in rows
        if r[0] == last_t
    }


def total_volume_m3(case: Path) -> float:
    """The mesh volume checkMesh reported (m³)."""
    m = re.search(r"Total volume = ([\d.eE+-]+)", (case / "log.checkMesh").read_text())
    if m is None:
        raise ValueError("checkMesh reported no total volume")
    return float(m.group(1).rstrip("."))  # the sentence's full stop follows the number


def mixed_out(
    q_m3_s: float,
    area_m2: float,
    p0_flow_avg: float,
    p_flow_avg: float,
    p_area_avg: float,
    ux_flow_avg: float,
) -> dict[str, float]:
    """α, β and the mixed-out static and total pressure of one plane (kinematic m²/s²,
    module doc); the inputs are the plane's flow Q (m³/s), area (m²), flow-weighted p0, p
    and u_x, and area-averaged p."""
    u = q_m3_s / area_m2
    alpha = 2.0 * (p0_flow_avg - p_flow_avg) / u**2
    beta = ux_flow_avg / u
    p_m = p_area_avg + u**2 * (beta - 1.0)
    return {
        "kinetic_energy_factor": alpha,
        "momentum_factor": beta,
        "static_mixed_out": p_m,
        "total_mixed_out": p_m + 0.5 * u**2,
        "mean_velocity_m_s": u,
    }


def cells_across_depth(case: Path) -> int | None:
    """Cells the vertical line through the throat's centre crosses (the ``throatLine``
    sampled set: one point per cell, ``midPoint``), or None when it was not written."""
    paths = sorted((case / "postProcessing" / "throatLine").glob("*/depth*.xy"))
    if not paths:
        return None
    rows = [ln for ln in paths[-1].read_text().splitlines() if ln.strip()]
    return len(rows)


def layer_report(case: Path, requested: int) -> dict[str, dict[str, float]]:
    """snappyHexMesh's layers per wall patch: faces, mean layers and overall thickness as a
    fraction of the requested one (its log's table), and, counted face by face from the
    ``nSurfaceLayers`` field it writes (``writeFlags layerFields``), ``coverage``: the
    fraction of the patch's faces carrying prism layers, and ``coverage_all_layers``: all
    ``requested`` of them (snappyHexMesh drops inner layers where it thins the layer, so
    the two differ). Without the field, ``coverage`` is the mean layers over ``requested``
    and ``coverage_basis`` says so."""
    path = case / "log.snappyHexMesh"
    out: dict[str, dict[str, float]] = {}
    if not path.is_file():
        return out
    field = next(iter(sorted(case.glob("*/nSurfaceLayers"))), None)
    for m in re.finditer(
        r"^(duct_\w+)\s+(\d+)\s+([\d.]+)\s+[\d.eE+-]+\s+([\d.]+)", path.read_text(), re.M
    ):
        name = m.group(1)
        row: dict[str, Any] = {
            "faces": int(m.group(2)),
            "layers_mean": float(m.group(3)),
            "thickness_fraction": float(m.group(4)) / 100.0,
        }
        counts = patch_values(field, name) if field is not None else None
        if counts:
            row["coverage"] = sum(c >= 0.5 for c in counts) / len(counts)
            row["coverage_all_layers"] = sum(c >= requested - 0.5 for c in counts) / len(counts)
            row["coverage_basis"] = "faces with prism layers (nSurfaceLayers field)"
        else:
            row["coverage"] = float(m.group(3)) / requested
            row["coverage_basis"] = "mean layers / requested (snappyHexMesh log)"
        out[name] = row
    return out


def patch_values(path: Path, patch: str) -> list[float] | None:
    """Per-face values of one patch of a written volScalarField (ascii or binary with
    8-byte floats), or None when the file or the patch's values are missing."""
    try:
        data = path.read_bytes()
    except OSError:
        return None
    at = data.find(b"boundaryField")
    at = data.find(patch.encode() + b"\n", at) if at >= 0 else -1
    if at < 0:
        return None
    block_end = data.find(b"}", at)
    m = re.compile(rb"value\s+(uniform\s+([-+\d.eE]+)|nonuniform\s+List<scalar>\s+(\d+))")
    hit = m.search(data, at)
    if hit is None or hit.start() > block_end:
        return None
    if hit.group(2) is not None:
        return [float(hit.group(2))]
    n = int(hit.group(3))
    start = data.index(b"(", hit.end()) + 1
    if re.search(rb"format\s+binary", data[:3000]):
        return list(struct.unpack(f"<{n}d", data[start : start + 8 * n]))
    body = data[start : data.index(b")", start)].split()
    return [float(v) for v in body[:n]]


def case_numbers(
    case: Path,
    speed_m_s: float,
    throat_area_m2: float,
    density_kg_m3: float,
    outlet_area_m2: float | None = None,
    transition_ref_area_m2: float | None = None,
) -> dict[str, Any]:
    """The results of a solved case (SI, kinematic pressures turned into Pa with ρ;
    ``outlet_area_m2`` the duct outlet's area, ``transition_ref_area_m2`` the area whose
    dynamic pressure the 1-D transition K refers to)."""
    rho = density_kg_m3
    q_out = last_row(_post(case, "outletFlow"))["sum(phi)"]
    q_throat = abs(last_row(_post(case, "throatFlow"))["sum(phi)"])
    area = last_row(_post(case, "throatArea"))
    flow_avg = last_row(_post(case, "throatFlowAvg"))
    outlet = last_row(_post(case, "outletTotal"))
    p_probe = _probe(case, "p")[0]
    u_inf = _probe(case, "U")
    q_inf = 0.5 * speed_m_s**2
    yplus = _yplus(case)
    walls = [v for k, v in yplus.items() if k.startswith("duct_")]
    a_out = outlet_area_m2 or throat_area_m2
    a_ref = transition_ref_area_m2 or min(throat_area_m2, a_out)
    q_ref = 0.5 * (q_out / a_ref) ** 2
    p0_throat = flow_avg["weightedAverage(p0f)"]
    out: dict[str, Any] = {
        "volume_flow_m3_s": q_out,
        "throat_volume_flow_m3_s": q_throat,
        "mass_balance_error": abs(q_throat - q_out) / q_out if q_out else None,
        "mass_flow_kg_s": rho * q_out,
        "inlet_velocity_ratio": q_out / (throat_area_m2 * speed_m_s),
        "reference_static_pa": 0.0,
        "ram_recovery_area_avg": area["areaAverage(p0f)"] / q_inf,
        "ram_recovery_flow_avg": p0_throat / q_inf,
        "outlet_total_pressure_pa": rho * outlet["weightedAverage(p0)"],
        "outlet_static_pressure_pa": rho * outlet["weightedAverage(p)"],
        "free_stream_static_pa": rho * p_probe,
        "probe_static_cp": p_probe / q_inf,
        "free_stream_speed_m_s": float(sum(c * c for c in u_inf) ** 0.5),
        "y_plus": {
            "min": min(v["min"] for v in walls),
            "max": max(v["max"] for v in walls),
            "by_patch": yplus,
        },
    }
    out.update(_transition_numbers(case, rho, q_out, a_out, outlet, p0_throat, q_ref))
    return out


def _transition_numbers(
    case: Path,
    rho: float,
    q_out: float,
    a_out: float,
    outlet: dict[str, float],
    p0_throat: float,
    q_ref: float,
) -> dict[str, Any]:
    """The transition's exit and the hose end: flow, α and β, total pressures (Pa), the
    transition's K (on ``q_ref``, kinematic m²/s²); empty when the case has no exit zone."""
    try:
        ex_q = abs(last_row(_post(case, "exitFlow"))["sum(phi)"])
        ex_a = last_row(_post(case, "exitArea"))
        ex_w = last_row(_post(case, "exitFlowAvg"))
        o_a = last_row(_post(case, "outletArea"))
    except (ValueError, KeyError):
        return {}
    ux = ex_w["weightedAverage(Uf)_x"]
    ex = mixed_out(
        ex_q, a_out, ex_w["weightedAverage(p0f)"], ex_w["weightedAverage(pf)"],
        ex_a["areaAverage(pf)"], ux,
    )  # fmt: skip
    o_ux = outlet["weightedAverage(U)_x"]
    hose_end = mixed_out(
        q_out, a_out, outlet["weightedAverage(p0)"], outlet["weightedAverage(p)"],
        o_a["areaAverage(p)"], o_ux,
    )  # fmt: skip
    return {
        "transition_exit_volume_flow_m3_s": ex_q,
        "kinetic_energy_factor": ex["kinetic_energy_factor"],
        "momentum_factor": ex["momentum_factor"],
        "transition_exit_total_pressure_flow_avg_pa": rho * ex_w["weightedAverage(p0f)"],
        "transition_exit_total_pressure_mixed_out_pa": rho * ex["total_mixed_out"],
        # throat plane to the transition's exit, both flow-averaged
        "transition_k": (p0_throat - ex_w["weightedAverage(p0f)"]) / q_ref,
        # as the 1-D model counts it: to the mixed-out exit (the mixing loss belongs here)
        "transition_k_mixed_out": (p0_throat - ex["total_mixed_out"]) / q_ref,
        "transition_loss_mixed_out_pa": rho * (p0_throat - ex["total_mixed_out"]),
        "outlet_kinetic_energy_factor": hose_end["kinetic_energy_factor"],
    }
