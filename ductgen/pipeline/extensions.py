"""Where the optional build outputs and report sections plug into the pipeline.

Each feature registers here, in its own block, so the pipeline itself stays unchanged:

* ``PRODUCERS[kind] = (producer, suffixes)`` — an output kind for ``--only``; the producer
  ``(ctx, out) -> {file kind: file name}`` stages files with ``out.add(name, bytes)``.
* ``REPORT_HOOKS.append(hook)`` — ``hook(ctx)`` adds a section to ``ctx.report`` and may
  append :class:`~ductgen.errors.DesignWarning` records to ``ctx.warnings``.

Imported once by :mod:`ductgen.pipeline.build`; keep the imports inside each block light.
"""

from __future__ import annotations

from ductgen.pipeline.build import PRODUCERS, REPORT_HOOKS  # noqa: F401

# --- airflow (flow/) -------------------------------------------------------------------

# --- printability of the insert (insert/plug) ----------------------------------------

# --- marking template and drawing sheet (export/, sheets/) ---------------------------
