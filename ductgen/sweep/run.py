"""Running a sweep: every variant through the build pipeline, on a local process pool or a
Dask cluster, then the comparison files.

Local runs use :class:`concurrent.futures.ProcessPoolExecutor` (``jobs`` processes, fresh
interpreters); ``scheduler="tcp://host:8786"`` uses Dask's own executor,
``distributed.Client(address).get_executor()``, with the same task function. Each worker
process builds through its own kernel worker (:func:`ductgen.worker.default_worker`). On a
cluster the output folder must be on a file system every worker can see.

A variant folder holds a stamp (:data:`~ductgen.sweep.variants.STAMP_FILE`) with the
content hash of what was built; a re-run skips a variant whose stamp matches and whose
files are all present. A variant that fails is reported and does not stop the others.
"""

from __future__ import annotations

import contextlib
import dataclasses
import json
import multiprocessing
import os
import signal
import time
from collections.abc import Callable, Iterator
from concurrent.futures import Executor, Future, ProcessPoolExecutor, as_completed
from contextlib import contextmanager
from pathlib import Path
from typing import Any

from ductgen.errors import SpecError
from ductgen.sweep.report_record import ReportFormatError, VariantReport
from ductgen.sweep.results import SweepResult, VariantResult, VariantTask
from ductgen.sweep.variants import (
    STAMP_FILE,
    Variant,
    content_hash,
    make_variants,
    read_stamp,
)
from ductgen.sweep.vary import Vary

__all__ = [
    "SweepResult",
    "VariantResult",
    "VariantTask",
    "build_variant",
    "default_jobs",
    "run_sweep",
]


def default_jobs() -> int:
    """Worker processes by default: every core this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not Linux
        return max(1, os.cpu_count() or 1)


_FINALIZER: Any = None


def _close_worker_at_exit() -> None:
    """Pool and Dask worker processes skip ``atexit``; stop the kernel worker with them."""
    global _FINALIZER
    if _FINALIZER is None and multiprocessing.parent_process() is not None:
        from multiprocessing.util import Finalize

        from ductgen.worker import default_worker

        _FINALIZER = Finalize(None, default_worker().close, exitpriority=10)


def build_variant(task: VariantTask) -> VariantResult:
    """Build one variant into its folder (runs in a worker process); never raises."""
    from ductgen.atomic import write_atomic
    from ductgen.pipeline.builder import build
    from ductgen.pipeline.builder import package_version as _version

    folder = Path(task.folder)
    try:
        (folder / STAMP_FILE).unlink(missing_ok=True)
        _close_worker_at_exit()
        t0 = time.perf_counter()
        kw: dict[str, Any] = {"quality": task.quality, "design": task.design, "cache": task.cache}
        kw["beside"] = False  # no side worker: the variants already run side by side
        if task.cfd:  # ductgen sweep --cfd
            result = _build_with_cfd(task, folder, kw)
        else:
            result = build(task.spec, folder, only=list(task.kinds), force=True, **kw)
        seconds = time.perf_counter() - t0
        stamp = {
            "id": task.id,
            "hash": task.hash,
            "values": task.raw,
            "kinds": list(task.kinds),
            "quality": task.quality,
            "ductgen_version": _version(),
            "build_s": seconds,
            "files": sorted(p.name for p in result.files.values()),
        }
        write_atomic(folder / STAMP_FILE, (json.dumps(stamp, indent=2) + "\n").encode(), force=True)
        report = VariantReport.of_report(result.report)
        return VariantResult(task.id, "built", str(folder), report, seconds)
    except Exception as err:  # one failing variant must not stop the sweep
        msg = str(err).replace("\n", " ").strip() or type(err).__name__
        return VariantResult(task.id, "failed", str(folder), error=f"{type(err).__name__}: {msg}")


def _build_with_cfd(task: VariantTask, folder: Path, kw: dict[str, Any]) -> Any:
    """Build and run the CFD check in one staging folder and publish them together (as
    ``ductgen cfd`` does): an interrupted or failed CFD run leaves no half-written case,
    ``cfd.json`` or report without its ``cfd`` section in the variant folder."""
    from ductgen.atomic import OutputSet
    from ductgen.cfd import cfd_for_build
    from ductgen.pipeline.builder import build

    assert task.cfd is not None
    with OutputSet(folder, force=True) as staged:
        result = build(task.spec, staged.staging, only=list(task.kinds), force=True, **kw)
        stl = next(p for p in result.files.values() if p.name.endswith("-cutter.stl"))
        cfd_for_build(task.spec, result.design, result.record, stl, staged.staging, mesh=task.cfd)
        for entry in sorted(staged.staging.iterdir()):
            staged.staged_path(entry.name)
        published = staged.publish()
    # the files where they now are, and the report with the record's cfd section
    return dataclasses.replace(result, files=published, report=result.record.to_report())


def _cached(task: VariantTask) -> VariantResult | None:
    """The stored result when the folder's stamp matches and its files are all there."""
    folder = Path(task.folder)
    stamp = read_stamp(folder)
    if stamp is None or stamp.get("hash") != task.hash:
        return None
    names = stamp.get("files") or []
    if "report.json" not in names or not all((folder / n).is_file() for n in names):
        return None
    try:
        report = VariantReport.read(folder / "report.json")
    except (OSError, ReportFormatError):  # unreadable or not a report: build it again
        return None
    return VariantResult(task.id, "cached", str(folder), report, stamp.get("build_s"))


