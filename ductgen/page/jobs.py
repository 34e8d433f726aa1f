"""Builds and sweeps started from the design page: one at a time, in a background thread.

A second start while one runs is refused with :class:`Busy` (the page says so); the page
polls :meth:`JobRunner.snapshot` for progress, so several tabs or a reload see the same job
and never start or corrupt a second one. Builds go through
:func:`ductgen.pipeline.build` exactly as ``ductgen build`` does (staged, published
together, nothing replaced without ``force``); sweeps through
:func:`ductgen.sweep.run_sweep`.
"""

from __future__ import annotations

import os
import stat
import tempfile
import threading
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

from ductgen.atomic import check_free
from ductgen.errors import DuctgenError, SpecError, excerpt
from ductgen.page.preview import check_spec, problem_lines
from ductgen.spec.write import spec_text

__all__ = [
    "MAX_SWEEP_VARIANTS",
    "Busy",
    "Cancelled",
    "JobRunner",
    "absolute_tables",
    "written_since",
]

#: The page runs small sweeps only; larger grids belong to ``ductgen sweep``.
MAX_SWEEP_VARIANTS = 12


class Busy(Exception):
    """A build or sweep is already running; :attr:`state` is its snapshot."""

    def __init__(self, state: dict[str, Any]) -> None:
        self.state = state
        age = time.time() - state.get("started", time.time())
        super().__init__(
            f"busy: a {state.get('kind')} of {state.get('name')} is running "
            f"(stage {state.get('stage')}, {age:.0f} s); one build at a time, "
            "wait for it to finish"
        )


class Cancelled(Exception):
    """The user pressed Cancel: the build stops at the next stage (or at once, when the
    kernel worker is stopped) and its staged files are thrown away."""


def absolute_tables(data: dict[str, Any], base_dir: Path | None) -> dict[str, Any]:
    """``data`` with a relative wall-profile or recovery CSV made absolute (relative to the
    spec's folder), so the spec can be written elsewhere and still read the same tables."""
    if base_dir is None:
        return data
    out = dict(data)
    for section, key in (("planform", "profile"), ("flow", "recovery")):
        sec = out.get(section)
        if not isinstance(sec, dict):
            continue
        value = sec.get(key)
        if isinstance(value, str) and value.strip().lower().endswith(".csv"):
            p = Path(value.strip()).expanduser()
            if not p.is_absolute() and (base_dir / p).is_file():
                out[section] = {**sec, key: str((base_dir / p).resolve())}
    return out


def written_since(folder: Path, since: float) -> list[str]:
    """Regular files below ``folder`` (no symbolic links, none leaving it) modified at or
    after ``since`` (seconds since the epoch, 1 s slack), as POSIX paths relative to it."""
    root = Path(folder).resolve()
    names: list[str] = []
    for dirpath, _dirs, filenames in os.walk(root):
        for fn in filenames:
            p = Path(dirpath) / fn
            try:
                st = p.lstat()
            except OSError:
                continue
            if stat.S_ISREG(st.st_mode) and st.st_mtime >= since - 1.0:
                names.append(p.relative_to(root).as_posix())
    return sorted(names)


def _stop_default_worker() -> None:
    from ductgen.worker import default_worker, side_workers

    default_worker().stop()
    for w in side_workers():  # a build's work beside (jig, cutter, plug, picture)
        w.stop()


