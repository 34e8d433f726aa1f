"""Every function ductgen runs in the kernel worker, in one table.

Kernel work is called as ``worker.run(job, *args)`` with the job *function* (never a name
string), imported by the module that calls it, so the layer contracts in ``pyproject.toml``
see each dependency (``design/`` reaches the panel reader below it, never ``solids/``). This
table is the list of them; ``tests/test_layers.py`` checks that every ``run(...)`` /
``run_within(...)`` call in the package passes one of these and nothing else. None of the
modules named here loads the CAD kernel or VTK when imported: only the jobs do, in the
worker.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from ductgen.panel_file import sample_panel
from ductgen.render import render_png, warm_up_drawing
from ductgen.solids.handoff import (
    flat_solid_job,
    insert_bodies_job,
    placed_solid_job,
    step_solid_job,
)
from ductgen.solids.jig_job import jig_job
from ductgen.solids.jobs import build_solids, cutter_mesh_job
from ductgen.solids.panel_cut import cut_panel_job
from ductgen.solids.read import step_mesh
from ductgen.solids.split import split_insert_job
from ductgen.solids.warm import warm_up

__all__ = ["KERNEL_JOBS"]

#: Job name (module-qualified, as the worker reports it) → the function the worker runs.
KERNEL_JOBS: dict[str, Callable[..., Any]] = {
    f"{f.__module__}:{f.__qualname__}": f
    for f in (
        build_solids,
        cutter_mesh_job,
        flat_solid_job,
        insert_bodies_job,
        placed_solid_job,
        step_solid_job,
        warm_up,
        split_insert_job,
        cut_panel_job,
        step_mesh,
        sample_panel,
        render_png,
        warm_up_drawing,
        jig_job,
    )
}
