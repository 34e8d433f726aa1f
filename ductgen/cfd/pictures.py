"""Pictures of a solved case, rendered off screen with pyvista/VTK (run as a child process:
``python -m ductgen.cfd.pictures CASE OUT_DIR NAME P_INF SPEED``, prints JSON).

- ``NAME-cfd-throat.png``: total-pressure coefficient (p0 − p∞)/q∞ on the throat plane,
  seen from downstream (the low-energy cores of the vortex pair show as dark patches).
- ``NAME-cfd-ramp.png``: streamlines seeded in the boundary layer ahead of the ramp,
  coloured by speed, over the cavity walls, seen from above and behind: the air that curls
  over the divergent walls into the vortex pair shows as twisted lines.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Any

import numpy as np

__all__ = ["render"]


def _read(case: Path) -> tuple[Any, Any]:
    """The internal mesh and the wall patches (cavity, floor) at the last time, with point
    data interpolated from the cells."""
    import pyvista as pv

    (case / "case.foam").touch()
    reader = pv.OpenFOAMReader(str(case / "case.foam"))
    reader.set_active_time_value(reader.time_values[-1])
    reader.cell_to_point_creation = True
    data = reader.read()
    if not isinstance(data, pv.MultiBlock):
        raise RuntimeError(f"{case}: OpenFOAM reader returned no multiblock of meshes")
    bnd = data["boundary"]
    if not isinstance(bnd, pv.MultiBlock):
        raise RuntimeError(f"{case}: the OpenFOAM case has no boundary patches")
    names = list(bnd.keys())  # a MultiBlock's `in` tests blocks, not names
    walls = [bnd[n] for n in ("duct_cavity", "duct_floor") if n in names]
    return data["internalMesh"], pv.merge(walls)


def render(case: Path, out_dir: Path, name: str, p_inf: float, speed: float) -> dict[str, Any]:
    """Write both pictures; ``p_inf`` the free-stream static pressure (kinematic, m²/s²),
    ``speed`` the free-stream speed (m/s). Returns the file names by picture."""
    import pyvista as pv
    from vtkmodules.vtkCommonCore import vtkLogger, vtkObject

    vtkLogger.SetStderrVerbosity(vtkLogger.VERBOSITY_OFF)
    vtkObject.GlobalWarningDisplayOff()
    pv.OFF_SCREEN = True
    internal, walls = _read(case)
    topo = (case / "system/topoSetDict").read_text()
    origin = [float(v) for v in topo.split("origin (")[1].split(")")[0].split()]
    span = [float(v) for v in topo.split("span (")[1].split(")")[0].split()]
    files = {
        "throat": _throat_picture(internal, out_dir, name, origin, span, p_inf, speed),
        "ramp": _ramp_picture(internal, walls, out_dir, name, speed),
    }
    return files


def _throat_picture(
    internal: Any,
    out_dir: Path,
    name: str,
    origin: list[float],
    span: list[float],
    p_inf: float,
    speed: float,
) -> str:
    """Cp0 on the throat plane below the skin, looking upstream; returns the file name."""
    import pyvista as pv

    x_t = origin[0]
    q_inf = 0.5 * speed**2

    # throat plane: Cp0 on a slice below the skin
    sl = internal.slice(normal=(1, 0, 0), origin=(x_t, 0, 0))
    sl = sl.clip_box(
        [x_t - 1, x_t + 1, origin[1], origin[1] + span[1], origin[2], origin[2] + span[2]],
        invert=False,
    )
    sl.point_data["Cp0"] = (sl.point_data["p0"] - p_inf) / q_inf
    pl = pv.Plotter(off_screen=True, window_size=[1200, 700])
    pl.set_background("white")  # type: ignore[arg-type]  # pyvista: wraps() types self
    pl.add_mesh(
        sl, scalars="Cp0", cmap="viridis", clim=[0.0, 1.0],
        scalar_bar_args={"title": "(p0 - p_inf) / q_inf", "color": "black"},
    )  # fmt: skip
    pl.add_text(f"{name}: total pressure on the throat plane x = {x_t * 1000:.1f} mm, "
                "looking upstream", font_size=10, color="black")  # fmt: skip
    pl.view_vector((1, 0, 0), viewup=(0, 0, 1))  # type: ignore[arg-type]  # pyvista: wraps() types self
    pl.camera.parallel_projection = True
    pl.reset_camera(bounds=sl.bounds)  # type: ignore[call-arg]  # pyvista: wraps() types self
    pl.camera.zoom(0.95)
    file = f"{name}-cfd-throat.png"
    pl.screenshot(str(out_dir / file))
    pl.close()
    return file


def _ramp_picture(internal: Any, walls: Any, out_dir: Path, name: str, speed: float) -> str:
    """Streamlines from the boundary layer ahead of the ramp; returns the file name."""
    import pyvista as pv

    # streamlines over the ramp
    cav = walls.clip(normal=(0, 0, 1), origin=(0, 0, -1e-5), invert=True)
    b = cav.bounds  # the cavity below the skin frames the view (the skin spans the domain)
    length = b[1] - b[0]
    xs = max(internal.bounds[0] + 1e-3, -0.08 * length)
    half = 0.5 * (cav.bounds[3] - cav.bounds[2])
    depth = -cav.bounds[4]
    z1, z2 = 0.04 * half, 0.12 * half  # inside the boundary layer, just above the skin
    seeds = pv.Line((xs, -1.3 * half, z1), (xs, 1.3 * half, z1), resolution=30)
    seeds2 = pv.Line((xs, -1.3 * half, z2), (xs, 1.3 * half, z2), resolution=30)
    lines = internal.streamlines_from_source(
        seeds.merge(seeds2),
        vectors="U",
        max_length=3.0 * length,
        integration_direction="forward",
        max_steps=4000,
    )
    pl = pv.Plotter(off_screen=True, window_size=[1400, 900])
    pl.set_background("white", top="#dfe7ef")  # type: ignore[arg-type]  # pyvista: wraps() types self
    pl.add_mesh(cav, color="#b8b8b8", opacity=0.35, smooth_shading=True)
    if lines.n_points:
        lines.point_data["speed"] = np.linalg.norm(lines.point_data["U"], axis=1) / speed
        pl.add_mesh(
            lines.tube(radius=0.002 * length), scalars="speed", cmap="plasma", clim=[0.0, 1.1],
            scalar_bar_args={
                "title": "|U| / V_inf", "color": "black", "vertical": True,
                "position_x": 0.88, "position_y": 0.2, "height": 0.6,
            },
        )  # fmt: skip
    pl.add_text(f"{name}: streamlines from the boundary layer ahead of the ramp",
                font_size=10, color="black")  # fmt: skip
    c = np.array([(b[0] + b[1]) / 2, 0.0, -0.3 * depth])
    pl.camera_position = [tuple(c + length * np.array([1.0, -0.55, 0.85])), tuple(c), (0, 0, 1)]
    pl.camera.zoom(0.85)
    file = f"{name}-cfd-ramp.png"
    pl.screenshot(str(out_dir / file))
    pl.close()
    return file


if __name__ == "__main__":  # pragma: no cover - run by ductgen.cfd.run in a child process
    case_arg, out_arg, name_arg, p_arg, v_arg = sys.argv[1:6]
    print(json.dumps(render(Path(case_arg), Path(out_arg), name_arg, float(p_arg), float(v_arg))))
