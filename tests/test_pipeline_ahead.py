"""Work a build starts ahead (the template on a thread, the jig and the preview's picture in
the side worker): the files are the same bytes as when every stage does its own work, and
an ahead job's failure is the build's failure at that output's stage, with nothing
published."""

from __future__ import annotations

import dataclasses
from concurrent.futures import Future
from pathlib import Path

import pytest

from ductgen.errors import ExportError, GeometryError
from ductgen.pipeline import build
from ductgen.spec import load_spec, parse_spec
from tests.conftest import ROOT


def test_a_failed_template_thread_fails_the_build_and_publishes_nothing(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    import ductgen.pipeline.builder as builder

    def broken(*_args: object) -> dict[str, bytes]:
        raise ExportError("template: the disk is full (test)")

    monkeypatch.setattr(builder, "template_bytes", broken)
    spec = parse_spec({"name": "tt", "throat": {"width": 80, "depth": 20}})
    stages: list[str] = []
    with pytest.raises(ExportError, match="disk is full"):
        build(spec, tmp_path / "out", only=["template"], cache=False, progress=stages.append)
    assert stages[-1] == "template"  # raised at its own stage, as when drawn there
    assert not (tmp_path / "out").exists() or not any((tmp_path / "out").iterdir())


@pytest.mark.slow
def test_work_ahead_and_beside_gives_the_same_bytes(tmp_path: Path) -> None:
    """The kitcar sample (curved: template, jig and picture all started ahead; the insert
    placed on the skin in the kernel worker and handed to the side worker for its check and
    STL) built with the side worker and without it: every file the same, byte for byte (the
    STEP files too: before each statement was written on one line, the kernel's writer
    broke a few lines at other places in a worker that had written other files)."""
    spec = load_spec(ROOT / "samples" / "kitcar-bonnet-intake.toml")
    only = ["cutter", "insert", "template", "sheet", "jig"]
    build(spec, tmp_path / "a", only=only, cache=False)
    build(spec, tmp_path / "b", only=only, cache=False, beside=False)
    a = {p.name: p.read_bytes() for p in sorted((tmp_path / "a").iterdir())}
    b = {p.name: p.read_bytes() for p in sorted((tmp_path / "b").iterdir())}
    assert sorted(a) == sorted(b) and "kitcar-bonnet-intake-jig.step" in a
    assert "kitcar-bonnet-intake-insert-part3.stl" in a
    assert [n for n in a if a[n] != b[n]] == []


@pytest.mark.slow
def test_solids_built_beside_give_the_same_bytes(tmp_path: Path) -> None:
    """The cutter handed from the kernel worker to the side worker as a binary B-rep, checked
    and written there with the plug while the kernel worker cuts the insert with it; the
    insert handed over the same way, checked and its STL written there while the kernel
    worker writes its STEP; the insert's split started before the record, and the sheet
    drawn on a thread while the split runs: every file (report and sheet too) the same
    bytes as when one worker builds all three and every stage does its own work."""
    spec = load_spec(ROOT / "samples" / "club-racer-brake.toml")
    only = ["cutter", "insert", "plug", "template", "sheet"]
    build(spec, tmp_path / "a", only=only, cache=False)
    build(spec, tmp_path / "b", only=only, cache=False, beside=False)
    a = {p.name: p.read_bytes() for p in sorted((tmp_path / "a").iterdir())}
    b = {p.name: p.read_bytes() for p in sorted((tmp_path / "b").iterdir())}
    assert sorted(a) == sorted(b) and "club-racer-brake-insert-part2.step" in a
    assert "club-racer-brake-sheet.pdf" in a and "report.json" in a
    assert [n for n in a if a[n] != b[n]] == []


class _Blocking:
    """A stand-in kernel worker whose job waits until it is stopped (or, ``block`` False,
    returns at once)."""

    def __init__(self, block: bool = True) -> None:
        import threading

        self.block = block
        self.stopped = threading.Event()

    def run(self, *_args: object) -> None:
        if self.block and not self.stopped.wait(30):
            raise AssertionError("the build waited for a job it should have stopped")

    def stop(self) -> None:
        self.stopped.set()


def test_a_failed_build_stops_the_workers_of_its_unfinished_jobs_only() -> None:
    """A build that fails while a job it started ahead still runs in a worker (the insert's
    split in the kernel worker) stops that worker instead of waiting for the job; a worker
    whose job has finished is left running."""
    import contextlib

    from ductgen.pipeline.ahead import Ahead
    from ductgen.worker import WorkerLimits

    busy, done = _Blocking(), _Blocking(block=False)
    with pytest.raises(RuntimeError, match="record failed"), contextlib.ExitStack() as exits:
        ahead = Ahead(exits, WorkerLimits(), beside=True)
        ahead.run_in("finished", done, print).result()  # type: ignore[arg-type]
        ahead.start("split", busy.run, stops=busy)  # type: ignore[arg-type]
        raise RuntimeError("record failed (test)")
    assert busy.stopped.is_set() and not done.stopped.is_set()


class _Failing:
    """A stand-in kernel worker that hands over a cutter (and, unless the insert's build
    fails, the insert) and fails its other job at ``stage``."""

    def __init__(self, stage: str) -> None:
        self.stage = stage

    def run(self, job: object, *args: object) -> object:
        from ductgen.solids.handoff import flat_solid_job

        if job is flat_solid_job and (args[1] == "cutter" or self.stage != "insert"):
            return f"{args[1]} (test)".encode()
        raise GeometryError(self.stage, "failed (test)")


@pytest.mark.parametrize(
    ("main", "side", "check", "raised"),
    [
        ("insert", "cutter check", None, "cutter check"),  # the cutter comes before the insert
        ("insert STEP", "plug", None, "insert STEP"),  # the insert before the plug
        ("insert STEP", "plug", "insert check", "insert check"),  # its check before its STEP
    ],
)
def test_solids_beside_raise_the_first_kinds_error(
    main: str, side: str, check: str | None, raised: str
) -> None:
    """When the kernel worker's insert and the side worker's jobs (the other kinds, the
    insert's check) fail, the error is the one a single worker building the kinds in order,
    each checked before it is written, would have raised first."""
    from ductgen.design import build_design
    from ductgen.pipeline.solid_cache import SolidStage
    from ductgen.solids.handoff import insert_bodies_job

    design = build_design(parse_spec({"name": "tt", "throat": {"width": 80, "depth": 20}}))

    def beside(
        job: object, *args: object, picture: bool = True, wanted: object = None
    ) -> Future[object]:
        done: Future[object] = Future()
        if job is insert_bodies_job:  # the insert's outer body, made beside
            done.set_result(b"bodies (test)")
            return done
        stage = check if args[1] == ["insert"] else side
        if stage is None:
            done.set_result({})
        else:
            done.set_exception(GeometryError(stage, "failed (test)"))
        return done

    stage = SolidStage(None, design, "normal", _Failing(main))  # type: ignore[arg-type]
    with pytest.raises(GeometryError) as err:
        stage.solids(["cutter", "insert", "plug"], "tt", Path("."), beside)
    assert err.value.stage == raised


@dataclasses.dataclass(frozen=True)
class _Made:
    """A stand-in for a kind's result (the build adds its own seconds to it)."""

    seconds: dict[str, float]


def _made(kinds: list[str]) -> Future[object]:
    """The side worker's finished job: a stand-in result for each of ``kinds``."""
    done: Future[object] = Future()
    done.set_result({k: _Made({}) for k in kinds})
    return done


def _cutter_insert_plug(worker: object, beside: object) -> None:
    """The solids stage of a small flat design run with the stand-in ``worker`` and
    ``beside``: the three kinds come back in their order."""
    from ductgen.design import build_design
    from ductgen.pipeline.solid_cache import SolidStage

    design = build_design(parse_spec({"name": "tt", "throat": {"width": 80, "depth": 20}}))
    stage = SolidStage(None, design, "normal", worker)  # type: ignore[arg-type]
    got = stage.solids(["cutter", "insert", "plug"], "tt", Path("."), beside)  # type: ignore[arg-type]
    assert list(got) == ["cutter", "insert", "plug"]


@pytest.mark.parametrize("bodies_fail", [False, True])
def test_the_insert_takes_its_outer_body_made_beside(bodies_fail: bool) -> None:
    """On a flat skin the side worker makes the insert's outer body while the kernel worker
    builds the cutter, and the insert's job gets it with the cutter; when that job failed,
    the insert's job gets the cutter alone (it makes the body itself, and raises the error
    itself if it fails again). The side worker's other jobs never see the body."""
    from ductgen.solids.handoff import flat_solid_job, insert_bodies_job
    from ductgen.solids.jobs import build_solids
    from ductgen.solids.kinds import INSERT_BODIES

    flats_seen: list[dict[str, bytes]] = []

    class _Worker:  # the kernel worker: the cutter, the insert, then the insert's STEP
        def run(self, job: object, *args: object) -> object:
            if job is flat_solid_job:
                if args[1] == "insert":
                    flats_seen.append(dict(args[2]))  # type: ignore[call-overload]
                return f"{args[1]} (test)".encode()
            return {"step_s": 0.0}

    def beside(
        job: object, *args: object, picture: bool = True, wanted: object = None
    ) -> Future[object]:
        done: Future[object] = Future()
        if job is insert_bodies_job:
            assert not picture  # not the job after which the drawing stack is imported
            if bodies_fail:
                done.set_exception(GeometryError("insert", "failed (test)"))
            else:
                done.set_result(b"bodies (test)")
        else:
            assert job is build_solids and INSERT_BODIES not in (args[5] or {})  # type: ignore[operator]
            return _made(args[1])  # type: ignore[arg-type]
        return done

    _cutter_insert_plug(_Worker(), beside)
    want = {"cutter": b"cutter (test)"}
    if not bodies_fail:
        want[INSERT_BODIES] = b"bodies (test)"
    assert flats_seen == [want]


@pytest.mark.parametrize("plug_fails", [False, True])
def test_the_kernel_worker_builds_the_plug_while_the_outer_body_is_made(
    plug_fails: bool,
) -> None:
    """When the insert's outer body is still being made beside once the cutter is built,
    the kernel worker builds the plug meanwhile and the side worker gets it among the solids
    it checks and writes (built, not built again); the insert's job does not get it. A plug
    that fails there is left to the side worker, which builds it and raises its error in
    the order of the kinds."""
    from ductgen.solids.handoff import flat_solid_job, insert_bodies_job
    from ductgen.solids.jobs import build_solids
    from ductgen.solids.kinds import INSERT_BODIES

    order: list[str] = []
    insert_flats: list[dict[str, bytes]] = []
    side_flats: list[dict[str, bytes]] = []
    bodies: Future[object] = Future()  # not done until the plug has been asked for

    class _Worker:
        def run(self, job: object, *args: object) -> object:
            if job is flat_solid_job:
                order.append(str(args[1]))
                if args[1] == "plug":
                    bodies.set_result(b"bodies (test)")
                    if plug_fails:
                        raise GeometryError("plug", "failed (test)")
                if args[1] == "insert":
                    insert_flats.append(dict(args[2]))  # type: ignore[call-overload]
                return f"{args[1]} (test)".encode()
            return {"step_s": 0.0}

    def beside(
        job: object, *args: object, picture: bool = True, wanted: object = None
    ) -> Future[object]:
        if job is insert_bodies_job:
            return bodies
        assert job is build_solids
        if args[1] != ["insert"]:
            side_flats.append(dict(args[5] or {}))  # type: ignore[call-overload]
        return _made(args[1])  # type: ignore[arg-type]

    _cutter_insert_plug(_Worker(), beside)
    assert order == ["cutter", "plug", "insert"]
    assert insert_flats == [{"cutter": b"cutter (test)", INSERT_BODIES: b"bodies (test)"}]
    want = {"cutter": b"cutter (test)"}
    if not plug_fails:
        want["plug"] = b"plug (test)"
    assert side_flats == [want]


@pytest.mark.parametrize("side_started", [False, True])
def test_the_kernel_worker_takes_over_an_outer_body_not_started_beside(
    side_started: bool,
) -> None:
    """A side worker still importing when the kernel worker has built the cutter and the
    plug (a command line's first build) has not started on the insert's outer body: the
    kernel worker takes it over (the insert's job makes it), and the side worker, once free,
    is told not to run it. Had the side worker started on it, the kernel worker waits for
    it and the insert gets it."""
    from ductgen.solids.handoff import flat_solid_job, insert_bodies_job
    from ductgen.solids.jobs import build_solids
    from ductgen.solids.kinds import INSERT_BODIES

    insert_flats: list[dict[str, bytes]] = []
    asked: list[bool] = []
    bodies: Future[object] = Future()
    wanted: list[object] = []

    class _Worker:
        def run(self, job: object, *args: object) -> object:
            if job is flat_solid_job and args[1] == "plug" and side_started:
                bodies.set_result(b"bodies (test)")  # the side worker finished it meanwhile
            if job is flat_solid_job and args[1] == "insert":
                insert_flats.append(dict(args[2]))  # type: ignore[call-overload]
            if job is flat_solid_job:
                return f"{args[1]} (test)".encode()
            return {"step_s": 0.0}

    def beside(job: object, *args: object, picture: bool = True, **kw: object) -> Future[object]:
        if job is insert_bodies_job:
            wanted.append(kw["wanted"])
            if side_started:  # the side worker free at once: it starts the body
                asked.append(kw["wanted"]())  # type: ignore[operator]
            return bodies
        assert job is build_solids
        return _made(args[1])  # type: ignore[arg-type]

    _cutter_insert_plug(_Worker(), beside)
    if side_started:
        assert asked == [True]
        assert insert_flats == [{"cutter": b"cutter (test)", INSERT_BODIES: b"bodies (test)"}]
    else:
        assert insert_flats == [{"cutter": b"cutter (test)"}]  # made by the insert's job
        assert wanted[0]() is False  # type: ignore[operator]  # the side worker skips it


def test_work_started_once_runs_once_from_any_thread() -> None:
    """The preview's picture is started as soon as the insert is checked (on the side
    worker's thread) or when the solids are built, whichever comes first: the second start
    gets the first one's future and runs nothing."""
    import contextlib
    import threading

    from ductgen.pipeline.ahead import Ahead
    from ductgen.worker import WorkerLimits

    runs: list[int] = []
    with contextlib.ExitStack() as exits:
        ahead = Ahead(exits, WorkerLimits(), beside=True)
        threads = [
            threading.Thread(target=ahead.start_once, args=("picture", runs.append, k))
            for k in range(8)
        ]
        for t in threads:
            t.start()
        for t in threads:
            t.join()
        first = ahead.futures["picture"]
        assert ahead.start_once("picture", runs.append, 99) is first
        first.result()
    assert len(runs) == 1


def test_a_mapped_insert_is_placed_once_and_told_written_before_the_other_kinds() -> None:
    """On a curved skin the kernel worker builds the insert and places it on the skin
    (the map takes seconds: once), hands both solids over for the check and the STL, and
    writes the STEP from the placed one; the build is told the insert is written (and
    starts its split) as soon as that STEP and the check are done, not when the side
    worker's other kinds (cutter, plug) are."""
    import threading

    import numpy as np

    from ductgen.design import build_design
    from ductgen.pipeline.solid_cache import SolidStage
    from ductgen.solids.handoff import flat_solid_job, placed_solid_job, step_solid_job
    from ductgen.solids.jobs import build_solids
    from ductgen.solids.results import Mesh, SolidResult

    skin = {"shape": "cylinder", "radius": 1400, "axis": "spanwise", "thickness": 3}
    spec = parse_spec({"name": "tt", "throat": {"width": 80, "depth": 20}, "skin": skin})
    design = build_design(spec)
    assert not design.skin.is_flat
    mesh = Mesh(np.zeros((0, 3), dtype="float32"), np.zeros((0, 3), dtype="int32"))
    insert = SolidResult(1.0, None, 1.0, 1.0, 1, (0.1, 0.1), "i.step", "i.stl", mesh)
    kernel_jobs: list[object] = []

    class _Worker:
        def run(self, job: object, *args: object) -> object:
            kernel_jobs.append(job)
            if job is flat_solid_job:
                return b"cutter (test)"
            if job is placed_solid_job:
                return b"insert flat", b"insert placed"
            assert job is step_solid_job and args[-1] == b"insert placed", (job, args)
            return {"step_s": 0.5}

    side: Future[object] = Future()
    others = {"cutter": "cutter (test)", "plug": "plug (test)"}
    lock, told = threading.Lock(), []
    checks: list[tuple[object, ...]] = []

    def beside(job: object, *args: object) -> Future[object]:
        if args[1] != ["insert"]:
            return side
        assert job is build_solids
        checks.append(args)
        checked: Future[object] = Future()
        checked.set_result({"insert": insert})
        return checked

    def finish(by: object) -> None:
        with lock:
            if not side.done():
                told.append(by)
                side.set_result(others)

    stage = SolidStage(None, design, "normal", _Worker())  # type: ignore[arg-type]
    late = threading.Timer(5.0, finish, ("the side worker",))  # so a wrong order fails
    late.start()
    got = stage.solids(["cutter", "insert", "plug"], "tt", Path("."), beside, None, finish)
    late.cancel()
    assert kernel_jobs == [flat_solid_job, placed_solid_job, step_solid_job]
    # the check is handed both solids: the flat one and the placed one, not placed again
    assert [(c[5], c[6], c[7]) for c in checks] == [
        ({"insert": b"insert flat"}, False, {"insert": b"insert placed"})
    ]
    assert told == [got["insert"]]  # not "the side worker"
    assert got["insert"].seconds["step_s"] == 0.5 and got["cutter"] == "cutter (test)"