@contextmanager
def _executor(jobs: int, scheduler: str | None) -> Iterator[Executor | None]:
    """The pool to run on: None (this process) for one local job, a process pool, or a
    Dask executor on the cluster at ``scheduler``."""
    if scheduler:
        from ductgen.sweep.scheduler import check_scheduler

        check_scheduler(scheduler)  # a few seconds at most, before Dask's client is trusted
        from distributed import Client

        try:
            client = Client(scheduler, timeout="20s")
        except (OSError, TimeoutError, ValueError) as err:
            raise SpecError(
                "--scheduler",
                scheduler,
                "the address of a running Dask scheduler, e.g. tcp://host:8786",
                f"cannot connect: {err}",
            ) from None
        try:
            yield client.get_executor(pure=False)
        finally:
            client.close()
        return
    if jobs <= 1:
        yield None
        return
    pool = ProcessPoolExecutor(
        max_workers=jobs,
        mp_context=multiprocessing.get_context("spawn"),
        initializer=_pool_worker_init,
        initargs=(os.getpid(),),
    )
    try:
        yield pool
    except BaseException:
        _stop_pool(pool)
        raise
    pool.shutdown(wait=True)


def _pool_worker_init(parent_pid: int) -> None:  # pragma: no cover - runs in the pool
    """Pool workers die with the sweep process on every exit path (its kernel workers die
    with them in turn) and leave interrupts to it: no ``KeyboardInterrupt`` tracebacks."""
    from ductgen.lifeline import die_with_parent

    die_with_parent(parent_pid, signal.SIGTERM)


def _stop_pool(pool: ProcessPoolExecutor) -> None:
    """Stop a pool now (interrupt or error): running variants are abandoned, their
    staging folders removed by the next run; waiting for them could take minutes."""
    procs = list((getattr(pool, "_processes", None) or {}).values())
    pool.shutdown(wait=False, cancel_futures=True)
    for p in procs:
        with contextlib.suppress(Exception):
            p.terminate()
    deadline = time.monotonic() + 5.0
    for p in procs:
        with contextlib.suppress(Exception):
            p.join(max(0.0, deadline - time.monotonic()))
            if p.is_alive():
                p.kill()


def _run_all(
    fn: Callable[[Any], Any], items: list[Any], ex: Executor | None, done: Callable[[Any], None]
) -> None:
    if ex is None:
        for it in items:
            done(fn(it))
        return
    futures: list[Future[Any]] = [ex.submit(fn, it) for it in items]
    for fut in as_completed(futures):
        done(fut.result())


def _tasks(
    variants: list[Variant],
    out: Path,
    kinds: list[str],
    quality: str,
    cfd: str | None,
    cache: bool,
) -> list[VariantTask]:
    """One build task per variant, each into ``out/ID`` with the hash its cached folder is
    recognised by."""
    from ductgen.pipeline.builder import package_version

    version = package_version()
    return [
        VariantTask(
            v.id,
            v.spec,
            str(out / v.id),
            tuple(kinds),
            quality,
            content_hash(v.spec, [*kinds, f"cfd-{cfd}"] if cfd else kinds, quality, version),
            v.raw,
            v.design,
            cfd,
            cache,
        )
        for v in variants
    ]


def _checked(
    spec_path: Path,
    varies: list[Vary],
    zip_values: bool,
    jobs: int | None,
    only: list[str] | None,
    quality: str,
    baseline: str | None,
    cfd: str | None,
) -> tuple[list[str], list[Variant], str]:
    """Everything :func:`run_sweep` checks before it builds (the same arguments): the output
    kinds, the variants and the baseline's id. Raises :class:`SpecError` on the first bad
    one, nothing built or written."""
    from ductgen.pipeline.options import BuildOptions
    from ductgen.worker import WorkerLimits

    WorkerLimits.from_env()  # a bad DUCTGEN_MEMORY_MB / DUCTGEN_TIMEOUT_S: exit 2 up front
    kinds = list(BuildOptions.check(only, quality).kinds)
    if jobs is not None and jobs < 1:
        raise SpecError("-j", jobs, ">= 1", "number of worker processes")
    variants = make_variants(spec_path, varies, zip_values)
    if cfd is not None:  # ductgen sweep --cfd needs the cutter, a [flow] section, OpenFOAM
        from ductgen.cfd import check_inputs

        if "cutter" not in kinds:
            raise SpecError("--only", ",".join(kinds), "a list with cutter", "--cfd meshes it")
        check_inputs(variants[0].spec, cfd, 1, False)
    ids = [v.id for v in variants]
    base = baseline if baseline is not None else ids[0]
    if base not in ids:
        raise SpecError(
            "--baseline",
            base,
            "one of the variant ids: " + ", ".join(ids[:8]) + (" ..." if len(ids) > 8 else ""),
            "the solids are compared against it",
        )
    return kinds, variants, base


