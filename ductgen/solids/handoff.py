"""A solid handed from one kernel worker to another: built in design coordinates, written
as the kernel's binary B-rep (every number to the bit, so the other worker's files are the
same bytes), opaque bytes to the parent, which never loads the kernel. A build's kernel
worker builds the cutter, hands it to the side worker to check and write, and cuts the
insert with it (:meth:`ductgen.pipeline.solid_cache.SolidStage.solids`).
"""

from __future__ import annotations

from ductgen.design import Design
from ductgen.worker import stage

__all__ = ["flat_solid_job"]


def flat_solid_job(d: Design, kind: str) -> bytes:
    """Kernel-worker job: one kind built in design coordinates, as a binary B-rep."""
    from io import BytesIO

    from ductgen.solids.jobs import recipes

    stage(kind)
    buf = BytesIO()
    recipes()[kind].build(d, {}).exportBin(buf)
    return buf.getvalue()
