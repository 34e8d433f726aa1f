"""Work a build starts before the stage that writes it, so it runs while the kernel worker
builds the solids and splits the insert (two cores: the kernel worker's, and this).

The side worker also checks and writes the cutter the kernel worker hands it, and builds the
plug, while the kernel worker cuts the insert (which it splits next); its kernel imports
start when the build opens (:meth:`Ahead.warm_side`;
:meth:`~ductgen.pipeline.solid_cache.SolidStage.solids`).

The template (parent-process work that reads only the spec and the design) is drawn on a
thread of this process; the marking jig (a kernel job that needs no solid) and the preview's
picture run in a second worker process, :func:`~ductgen.worker.side_worker` (the kernel
worker's limits; the picture's job imports VTK only, the jig's the CAD kernel). A stage that
writes such an output takes its result (or its error) from :attr:`Ahead.futures`; the files
are the same bytes either way.
"""

from __future__ import annotations

import contextlib
from concurrent.futures import Future, ThreadPoolExecutor
from typing import Any

from ductgen.pipeline.outputs import BuildContext
from ductgen.worker import KernelWorker, WorkerLimits, side_worker

__all__ = ["Ahead", "picture"]


class Ahead:
    """One build's work started ahead, by output name (``"template"``, ``"jig"``,
    ``"preview"``). ``beside``: whether the build may use the side worker."""

    def __init__(self, exits: contextlib.ExitStack, limits: WorkerLimits, beside: bool) -> None:
        self.futures: dict[str, Future[Any]] = {}
        self.beside = beside
        self._exits = exits
        self._limits = limits
        self._pool: ThreadPoolExecutor | None = None

    def side(self) -> KernelWorker:
        """The side worker (the process-wide one with the kernel worker's limits)."""
        return side_worker(self._limits)

    def start(self, name: str, fn: Any, *args: Any) -> Future[Any]:
        """Run ``fn(*args)`` on a thread; its result is ``futures[name]`` (returned too). The
        build waits for its threads before its staging folder is published or removed."""
        if self._pool is None:
            self._pool = ThreadPoolExecutor(max_workers=4, thread_name_prefix="ductgen-ahead")
            self._exits.callback(self._pool.shutdown, wait=True, cancel_futures=True)
            self._exits.push(self._stop_on_error)  # runs first: a failed build waits for nothing
        self.futures[name] = self._pool.submit(fn, *args)
        return self.futures[name]

    def side_job(self, job: Any, *args: Any) -> Future[Any]:
        """``job(*args)`` started in the side worker (the solids' stage)."""
        return self.start("side solids", self.side().run, job, *args)

    def warm_side(self) -> None:
        """Start the side worker's kernel imports now, while the kernel worker builds the
        cutter it hands over (otherwise they would hold up the cutter's checks and the
        plug)."""
        from ductgen.solids.jobs import warm_up

        self.start("side warm-up", self.side().run, warm_up)

    def _stop_on_error(self, exc_type: type[BaseException] | None, *_exc: Any) -> bool:
        """When the build fails or is interrupted, stop the side worker's unfinished job
        (the worker restarts on its next job)."""
        if (
            exc_type is not None
            and self.beside
            and any(not f.done() for f in self.futures.values())
        ):
            self.side().stop()
        return False


def picture(ctx: BuildContext, renderer: KernelWorker) -> bytes:
    """The preview's picture (:func:`ductgen.sheets.preview.preview_png`) drawn by
    ``renderer``."""
    from ductgen.sheets import preview

    return preview.preview_png(ctx, ctx.worker, renderer=renderer)
