"""Work a build starts before the stage that writes it, so it runs while the kernel worker
builds the solids and splits the insert (two cores: the kernel worker's, and this).

The side worker also checks and writes the cutter the kernel worker hands it, builds the
plug, and checks the insert and writes its STL while the kernel worker writes the insert's
STEP (which it splits next); its kernel imports start when the build opens
(:meth:`Ahead.warm_side`; :meth:`~ductgen.pipeline.solid_cache.SolidStage.solids`).

The template (parent-process work that reads only the spec and the design) is drawn on a
thread of this process; the marking jig (a kernel job that needs no solid) and the preview's
picture (started once the insert is checked, or the solids built) run in a second worker process,
:func:`~ductgen.worker.side_worker` (the kernel worker's limits; the picture's job imports
VTK only, the jig's the CAD kernel). As soon as the kernel worker has written the insert
(while the side worker may still make the plug), or once cached solids are there, its split of
the insert is started from a thread too, so the record is made meanwhile, and the sheet is
drawn on a thread as soon as its picture and the record are there, while the kernel worker
still splits; a panel is then cut in the side worker. A stage that writes such an output
takes its result (or its error) from :attr:`Ahead.futures`; the files are the same bytes
either way.
"""

from __future__ import annotations

import contextlib
import threading
from collections.abc import Callable
from concurrent.futures import Future, ThreadPoolExecutor
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from ductgen.worker import KernelWorker, WorkerLimits, side_worker

if TYPE_CHECKING:
    from ductgen.cache import Cache
    from ductgen.design import Design
    from ductgen.solids.results import SolidResult

__all__ = ["Ahead", "Claim", "PictureScene", "picture"]


class Ahead:
    """One build's work started ahead, by output name (``"template"``, ``"jig"``,
    ``"preview"``). ``beside``: whether the build may use the side worker."""

    def __init__(self, exits: contextlib.ExitStack, limits: WorkerLimits, beside: bool) -> None:
        self.futures: dict[str, Future[Any]] = {}
        self.beside = beside
        self._exits = exits
        self._limits = limits
        self._pool: ThreadPoolExecutor | None = None
        self._runs_in: dict[str, KernelWorker] = {}  # future name → the worker its job is in
        #: whether the build draws the preview's picture in the side worker
        self.picture_wanted = False
        self._once = threading.Lock()

    def side(self) -> KernelWorker:
        """The side worker (the process-wide one with the kernel worker's limits)."""
        return side_worker(self._limits)

    def start(
        self, name: str, fn: Any, *args: Any, stops: KernelWorker | None = None
    ) -> Future[Any]:
        """Run ``fn(*args)`` on a thread; its result is ``futures[name]`` (returned too). The
        build waits for its threads before its staging folder is published or removed;
        ``stops``: the worker ``fn`` runs its job in, which a failed or interrupted build
        stops while the job is unfinished."""
        if stops is not None:
            self._runs_in[name] = stops
        if self._pool is None:
            self._pool = ThreadPoolExecutor(max_workers=4, thread_name_prefix="ductgen-ahead")
            self._exits.callback(self._pool.shutdown, wait=True, cancel_futures=True)
            self._exits.push(self._stop_on_error)  # runs first: a failed build waits for nothing
        self.futures[name] = self._pool.submit(fn, *args)
        return self.futures[name]

    def start_once(
        self, name: str, fn: Any, *args: Any, stops: KernelWorker | None = None
    ) -> Future[Any]:
        """:meth:`start`, unless work under ``name`` was started already (from any thread):
        then that work's future."""
        with self._once:
            if name not in self.futures:
                self.start(name, fn, *args, stops=stops)
            return self.futures[name]

    def run_in(self, name: str, worker: KernelWorker, job: Any, *args: Any) -> Future[Any]:
        """:meth:`start` of ``worker.run(job, *args)`` (``stops=worker``)."""
        return self.start(name, worker.run, job, *args, stops=worker)

    def side_job(
        self,
        job: Any,
        *args: Any,
        picture: bool = True,
        wanted: Callable[[], bool] | None = None,
    ) -> Future[Any]:
        """``job(*args)`` started in the side worker (the solids' stage); when the build
        draws a picture (:attr:`picture_wanted`), the side worker imports the drawing stack
        as soon as the first such job with ``picture`` True is done (the cutter's and the
        plug's, while the kernel worker still works on the insert). ``wanted``: asked when
        the side worker is free (:meth:`~ductgen.worker.KernelWorker.run_if`); the job is
        skipped, its result None, when it says no."""
        first = picture and "side solids" not in self.futures
        name = "side solids" if first else f"side solids {len(self.futures)}"
        if wanted is None:
            fut = self.run_in(name, self.side(), job, *args)
        else:
            side = self.side()
            fut = self.start(name, side.run_if, wanted, job, *args, stops=side)
        if self.picture_wanted and first:
            fut.add_done_callback(self._warm_picture)
        return fut

    def _warm_picture(self, _done: Future[Any]) -> None:
        from ductgen.render import warm_up_drawing

        with contextlib.suppress(RuntimeError):  # the build already stopped its threads
            self.run_in("picture warm-up", self.side(), warm_up_drawing)

    def warm_side(self) -> None:
        """Start the side worker's kernel imports now, while the kernel worker builds the
        cutter it hands over (otherwise they would hold up the cutter's checks and the
        plug)."""
        from ductgen.solids.warm import warm_up

        self.run_in("side warm-up", self.side(), warm_up)

    def _stop_on_error(self, exc_type: type[BaseException] | None, *_exc: Any) -> bool:
        """When the build fails or is interrupted, stop each worker with an unfinished job
        of this build (it restarts on its next job), so the build does not wait for it."""
        if exc_type is None:
            return False
        for name, fut in list(self.futures.items()):
            worker = self._runs_in.get(name)
            if worker is not None and not fut.done():
                worker.stop()
        return False


@dataclass(frozen=True)
class PictureScene:
    """What the preview's picture is drawn from (all that
    :func:`ductgen.sheets.preview.preview_png` reads of a build): the design, the solids
    built so far (mm meshes) and the solid cache or None. A build starts the picture as
    soon as its insert is checked (on a flat skin) or its solids are built, while its
    record (the print checks) is made."""

    design: Design
    solids: dict[str, SolidResult]
    cache: Cache | None


def picture(scene: PictureScene, worker: KernelWorker, renderer: KernelWorker) -> bytes:
    """The preview's picture (:func:`ductgen.sheets.preview.preview_png`) drawn by
    ``renderer`` (``worker``: the kernel worker, for a draft cutter mesh when no solid was
    built)."""
    from ductgen.sheets import preview

    return preview.preview_png(scene, worker, renderer=renderer)


class Claim:
    """A job queued for the side worker that the kernel worker may take over until the side
    worker starts it: :meth:`start` (asked by the side worker when it is free) and
    :meth:`take` (by the kernel worker), whichever comes first wins."""

    def __init__(self) -> None:
        self._lock = threading.Lock()
        self._state = "queued"

    def start(self) -> bool:
        """Whether the side worker runs the job (not taken over)."""
        with self._lock:
            if self._state == "taken":
                return False
            self._state = "started"
            return True

    def take(self) -> bool:
        """Whether the kernel worker takes the job over (not started beside)."""
        with self._lock:
            if self._state != "queued":
                return False
            self._state = "taken"
            return True
