"""Reading a finished case: flows, total pressures, the free-stream probe and y+, turned
into the numbers ``cfd.json`` reports (SI; recovery as a fraction of the free-stream
dynamic pressure, measured from the probed free-stream static pressure, not assumed 0).
"""

from __future__ import annotations

import re
from pathlib import Path
from typing import Any

__all__ = ["case_numbers", "last_row", "total_volume_m3"]


def last_row(path: Path) -> dict[str, float]:
    """The last data row of an OpenFOAM ``.dat`` file, keyed by the header's column names."""
    names: list[str] = []
    row: list[str] = []
    for line in path.read_text().splitlines():
        if line.startswith("# Time"):
            names = [c.strip() for c in line[1:].split("\t") if c.strip()]
        elif line.strip() and not line.startswith("#"):
            row = line.split()
    if not names or not row:
        raise ValueError(f"no data in {path}")
    return {n: float(v) for n, v in zip(names, row, strict=False) if n != "Time"}


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


def case_numbers(
    case: Path, speed_m_s: float, throat_area_m2: float, density_kg_m3: float
) -> dict[str, Any]:
    """The results of a solved case (SI, kinematic pressures turned into Pa with ρ)."""
    q_out = last_row(_post(case, "outletFlow"))["sum(phi)"]
    q_throat = abs(last_row(_post(case, "throatFlow"))["sum(phi)"])
    area = last_row(_post(case, "throatArea"))
    flow_avg = last_row(_post(case, "throatFlowAvg"))
    outlet = last_row(_post(case, "outletTotal"))
    p_inf = _probe(case, "p")[0]
    u_inf = _probe(case, "U")
    q_inf = 0.5 * speed_m_s**2
    yplus = _yplus(case)
    walls = [v for k, v in yplus.items() if k.startswith("duct_")]
    p0_throat_pa = density_kg_m3 * (flow_avg["weightedAverage(p0f)"] - p_inf)
    p0_outlet_pa = density_kg_m3 * (outlet["weightedAverage(p0)"] - p_inf)
    q_throat_pa = 0.5 * density_kg_m3 * (q_out / throat_area_m2) ** 2
    return {
        "volume_flow_m3_s": q_out,
        "throat_volume_flow_m3_s": q_throat,
        "mass_balance_error": abs(q_throat - q_out) / q_out if q_out else None,
        "mass_flow_kg_s": density_kg_m3 * q_out,
        "inlet_velocity_ratio": q_out / (throat_area_m2 * speed_m_s),
        "ram_recovery_area_avg": (area["areaAverage(p0f)"] - p_inf) / q_inf,
        "ram_recovery_flow_avg": (flow_avg["weightedAverage(p0f)"] - p_inf) / q_inf,
        "outlet_total_pressure_pa": p0_outlet_pa,
        # throat plane to duct outlet, flow-averaged: the internal transition's loss
        "transition_loss_pa": p0_throat_pa - p0_outlet_pa,
        "transition_k": (p0_throat_pa - p0_outlet_pa) / q_throat_pa,
        "outlet_static_pressure_pa": density_kg_m3 * (outlet["weightedAverage(p)"] - p_inf),
        "free_stream_static_pa": density_kg_m3 * p_inf,
        "free_stream_speed_m_s": float(sum(c * c for c in u_inf) ** 0.5),
        "y_plus": {
            "min": min(v["min"] for v in walls),
            "max": max(v["max"] for v in walls),
            "by_patch": yplus,
        },
    }
