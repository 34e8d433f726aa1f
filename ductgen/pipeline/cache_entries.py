"""The solid cache's entries of a build (:mod:`ductgen.pipeline.solid_cache`): a solid's
files and numbers, the insert's pieces, the record's checks on the meshes, to and from
:class:`~ductgen.cache.Entry` (JSON numbers and binary blobs). A hit's STEP gets this build's
product name and time stamp (:func:`~ductgen.solids.step_text.stamp_step`)."""

from __future__ import annotations

import time
from pathlib import Path
from typing import Any

import numpy as np

from ductgen.atomic import write_atomic
from ductgen.cache import Entry
from ductgen.errors import DesignWarning
from ductgen.report import InsertSplit, MeshChecks
from ductgen.solids.results import InsertPiece, Mesh, SolidResult
from ductgen.solids.step_text import stamp_step

__all__ = ["checks_from", "checks_to", "pieces_from_entry", "solid_from_entry", "solid_to_entry"]


def checks_to(c: MeshChecks) -> dict[str, Any]:
    """``c`` as a cache entry's JSON (its sections hold plain numbers, strings and lists)."""
    split = None if c.split is None else [list(c.split.stations_x_mm), c.split.up]
    warnings = [w.to_dict() for w in c.warnings]
    return {"parts": c.parts, "bed": c.bed, "warnings": warnings, "up": c.insert_up, "split": split}


def checks_from(meta: dict[str, Any]) -> MeshChecks:
    """:func:`checks_to`'s JSON read back."""
    split = (
        None if meta["split"] is None else InsertSplit(tuple(meta["split"][0]), meta["split"][1])
    )
    warnings = [DesignWarning(w["code"], w["message"]) for w in meta["warnings"]]
    return MeshChecks(meta["parts"], meta["bed"], warnings, meta["up"], split)


def solid_to_entry(r: SolidResult, staging: Path) -> tuple[dict[str, Any], dict[str, Any]]:
    """A built solid's numbers (JSON) and blobs (its STEP and STL bytes, its mesh)."""
    blobs = {
        "step": (staging / r.step_file).read_bytes(),
        "stl": (staging / r.stl_file).read_bytes(),
        "verts": np.asarray(r.mesh.vertices),
        "faces": np.asarray(r.mesh.faces),
    }
    return r.numbers(), blobs


def solid_from_entry(entry: Entry, kind: str, prefix: str, staging: Path, t0: float) -> SolidResult:
    """A cached solid's files staged as ``PREFIX-KIND.step/.stl`` and its result (seconds
    from ``t0``, :func:`time.perf_counter`)."""
    step_name, stl_name = f"{prefix}-{kind}.step", f"{prefix}-{kind}.stl"
    write_atomic(staging / step_name, stamp_step(entry.blobs["step"], f"{prefix}-{kind}"))
    write_atomic(staging / stl_name, entry.blobs["stl"])
    mesh = Mesh(entry.blobs["verts"], entry.blobs["faces"])
    seconds = {"cache_s": time.perf_counter() - t0}
    return SolidResult.from_numbers(entry.meta, step_name, stl_name, mesh, seconds)


def pieces_from_entry(entry: Entry, prefix: str, staging: Path) -> list[InsertPiece]:
    """The insert's cached pieces staged as ``PREFIX-insert-partK.step/.stl``."""
    pieces = []
    for k, meta in enumerate(entry.meta["pieces"]):
        base = f"{prefix}-insert-part{k + 1}"
        write_atomic(staging / f"{base}.step", stamp_step(entry.blobs[f"step{k}"], base))
        write_atomic(staging / f"{base}.stl", entry.blobs[f"stl{k}"])
        pieces.append(InsertPiece.from_dict({"step": f"{base}.step", "stl": f"{base}.stl", **meta}))
    return pieces
