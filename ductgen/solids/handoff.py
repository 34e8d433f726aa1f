"""A solid handed from one kernel worker to another: built in design coordinates, written
as the kernel's binary B-rep (every number to the bit, so the other worker's files are the
same bytes), opaque bytes to the parent, which never loads the kernel. A build's kernel
worker builds the cutter while the side worker makes the insert's outer body
(:func:`insert_bodies_job`), hands the cutter to the side worker to check and write, and cuts
the insert with it; then hands the insert over (on a curved skin or a panel also placed on
it, :func:`placed_solid_job`: the map is made once) to be checked and its STL written while
it writes the insert's STEP (:meth:`ductgen.pipeline.solid_cache.SolidStage.solids`).
"""

from __future__ import annotations

from typing import Any

from ductgen.design import Design
from ductgen.worker import stage

__all__ = ["flat_solid_job", "insert_bodies_job", "placed_solid_job", "step_solid_job"]


def flat_solid_job(d: Design, kind: str, flats: dict[str, bytes] | None = None) -> bytes:
    """Kernel-worker job: one kind built in design coordinates, as a binary B-rep;
    ``flats``: the kinds it needs built already (the insert its cutter), and for the insert
    possibly its :func:`insert_bodies_job` (under
    :data:`~ductgen.solids.kinds.INSERT_BODIES`), as binary B-reps."""
    stage(kind)
    return _binary(_built(d, kind, flats))


def placed_solid_job(
    d: Design, kind: str, flats: dict[str, bytes] | None = None
) -> tuple[bytes, bytes]:
    """Kernel-worker job: one kind built in design coordinates (as :func:`flat_solid_job`)
    and placed on the design's curved skin or panel (the map: seconds on an insert, done
    once), both as binary B-reps: (flat, placed)."""
    from ductgen.solids.deform import place

    stage(kind)
    flat = _built(d, kind, flats)
    return _binary(flat), _binary(place(flat, d, kind))


def _built(d: Design, kind: str, flats: dict[str, bytes] | None) -> Any:
    """``kind`` built in design coordinates from the binary B-reps ``flats``."""
    from io import BytesIO

    import cadquery as cq

    from ductgen.solids.jobs import recipes

    built = {k: cq.Shape.importBin(BytesIO(b)) for k, b in (flats or {}).items()}
    return recipes()[kind].build(d, built)


def _binary(shape: Any) -> bytes:
    """The kernel's binary B-rep of a cadquery shape (every number to the bit)."""
    from io import BytesIO

    buf = BytesIO()
    shape.exportBin(buf)
    return buf.getvalue()


def insert_bodies_job(d: Design) -> bytes:
    """Kernel-worker job: the insert's outer body and the inner-body pieces that are not
    the cutter (:func:`~ductgen.solids.insert.insert_bodies`), in design coordinates, as
    one binary B-rep compound (the outer body first); :func:`flat_solid_job` takes it among
    its ``flats``."""
    import cadquery as cq

    from ductgen.solids.insert import insert_bodies

    stage("insert bodies")
    outer, inner = insert_bodies(d)
    return _binary(cq.Compound.makeCompound([outer, *inner]))


def step_solid_job(
    d: Design, kind: str, flat: bytes, prefix: str, staging: str, placed: bytes | None = None
) -> dict[str, float]:
    """Kernel-worker job: ``PREFIX-KIND.step`` of a kind built already (``flat``, a binary
    B-rep from :func:`flat_solid_job`; ``placed``: the same placed on a curved skin, from
    :func:`placed_solid_job`), written into ``staging`` as
    :func:`~ductgen.solids.jobs.build_solids` writes it (the insert kept for its split),
    while another worker checks the same solid and writes its STL (``build_solids`` with
    ``step=False``); returns its seconds (``step_s``)."""
    import time
    from io import BytesIO

    import cadquery as cq

    from ductgen.solids.deform import place
    from ductgen.solids.jobs import write_step

    t0 = time.perf_counter()
    stage(f"{kind} STEP")
    # a solid's, to the last bit
    solid: Any = cq.Shape.importBin(BytesIO(flat if placed is None else placed))
    if placed is None:
        solid = place(solid, d, kind)
    write_step(kind, solid, f"{prefix}-{kind}", staging)
    return {"step_s": time.perf_counter() - t0}
