"""What a kernel job hands back, as typed records (importable without the CAD kernel).

The kernel worker returns these across the process boundary (they pickle by reference to
this module), the solid cache stores and restores them, and the report and the later stages
(print checks, preview, insert split, the 3MF plate) read their attributes — never string
keys of a dictionary.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, NamedTuple

import numpy as np
import numpy.typing as npt

__all__ = ["InsertPiece", "Mesh", "SolidResult"]


class Mesh(NamedTuple):
    """A triangulation: ``vertices`` (n × 3, mm, float32) and ``faces`` (m × 3 vertex
    indices, int32). Unpacks as ``verts, faces = mesh``."""

    vertices: npt.NDArray[Any]
    faces: npt.NDArray[Any]


@dataclass(frozen=True)
class SolidResult:
    """One built, checked and encoded solid.

    Attributes:
        volume_mm3: the solid's measured volume (mm³; the kernel's exact mass property on a
            curved skin, the check triangulation's on a flat one).
        expected_volume_mm3: its volume by an independent integral (mm³), None where no
            closed form exists (the insert).
        stl_volume_mm3: the written STL's enclosed volume (mm³).
        area_mm2: the solid's surface area (mm²).
        faces: the B-rep's face count.
        check_mesh: (linear mm, angular rad) deflection of the check triangulation.
        step_file, stl_file: the staged file names.
        mesh: the STL's triangulation (mm), for the print checks and the preview.
        seconds: wall-clock seconds per stage (``build_s``, ``check_s``...; ``cache_s`` on
            a cache hit).
        wetted_area_mm2: the cutter's air-washed area (mm²); None for other kinds.
    """

    volume_mm3: float
    expected_volume_mm3: float | None
    stl_volume_mm3: float
    area_mm2: float
    faces: int
    check_mesh: tuple[float, float]
    step_file: str
    stl_file: str
    mesh: Mesh
    seconds: dict[str, float] = field(default_factory=dict)
    wetted_area_mm2: float | None = None

    @property
    def files(self) -> dict[str, str]:
        """File format (``step``, ``stl``) → staged file name."""
        return {"step": self.step_file, "stl": self.stl_file}

    def numbers(self) -> dict[str, Any]:
        """The measured numbers (what the solid cache stores beside the files and mesh)."""
        out: dict[str, Any] = {
            "volume_mm3": self.volume_mm3,
            "expected_volume_mm3": self.expected_volume_mm3,
            "stl_volume_mm3": self.stl_volume_mm3,
            "area_mm2": self.area_mm2,
            "faces": self.faces,
            "check_mesh": list(self.check_mesh),
        }
        if self.wetted_area_mm2 is not None:
            out["wetted_area_mm2"] = self.wetted_area_mm2
        return out

    @classmethod
    def from_numbers(
        cls,
        numbers: dict[str, Any],
        step_file: str,
        stl_file: str,
        mesh: Mesh,
        seconds: dict[str, float],
    ) -> SolidResult:
        """The record from :meth:`numbers` and its files, mesh and stage seconds."""
        return cls(
            volume_mm3=numbers["volume_mm3"],
            expected_volume_mm3=numbers["expected_volume_mm3"],
            stl_volume_mm3=numbers["stl_volume_mm3"],
            area_mm2=numbers["area_mm2"],
            faces=numbers["faces"],
            check_mesh=(float(numbers["check_mesh"][0]), float(numbers["check_mesh"][1])),
            step_file=step_file,
            stl_file=stl_file,
            mesh=Mesh(np.asarray(mesh[0]), np.asarray(mesh[1])),
            seconds=seconds,
            wetted_area_mm2=numbers.get("wetted_area_mm2"),
        )


@dataclass(frozen=True)
class InsertPiece:
    """One bed-size piece of a split insert.

    Attributes:
        step, stl: the staged file names.
        volume_mm3: its triangulation's volume (mm³).
        size_mm: its size standing ``up`` (mm).
        up: the axis that points up on the bed.
        fits: whether it fits the printer's bed.
        stl_turn_deg: the turn about Z (deg) of its STL, which stands on the bed as it prints.
    """

    step: str
    stl: str
    volume_mm3: float
    size_mm: list[float]
    up: str
    fits: bool
    stl_turn_deg: float = 0.0

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> InsertPiece:
        """From the split job's per-piece dictionary (same keys as :meth:`as_dict`)."""
        return cls(
            d["step"],
            d["stl"],
            d["volume_mm3"],
            list(d["size_mm"]),
            d["up"],
            d["fits"],
            float(d.get("stl_turn_deg", 0.0)),
        )

    def as_dict(self) -> dict[str, Any]:
        """The piece as written under ``print.bed.insert.pieces`` in ``report.json``."""
        return {
            "step": self.step,
            "stl": self.stl,
            "volume_mm3": self.volume_mm3,
            "size_mm": self.size_mm,
            "up": self.up,
            "fits": self.fits,
            "stl_turn_deg": self.stl_turn_deg,
        }