class JobRunner:
    """Runs at most one build or sweep at a time and reports its progress."""

    def __init__(self, stop_kernel: Callable[[], None] | None = None) -> None:
        self._busy = threading.Lock()
        self._guard = threading.Lock()
        self._cancel = threading.Event()
        self._state: dict[str, Any] = {"id": 0, "status": "idle"}
        self._last_s: dict[str, float] = {}  # seconds of the last finished job, per kind
        self._stop_kernel = stop_kernel or _stop_default_worker

    def snapshot(self) -> dict[str, Any]:
        """A copy of the current (or last) job's state, JSON-ready: ``stage``, ``stage_k``
        of ``stage_n``, ``elapsed_s`` and ``estimate_s`` (the last such job's seconds)."""
        with self._guard:
            s = dict(self._state)
            if "stages" in s:
                s["stages"] = list(s["stages"])
        if s.get("status") == "running":
            s["elapsed_s"] = time.time() - s["started"]
        return s

    def cancel(self) -> dict[str, Any]:
        """Stop the running build: nothing it staged is published. Refused (the snapshot
        says why) when no build runs or it is already publishing."""
        with self._guard:
            s = self._state
            if s.get("status") != "running" or s.get("kind") != "build":
                return {**self._snap_locked(), "cancel": "nothing to cancel"}
            if s.get("stage") == "publish":
                return {**self._snap_locked(), "cancel": "too late: the files are written"}
            self._cancel.set()
            s["cancelling"] = True
        self._stop_kernel()  # the kernel stage ends now; the next stage would raise anyway
        return self.snapshot()

    def _snap_locked(self) -> dict[str, Any]:
        """:meth:`snapshot` for a caller already holding the state lock (stages left out)."""
        s = dict(self._state)
        if s.get("status") == "running":
            s["elapsed_s"] = time.time() - s["started"]
        return s

    def _stage(self, stage: str, k: int | None = None, n: int | None = None) -> None:
        """Record the stage reached (its place in the plan, or ``k`` of ``n``); raise
        :class:`Cancelled` when Cancel was pressed."""
        with self._guard:
            if self._cancel.is_set():
                raise Cancelled()
            st = self._state
            stages = st.setdefault("stages", [])
            if k is None:
                if stage not in stages:  # an unplanned stage (the insert split): after this one
                    stages.insert(int(st.get("stage_k", 1)), stage)
                k, n = stages.index(stage) + 1, len(stages)
            st.update(stage=stage, stage_k=k, stage_n=n)

    def out_dir(self) -> Path | None:
        """The folder of the last finished job, whose files the page may download."""
        with self._guard:
            s = self._state
            return Path(s["out_dir"]) if s.get("status") == "done" else None

    def _update(self, **kw: Any) -> None:
        with self._guard:
            self._state.update(kw)

    def _start(
        self,
        kind: str,
        name: str,
        out_dir: Path,
        work: Callable[[], dict[str, Any]],
        stages: list[str] | None = None,
    ) -> dict[str, Any]:
        if not self._busy.acquire(blocking=False):
            raise Busy(self.snapshot())
        self._cancel.clear()
        with self._guard:
            job_id = int(self._state.get("id", 0)) + 1
            self._state = {
                "id": job_id,
                "kind": kind,
                "name": name,
                "status": "running",
                "stage": "starting",
                "stage_k": 0,
                "stage_n": len(stages or ()),
                "stages": list(stages or ()),
                "started": time.time(),
                "out_dir": str(out_dir),
            }
            if kind in self._last_s:
                self._state["estimate_s"] = self._last_s[kind]

        def run() -> None:
            try:
                extra = work()
                self._update(status="done", stage="done", **extra)
                with self._guard:
                    self._last_s[kind] = time.time() - self._state["started"]
            except Exception:
                if not self._cancel.is_set():
                    raise
                self._update(status="cancelled", message="cancelled: nothing was published")

        def guarded() -> None:
            try:
                run()
            except SpecError as err:
                self._update(status="failed", message=str(err), problems=problem_lines(err))
            except DuctgenError as err:
                self._update(status="failed", message=str(err))
            except Exception as err:  # an internal failure: say what, keep serving
                self._update(
                    status="failed",
                    message=f"internal error: {type(err).__name__}: {excerpt(str(err), 400)}",
                )
            finally:
                self._update(seconds=time.time() - self._state["started"])
                self._busy.release()

        threading.Thread(target=guarded, name=f"ductgen-page-{kind}", daemon=True).start()
        return self.snapshot()

    # --- a build --------------------------------------------------------------------------
    def start_build(
        self,
        data: Any,
        base_dir: Path | None,
        out_dir: Path | None,
        *,
        only: list[str] | None = None,
        force: bool = False,
        quality: str = "normal",
    ) -> dict[str, Any]:
        """Validate, check the output folder, then build in the background.

        Raises:
            SpecError: bad input (nothing is started or written).
            OverwriteError: a file the build would write exists and ``force`` is not set.
            Busy: a job is running.
        """
        from ductgen.pipeline import build
        from ductgen.pipeline.builder import planned_files, planned_stages, select_kinds

        spec, design = check_spec(data, base_dir)
        kinds = select_kinds(only)
        out = Path(out_dir) if out_dir is not None else Path.cwd() / spec.name
        check_free([out / n for n in planned_files(spec, kinds)], force)

        def work() -> dict[str, Any]:
            result = build(
                spec,
                out,
                only=kinds,
                force=force,
                quality=quality,
                progress=self._stage,
                design=design,
            )
            names = result.record.files
            files = [{"kind": k, "name": n} for k, n in names.items()]
            files.append({"kind": "report", "name": "report.json"})
            solids = [k for k in ("cutter", "insert", "plug") if f"{k}_stl" in names]
            return {"files": files, "solids": solids, "written": [f["name"] for f in files]}

        return self._start("build", spec.name, out, work, planned_stages(spec, kinds))

    # --- a sweep of one key ---------------------------------------------------------------
    def start_sweep(
        self,
        data: Any,
        base_dir: Path | None,
        key: str,
        values: str,
        out_dir: Path | None,
        *,
        only: list[str] | None = None,
    ) -> dict[str, Any]:
        """Sweep ``key`` over ``values`` (``A:B:STEP`` or ``v1,v2,...``, units allowed).

        Raises:
            SpecError: a bad spec, key or values, or more than :data:`MAX_SWEEP_VARIANTS`.
            Busy: a job is running.
        """
        from ductgen.sweep import parse_vary, run_sweep
        from ductgen.sweep.vary import combinations, set_dotted

        spec, _ = check_spec(data, base_dir)
        vary = parse_vary(f"{key}={values}")
        n = len(combinations([vary]))
        if n > MAX_SWEEP_VARIANTS:
            raise SpecError(
                "sweep values",
                values,
                f"at most {MAX_SWEEP_VARIANTS} variants from the page",
                f"this gives {n}; run larger grids with ductgen sweep",
            )
        for value in vary.values:  # every variant is checked now, in milliseconds
            check_spec(set_dotted(data, vary.key, value), base_dir)
        out = Path(out_dir) if out_dir is not None else Path.cwd() / f"{spec.name}-sweep"
        text = spec_text(absolute_tables(data, base_dir), "spec.toml", "written by ductgen design")
        started = time.time()

        def work() -> dict[str, Any]:
            with tempfile.TemporaryDirectory(prefix="ductgen-page-") as tmp:
                path = Path(tmp) / f"{spec.name}.toml"
                path.write_text(text, encoding="utf-8")

                def progress(_r: Any, done: int, failed: int, total: int) -> None:
                    self._stage(f"{done} of {total} variants ({failed} failed)", done, total)

                result = run_sweep(path, [vary], out, only=only, progress=progress)
            failed = [f"{r.id}: {r.error}" for r in result.failed]
            html = result.files.get("html")
            page = html.name if html is not None else "comparison.html"
            return {
                "page": page,
                "failed": failed,
                "variants": len(result.results),
                "written": written_since(out, started),
            }

        return self._start("sweep", spec.name, out, work)