def _recorder(
    results: dict[str, VariantResult],
    total: int,
    progress: Callable[[VariantResult | None, int, int, int], None] | None,
) -> Callable[[VariantResult], None]:
    """A callback that files each finished variant in ``results`` and reports progress as
    ``progress(result, done, failed, total)``; it reports the start (the cached variants
    done, result None) at once."""
    counts = {"done": len(results), "failed": 0}
    note = progress or (lambda *_a: None)
    note(None, counts["done"], 0, total)

    def done(r: VariantResult) -> None:
        results[r.id] = r
        counts["done"] += 1
        counts["failed"] += r.status == "failed"
        note(r, counts["done"], counts["failed"], total)

    return done


def _build_and_compare(
    tasks: list[VariantTask],
    out: Path,
    jobs: int | None,
    scheduler: str | None,
    progress: Callable[[VariantResult | None, int, int, int], None] | None,
    baseline: str | None,
) -> tuple[list[VariantResult], dict[str, dict[str, Any]]]:
    """Build every task not cached on one executor (created only when there is work),
    then compare the cutters with ``baseline``'s on it (None: no cutters, no comparison).
    The results in the tasks' order and the comparison by variant id."""
    from ductgen.sweep.compare import compare_all

    results: dict[str, VariantResult] = {}
    for t in tasks:
        hit = _cached(t)
        if hit is not None:
            results[t.id] = hit
    todo = [t for t in tasks if t.id not in results]
    done = _recorder(results, len(tasks), progress)
    n_jobs = min(jobs or default_jobs(), max(1, len(todo)))
    with _executor(n_jobs if todo else 1, scheduler if todo else None) as ex:
        out.mkdir(parents=True, exist_ok=True)  # only once the executor is reachable
        _run_all(build_variant, todo, ex, done)
        ordered = [results[t.id] for t in tasks]
        comparison = compare_all(tasks, ordered, baseline, ex) if baseline is not None else {}
    return ordered, comparison


def run_sweep(
    spec_path: str | Path,
    varies: list[Vary],
    out_dir: str | Path,
    *,
    zip_values: bool = False,
    jobs: int | None = None,
    only: list[str] | None = None,
    quality: str = "normal",
    baseline: str | None = None,
    scheduler: str | None = None,
    progress: Callable[[VariantResult | None, int, int, int], None] | None = None,
    cfd: str | None = None,
    cache: bool = True,
) -> SweepResult:
    """Build every variant of a sweep and write ``comparison.csv/json/html`` into ``out_dir``.

    Args:
        spec_path: the base spec file.
        varies: parsed ``--vary`` options (:func:`~ductgen.sweep.vary.parse_vary`).
        out_dir: sweep folder; each variant goes into ``out_dir/<variant id>/``.
        zip_values: pair the varied values instead of the full grid.
        jobs: local worker processes (default: all cores); ignored with ``scheduler``.
        only: output kinds to build (default: every kind ``build`` knows).
        quality: STL tessellation setting.
        baseline: variant id the solids are compared against (default: the first).
        scheduler: Dask scheduler address; runs the variants on that cluster.
        progress: called as ``progress(result, done, failed, total)`` once before the first
            build (result None) and after each variant.
        cfd: run the OpenFOAM check (:mod:`ductgen.cfd`) on this mesh for every variant.
        cache: take solids from the solid cache and store new ones (:mod:`ductgen.cache`);
            False bypasses it.

    Raises:
        SpecError: (before anything is built) for a bad ``--vary``, an invalid variant, an
            unknown ``--only`` kind, ``--baseline`` or ``--quality``, or an unreachable
            scheduler.
    """
    from ductgen.sweep.compare import comparison_rows
    from ductgen.sweep.html import write_outputs

    t_start = time.perf_counter()
    spec_path = Path(spec_path)
    kinds, variants, base = _checked(
        spec_path, varies, zip_values, jobs, only, quality, baseline, cfd
    )
    out = Path(out_dir).resolve()
    tasks = _tasks(variants, out, kinds, quality, cfd, cache)
    ordered, comparison = _build_and_compare(
        tasks, out, jobs, scheduler, progress, base if "cutter" in kinds else None
    )
    rows = comparison_rows(variants, ordered, comparison)
    sweep = SweepResult(variants, ordered, rows, base, seconds=time.perf_counter() - t_start)
    sweep.files = write_outputs(sweep, out, spec_path, [v.key for v in varies])
    return sweep
