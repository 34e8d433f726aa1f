"""The recovery-map campaign: ``ductgen cfd`` over ramp angle, W/D, δ/D and IVR (not a test;
long: one coarse case is minutes to tens of minutes on two shared cores).

A plan of points (a scrambled Sobol design in four variables, fixed seed, written once to
``bench/results/recovery_campaign/plan.csv``) is turned into one spec per point
(``specs/pNNN.toml``: flat skin, the standard wall table, a flush lip, no outlet duct), and
each spec is run with ``ductgen cfd``. The result of a point (inputs, the whole ``cfd``
section, the exact command, the OpenFOAM version, the ductgen commit, the settings
fingerprint, the times) is written atomically to ``<fingerprint>/pNNN.json``; finished points
are skipped on the next run, so the campaign resumes where it stopped. Points run with
other CFD settings (a different fingerprint: the source of ``ductgen/cfd/``, the mesh level,
the OpenFOAM version and this campaign's fixed design values) go into another folder and are
never mixed.

How each variable is set through the spec (the map's inputs are the values the run gives,
not the targets):

- ramp angle: ``ramp.angle_deg``;
- W/D: ``throat.width`` over a fixed ``throat.depth`` (:data:`DEPTH_MM`);
- δ/D: ``flow.run_length`` at a fixed speed (the flat-plate law the 1-D model and the case's
  inlet profile both use); the run is never shorter than the case's upstream box, so the
  layer at the ramp start is the 1-D model's (a low δ/D target on a long ramp is raised to
  that minimum, and the value reached is recorded);
- IVR: the pressure the duct system asks at the outlet, ``exit_cp`` + (1 + K)·IVR² of the
  free-stream head with a cooler of loss coefficient K on the throat area, chosen so that a
  guessed recovery balances at the target IVR; the solver finds its own operating point and
  its measured IVR is recorded.

Run (from the checkout)::

    nice -n 19 python bench/recovery_campaign.py run [-j 1] [--np 2] [--limit N]
    python bench/recovery_campaign.py run --scheduler tcp://host:8786   # a Dask cluster
    python bench/recovery_campaign.py status
    nice -n 19 python bench/recovery_campaign.py line --var ramp_angle_deg --values 5,7,9,11 \
        --mesh medium      # one variable through the ranges' centre, the others held
    nice -n 19 python bench/recovery_campaign.py line --turbulence kOmega   # Wilcox's k-ω
    python bench/recovery_campaign.py lines   # every line point beside the map (lines.csv)
    python bench/recovery_campaign.py collect [--fingerprint FP] [--to-data]

On a Dask cluster every worker must see this checkout and the ``--work`` folder at the same
paths (a shared file system), and have OpenFOAM installed.
"""

from __future__ import annotations

import argparse
import csv
import datetime as dt
import hashlib
import json
import math
import os
import shlex
import socket
import subprocess
import sys
import time
from collections.abc import Callable, Iterable
from concurrent.futures import Executor, Future, ThreadPoolExecutor, as_completed
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # this checkout's package, not an installed one

RESULTS = ROOT / "bench" / "results" / "recovery_campaign"
PLAN = RESULTS / "plan.csv"
SPECS = RESULTS / "specs"
DATA_CSV = ROOT / "ductgen" / "data" / "recovery_map.csv"

#: Changes whenever this file changes how a point's spec is made (part of the fingerprint).
CAMPAIGN_VERSION = 1
#: The design of experiments: scrambled Sobol points (scipy.stats.qmc), fixed seed; 64 = 2^6
#: so the first 16 and 32 points are balanced sub-designs too.
N_POINTS = 64
SEED = 20261202
#: Ranges of the four variables (targets).
RANGES = {
    "ramp_angle_deg": (5.0, 11.0),
    "width_over_depth": (2.0, 6.0),
    "delta_over_depth": (0.1, 1.5),
    "ivr": (0.3, 1.1),
}
#: Fixed design values of every point (mm, m/s, m).
DEPTH_MM = 20.0
LIP_THICKNESS_MM = 2.0
SPEED_M_S = 40.0
ALTITUDE_M = 0.0
MESH = "coarse"
#: Guess of the CFD recovery for choosing the outlet pressure: the capture estimate with a
#: loss factor of 0.85 (what the project's coarse CFD of three samples implied; no source).
GUESS_LOSS_FACTOR = 0.85


# ---------------------------------------------------------------------------------- plan
def make_plan() -> list[dict[str, Any]]:
    """The DOE points (targets), from the fixed seed."""
    from scipy.stats import qmc

    unit = qmc.Sobol(d=4, scramble=True, seed=SEED).random_base2(int(math.log2(N_POINTS)))
    keys = list(RANGES)
    lo = [RANGES[k][0] for k in keys]
    hi = [RANGES[k][1] for k in keys]
    pts = qmc.scale(unit, lo, hi)
    return [
        {"point": f"p{i:03d}", **{k: round(float(v), 4) for k, v in zip(keys, row, strict=True)}}
        for i, row in enumerate(pts)
    ]


def read_plan() -> list[dict[str, Any]]:
    """The plan file (written on first use; never rewritten, so the points stay the same)."""
    if not PLAN.is_file():
        RESULTS.mkdir(parents=True, exist_ok=True)
        rows = make_plan()
        head = (
            f"# recovery-map campaign plan: {N_POINTS} scrambled Sobol points "
            f"(scipy.stats.qmc.Sobol, d=4, seed={SEED}), targets scaled to the ranges below\n"
            + "".join(f"# {k}: {a:g} to {b:g}\n" for k, (a, b) in RANGES.items())
        )
        with PLAN.open("w", newline="") as fh:
            fh.write(head)
            w = csv.DictWriter(fh, fieldnames=["point", *RANGES])
            w.writeheader()
            w.writerows(rows)
    lines = [ln for ln in PLAN.read_text().splitlines() if not ln.startswith("#")]
    return [
        {k: (v if k == "point" else float(v)) for k, v in row.items()}
        for row in csv.DictReader(lines)
    ]


def _run_length_for(delta_m: float, speed: float, nu: float) -> float:
    """Run (m) whose flat-plate δ = 0.37 x Re_x^-0.2 (the 1-D model's law) is ``delta_m``."""
    # δ = 0.37 x^0.8 (V/ν)^-0.2  →  x = (δ / 0.37 · (V/ν)^0.2)^(1/0.8)
    return (delta_m / 0.37 * (speed / nu) ** 0.2) ** 1.25


def point_spec(p: dict[str, Any]) -> str:
    """The spec (TOML text) of one plan point."""
    import tomllib

    from ductgen.design.build import geometry_from_spec
    from ductgen.flow.atmosphere import standard_air
    from ductgen.flow.recovery import CaptureRecovery
    from ductgen.spec.load import parse_spec

    d = DEPTH_MM
    w = round(p["width_over_depth"] * d, 3)
    air = standard_air(ALTITUDE_M, 0.0, None)
    nu = air.kinematic_viscosity_m2_s
    geo_text = _spec_text(p["point"], w, p["ramp_angle_deg"], 1.0, 0.0, None)
    length_m = geometry_from_spec(parse_spec(tomllib.loads(geo_text))).length_mm * 1e-3
    run = _run_length_for(p["delta_over_depth"] * d * 1e-3, SPEED_M_S, nu)
    run = max(run, 0.5 * length_m * 1.02)  # never inside the case's upstream box (module doc)
    delta = 0.37 * run * (SPEED_M_S * run / nu) ** -0.2
    ivr = p["ivr"]
    guess = CaptureRecovery(delta / (d * 1e-3), GUESS_LOSS_FACTOR)(ivr)
    # outlet total pressure asked ≈ (exit_cp + (1 + K) IVR²) q∞ (module doc)
    k = guess / ivr**2 - 1.0
    if k >= 0.05:
        exit_cp, cooler = 0.0, round(k, 4)
    else:
        exit_cp, cooler = round(guess - ivr**2, 4), None
    return _spec_text(p["point"], w, p["ramp_angle_deg"], run, exit_cp, cooler)


def _spec_text(
    name: str, width: float, angle: float, run: float, exit_cp: float, cooler: float | None
) -> str:
    area = width * DEPTH_MM * 1e-6
    loss = (
        f'losses = [ {{ kind = "cooler", k = {cooler:.6g}, face_area = "{area:.9g} m^2" }} ]\n'
        if cooler is not None
        else ""
    )
    return (
        "# recovery-map campaign point (bench/recovery_campaign.py): flat skin, standard walls,\n"
        "# flush lip, no outlet duct; the outlet pressure sets the inlet velocity ratio\n"
        f'name = "rc-{name}"\n\n'
        f"throat = {{ width = {width:.6g}, depth = {DEPTH_MM:g} }}\n"
        f"ramp   = {{ angle_deg = {angle:.6g} }}\n"
        f'lip    = {{ style = "flush", thickness = {LIP_THICKNESS_MM:g}, nose_ratio = 2.0 }}\n'
        'outlet = { kind = "none" }\n'
        "skin   = { thickness = 1.0 }\n\n"
        "[flow]\n"
        f'speed = "{SPEED_M_S:g} m/s"\n'
        f'altitude = "{ALTITUDE_M:g} m"\n'
        f'run_length = "{run:.6g} m"\n'
        f"exit_cp = {exit_cp:.6g}\n" + loss
    )


def write_specs(plan: list[dict[str, Any]]) -> None:
    SPECS.mkdir(parents=True, exist_ok=True)
    for p in plan:
        path = SPECS / f"{p['point']}.toml"
        text = point_spec(p)
        if not path.is_file() or path.read_text() != text:
            path.write_text(text)


# ------------------------------------------------------------------------------- settings
def openfoam_version() -> str:
    """The Debian package's version of OpenFOAM (or simpleFoam's own banner)."""
    try:
        out = subprocess.run(
            ["dpkg-query", "-W", "-f", "${Version}", "openfoam"],
            capture_output=True, text=True, timeout=30, check=False,
        )  # fmt: skip
        if out.returncode == 0 and out.stdout.strip():
            return f"openfoam (Debian package) {out.stdout.strip()}"
    except OSError:
        pass
    try:
        out = subprocess.run(
            ["simpleFoam", "-help"], capture_output=True, text=True, timeout=60, check=False
        )
        for line in out.stdout.splitlines():
            if "OpenFOAM" in line or "Build" in line:
                return line.strip()
    except OSError:
        pass
    return "unknown"


def git_commit() -> str:
    """HEAD of this checkout (the campaign runs a snapshot of it, see :func:`snapshot`)."""
    r = subprocess.run(["git", "rev-parse", "HEAD"], cwd=ROOT, capture_output=True, text=True)
    return r.stdout.strip()


def snapshot(work: Path, commit: str) -> Path:
    """The committed ``ductgen`` package at ``commit``, unpacked once into ``work``: the
    points run this frozen copy, so editing the checkout while the campaign runs changes
    nothing, and the recorded commit is exactly the code that ran."""
    code = work / f"code-{commit[:12]}"
    if not (code / "ductgen" / "__init__.py").is_file():
        tmp = work / f".code-{commit[:12]}.{os.getpid()}"
        tmp.mkdir(parents=True, exist_ok=True)
        arch = subprocess.run(
            ["git", "archive", commit, "ductgen"], cwd=ROOT, capture_output=True, check=True
        ).stdout
        subprocess.run(["tar", "-x", "-C", str(tmp)], input=arch, check=True)
        os.replace(tmp, code)
    return code


def settings(code: Path, mesh: str = MESH, turbulence: str = "kOmegaSST") -> dict[str, Any]:
    """What a point's numbers depend on besides its own four variables; its hash is the
    fingerprint that keeps points of different settings apart (``code``: the snapshot;
    ``mesh``: the mesh level of the points, the campaign's own by default; ``turbulence``:
    the RAS model, ``ductgen cfd --turbulence``)."""
    src = hashlib.sha256()
    for path in sorted((code / "ductgen" / "cfd").glob("*.py")):
        src.update(path.name.encode() + b"\0" + path.read_bytes() + b"\0")
    return {
        "campaign_version": CAMPAIGN_VERSION,
        "mesh": mesh,
        "turbulence": turbulence,
        "openfoam": openfoam_version(),
        "ductgen_cfd_source_sha256": src.hexdigest(),
        "depth_mm": DEPTH_MM,
        "lip_thickness_mm": LIP_THICKNESS_MM,
        "speed_m_s": SPEED_M_S,
        "altitude_m": ALTITUDE_M,
        "skin": "flat",
        "planform": "naca-standard",
        "outlet": "none",
    }


def solver_settings(code: Path) -> dict[str, Any]:
    """The case dictionaries' templates of the snapshot (meshing, schemes, solution,
    turbulence; ``{name}`` fields are filled per point), the mesh levels, layers and
    iteration caps: the solver settings stored beside the points (their source's hash is
    in the fingerprint)."""
    script = (
        "import json; from ductgen.cfd import templates as T, case as C\n"
        "print(json.dumps({'dictionaries': {k: {'path': v[0], 'template': v[3]} "
        "for k, v in T.FILES.items()}, 'fan_curve': T.FAN_CURVE, 'flavour': T.FLAVOUR, "
        "'levels': C.LEVELS, 'layers': C.LAYERS, 'max_iterations': C.MAX_ITERATIONS, "
        "'coarse_cells_per_depth': C.COARSE_CELLS_PER_DEPTH, "
        "'refinement_ratio': C.REFINEMENT_RATIO, 'extension_diameters': C.EXTENSION_DIAMETERS}))"
    )
    out = subprocess.run(
        [sys.executable, "-c", script], cwd=code, env={**os.environ, "PYTHONPATH": str(code)},
        capture_output=True, text=True, check=True,
    )  # fmt: skip
    return json.loads(out.stdout)


def fingerprint(s: dict[str, Any]) -> str:
    return hashlib.sha256(json.dumps(s, sort_keys=True).encode()).hexdigest()[:12]


def write_json_atomic(path: Path, data: dict[str, Any]) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    tmp.write_text(json.dumps(data, indent=1, allow_nan=False) + "\n")
    os.replace(tmp, path)


# ------------------------------------------------------------------------------ one point
def run_point(task: dict[str, Any]) -> dict[str, Any]:
    """Run ``ductgen cfd`` on one point (in a worker: a thread here, a Dask worker on a
    cluster); returns the result record, never raises."""
    work = Path(task["work"]) / task["point"]
    work.mkdir(parents=True, exist_ok=True)
    if Path(task["result"]).is_file() or not _claim(work / "claim"):
        return {"point": task["point"], "skipped": True}
    try:
        rec = {**_run_claimed(task, work), **task["record"], "spec_text": task["spec_text"]}
        rec["finished_utc"] = dt.datetime.now(dt.timezone.utc).isoformat(timespec="seconds")
        result = Path(task["result"])
        failed = result.with_name(f"{task['point']}.failed.json")
        if rec["exit_code"] == 0:
            rec["map_inputs"] = inputs_of(rec)
            write_json_atomic(result, rec)
            failed.unlink(missing_ok=True)
        else:
            write_json_atomic(failed, rec)
        return rec
    except Exception as err:  # a runner must go on with the other points
        return {"point": task["point"], "exit_code": -1, "error": [repr(err)]}
    finally:
        (work / "claim").unlink(missing_ok=True)


def _claim(path: Path) -> bool:
    """Take the point for this process (another runner on a cluster or beside this one may
    hold it); a claim left by a dead process on this host is taken over."""
    me = f"{socket.gethostname()} {os.getpid()}"
    for _ in range(2):
        try:
            fd = os.open(path, os.O_CREAT | os.O_EXCL | os.O_WRONLY)
        except FileExistsError:
            host, _, pid = path.read_text().partition(" ")
            alive = host != socket.gethostname() or Path(f"/proc/{pid.strip()}").exists()
            if alive:
                return False
            path.unlink(missing_ok=True)
            continue
        os.write(fd, me.encode())
        os.close(fd)
        return True
    return False


def _run_claimed(task: dict[str, Any], work: Path) -> dict[str, Any]:
    spec_path = work / f"{task['point']}.toml"
    spec_path.write_text(task["spec_text"])
    out = work / "out"
    cmd = ["nice", "-n", "19"] if task["nice"] else []
    cmd += [sys.executable, "-m", "ductgen", "cfd", str(spec_path), "-o", str(out)]
    cmd += ["--mesh", task["mesh"], "--np", str(task["np"]), "--force", "--quiet"]
    if task.get("turbulence", "kOmegaSST") != "kOmegaSST":  # the older snapshots lack it
        cmd += ["--turbulence", task["turbulence"]]
    env = {**os.environ, "PYTHONPATH": task["code"]}
    started = dt.datetime.now(dt.timezone.utc).isoformat(timespec="seconds")
    t0 = time.perf_counter()
    res = subprocess.run(
        cmd, cwd=task["code"], env=env, capture_output=True, text=True, check=False
    )
    record: dict[str, Any] = {
        "point": task["point"],
        "command": shlex.join(cmd),
        "cwd": task["code"],
        "host": socket.gethostname(),
        "started_utc": started,
        "wall_s": round(time.perf_counter() - t0, 1),
        "exit_code": res.returncode,
    }
    if res.returncode != 0:
        record["error"] = (res.stderr or res.stdout).strip().splitlines()[-12:]
        return record
    try:
        cfd = json.loads((out / "cfd.json").read_text())
        rep = json.loads((out / "report.json").read_text())
    except (OSError, ValueError) as err:
        record["error"] = [f"cannot read the results: {err}"]
        record["exit_code"] = -1
        return record
    record["cfd"] = {k: v for k, v in cfd.items() if k != "pictures"}
    record["flow_1d"] = {
        k: rep["flow"].get(k)
        for k in ("delta_over_depth", "boundary_layer_thickness_m", "run_length_m",
                  "reynolds_run", "speed_m_s", "kinematic_viscosity_m2_s", "density_kg_m3",
                  "inlet_velocity_ratio", "ram_recovery", "volume_flow_m3_s", "exit_cp")
    }  # fmt: skip
    g = rep.get("geometry", {})
    record["geometry"] = {k: g.get(k) for k in ("ramp_angle_deg", "width_mm", "depth_mm",
                                                  "ramp_length_mm", "length_mm")}  # fmt: skip
    return record


def inputs_of(record: dict[str, Any]) -> dict[str, float]:
    """The map's four inputs as the run gave them, and the recovery it measured."""
    r = record["cfd"]["result"]
    f = record["flow_1d"]
    import tomllib

    spec = tomllib.loads(record["spec_text"])
    angle, width = float(spec["ramp"]["angle_deg"]), float(spec["throat"]["width"])
    return {
        "ramp_angle_deg": angle,
        "width_over_depth": width / DEPTH_MM,
        "delta_over_depth": float(f["delta_over_depth"]),
        "ivr": float(r["inlet_velocity_ratio"]),
        "ram_recovery": float(r["ram_recovery_flow_avg"]),
    }


# --------------------------------------------------------------------------- executors
def _executor(jobs: int, scheduler: str | None) -> tuple[Executor, Callable[[], None]]:
    if scheduler:
        from distributed import Client

        from ductgen.sweep.scheduler import check_scheduler

        check_scheduler(scheduler)
        client = Client(scheduler, timeout="20s")
        return client.get_executor(pure=False), client.close
    pool = ThreadPoolExecutor(max_workers=jobs)  # each point is a child process
    return pool, lambda: pool.shutdown(wait=True)


#: The centre of the map's ranges the lines run through (targets; ``line --at`` moves it).
LINE_CENTRE = {"ramp_angle_deg": 7.0, "width_over_depth": 4.0, "delta_over_depth": 0.5, "ivr": 0.8}


def line_plan(var: str, values: list[float], at: dict[str, float]) -> list[dict[str, Any]]:
    """Points along one variable through ``at`` (the others held): a trend read straight
    from the solver, beside the map's fit, at any mesh level. Named ``line-VAR-VALUE``."""
    if var not in RANGES:
        sys.exit(f"--var must be one of {', '.join(RANGES)}, not {var!r}")
    return [
        {
            "point": f"line-{var}-{v:06.2f}".replace(".", "_"),
            **{**LINE_CENTRE, **at, var: round(float(v), 4)},
        }
        for v in values
    ]


def _line_args(args: argparse.Namespace) -> list[dict[str, Any]]:
    at: dict[str, float] = {}
    for item in filter(None, (args.at or "").split(",")):
        key, _, val = item.partition("=")
        if key not in RANGES:
            sys.exit(f"--at: {key!r} is not one of {', '.join(RANGES)}")
        at[key] = float(val)
    return line_plan(args.var, [float(v) for v in args.values.split(",")], at)


def _run(args: argparse.Namespace) -> None:
    plan = _line_args(args) if args.cmd == "line" else read_plan()
    if args.cmd == "line":
        SPECS.mkdir(parents=True, exist_ok=True)
        for p in plan:
            (SPECS / f"{p['point']}.toml").write_text(point_spec(p))
    else:
        write_specs(plan)
    commit = git_commit()
    work = Path(args.work).resolve()
    code = snapshot(work, commit)
    mesh = args.mesh if args.cmd == "line" else MESH
    turbulence = args.turbulence if args.cmd == "line" else "kOmegaSST"
    s = settings(code, mesh, turbulence)
    fp = fingerprint(s)
    folder = RESULTS / fp
    write_json_atomic(folder / "settings.json", {"fingerprint": fp, **s})
    if not (folder / "solver_settings.json").is_file():
        write_json_atomic(folder / "solver_settings.json", solver_settings(code))
    done = {p.stem for p in folder.glob("p[0-9][0-9][0-9].json")}
    done |= {p.stem for p in folder.glob("line-*.json") if ".failed" not in p.name}
    failed = {p.name.split(".")[0] for p in folder.glob("p*.failed.json")}
    todo = [p for p in plan if p["point"] not in done]
    if not args.retry_failed:
        todo = [p for p in todo if p["point"] not in failed]
    if args.points:
        want = set(args.points.split(","))
        todo = [p for p in todo if p["point"] in want]
    if args.limit is not None:
        todo = todo[: args.limit]
    if args.cmd == "study":
        todo = [p for p in plan if p["point"] == args.point]
        if not todo:
            sys.exit(f"no point {args.point} in the plan")
    else:
        print(f"settings {fp}: {len(done)} done, {len(failed)} failed, {len(todo)} to run")
    if not todo:
        return
    tasks = [
        {
            "point": p["point"] if args.cmd != "study" else f"study-{p['point']}",
            "spec_text": (SPECS / f"{p['point']}.toml").read_text(),
            "work": str(work / fp),
            "code": str(code),
            "result": str(
                folder
                / (f"{p['point']}.json" if args.cmd != "study" else f"study-{p['point']}.json")
            ),
            "mesh": {"run": MESH, "line": mesh}.get(args.cmd, "study"),
            "np": args.np,
            "turbulence": turbulence,
            "nice": not args.no_nice,
            "record": {
                "plan_target": p,
                "spec_file": str((SPECS / f"{p['point']}.toml").relative_to(ROOT)),
                "fingerprint": fp,
                "settings": s,
                "ductgen_commit": commit,
            },
        }
        for p in todo
    ]
    ex, close = _executor(args.jobs, args.scheduler)
    try:
        futures: list[Future[Any]] = [ex.submit(run_point, t) for t in tasks]
        for fut in as_completed(futures):
            rec = fut.result()
            pid = rec["point"]
            if rec.get("skipped"):
                print(f"{pid} skipped: done or held by another runner", flush=True)
            elif rec["exit_code"] == 0:
                m = rec["map_inputs"]
                print(
                    f"{pid} done in {rec['wall_s'] / 60:.1f} min: IVR {m['ivr']:.3f} "
                    f"recovery {m['ram_recovery']:.3f} (delta/D {m['delta_over_depth']:.2f})",
                    flush=True,
                )
            else:
                print(f"{pid} FAILED: {' | '.join(rec.get('error', []))[-400:]}", flush=True)
    finally:
        close()


# ------------------------------------------------------------------------------ collect
COLUMNS = (
    "point", "ramp_angle_deg", "width_over_depth", "delta_over_depth", "ivr", "ram_recovery",
    "ram_recovery_area_avg", "cells", "iterations", "plateau", "flow_iterative_spread",
    "mass_balance_error", "layer_coverage",
)  # fmt: skip


def records(fp: str) -> list[dict[str, Any]]:
    return [json.loads(p.read_text()) for p in sorted((RESULTS / fp).glob("p[0-9][0-9][0-9].json"))]


def table_rows(recs: Iterable[dict[str, Any]]) -> list[dict[str, Any]]:
    rows = []
    for rec in recs:
        r = rec["cfd"]["result"]
        m = rec["map_inputs"]
        rows.append(
            {
                "point": rec["point"],
                **{k: round(m[k], 5) for k in COLUMNS[1:6]},
                "ram_recovery_area_avg": round(r["ram_recovery_area_avg"], 5),
                "cells": r["cells"],
                "iterations": r["iterations"],
                "plateau": int(bool(r["plateau"])),
                "flow_iterative_spread": r.get("flow_iterative_spread"),
                "mass_balance_error": r.get("mass_balance_error"),
                "layer_coverage": r.get("layer_coverage"),
            }
        )
    return rows


def _collect(args: argparse.Namespace) -> None:
    fp = args.fingerprint or _current(args)
    recs = records(fp)
    if not recs:
        sys.exit(f"no finished points with settings {fp} in {RESULTS}")
    s = recs[0]["settings"]
    commits = sorted({r["ductgen_commit"] for r in recs})
    n_plan = len(read_plan())
    status = "complete" if len(recs) >= n_plan else f"PARTIAL campaign: {len(recs)} of {n_plan}"
    head = [
        "name: recovery-map",
        "title: ram recovery (flow-averaged total pressure on the throat plane above ambient "
        "static, over the free-stream dynamic pressure) of a flush inlet, from ductgen's own CFD",
        f"status: {status} points",
        "made by: bench/recovery_campaign.py run; then collect (one `ductgen cfd` per point, "
        "its exact command in the point's JSON in bench/results/recovery_campaign/"
        f"{fp}/)",
        f"command: python -m ductgen cfd SPEC -o DIR --mesh {s['mesh']} --np N --force "
        "(nice -n 19); SPEC = bench/results/recovery_campaign/specs/pNNN.toml",
        f"solver: {recs[0]['cfd']['solver']}; {s['openfoam']}",
        f"mesh: {s['mesh']} ({recs[0]['cfd']['result']['cells_across_throat_depth_core']:.1f} "
        "cells across the throat depth in the core, 5 prism layers asked)",
        f"settings fingerprint: {fp} (ductgen/cfd source sha256 "
        f"{s['ductgen_cfd_source_sha256'][:16]})",
        f"ductgen commits: {', '.join(commits)}",
        f"fixed: depth {s['depth_mm']:g} mm, flush lip {s['lip_thickness_mm']:g} mm, speed "
        f"{s['speed_m_s']:g} m/s at {s['altitude_m']:g} m (US Standard Atmosphere 1976), flat "
        "skin, naca-standard walls, no outlet duct, sharp ramp start",
        "inputs: ramp_angle_deg (spec), width_over_depth (spec), delta_over_depth (0.37 Re^-1/5 "
        "flat-plate thickness at the ramp start over D, the case's inlet profile's law), ivr "
        "(measured by the CFD: duct flow / (W D V))",
        "note: one turbulence model (k-omega SST) with wall functions on one mesh level per "
        "point; not a measurement",
    ]
    studies = sorted((RESULTS / fp).glob("study-p[0-9][0-9][0-9].json"))
    if args.mesh_study:  # a study made under other settings, named as such in the header
        studies = [Path(args.mesh_study)]
    for st in studies:  # the campaign's mesh uncertainty: the GCI study of one point
        g = json.loads(st.read_text())["cfd"]["study"]["ram_recovery_flow_avg"]
        other = st.parent.name != fp
        head += [
            f"mesh_uncertainty_rel: {g['uncertainty_rel']:.4g}",
            f"mesh uncertainty basis: {g['uncertainty_basis']} of the flow-averaged recovery, "
            f"coarse/medium/fine study of point {st.stem[6:]} (Celik et al. 2008)"
            + (f", made under settings {st.parent.name}: {args.mesh_study_why}" if other else ""),
        ]
        break
    else:
        head.append(
            "mesh uncertainty basis: not measured yet (a coarse/medium/fine study of one point, "
            "`python bench/recovery_campaign.py study pNNN`, states it)"
        )
    path = Path(args.out) if args.out else RESULTS / f"table-{fp}.csv"
    if args.to_data:
        path = DATA_CSV
    with path.open("w", newline="") as fh:
        fh.write("".join(f"# {h}\n" for h in head))
        w = csv.DictWriter(fh, fieldnames=list(COLUMNS))
        w.writeheader()
        w.writerows(table_rows(recs))
    print(f"wrote {len(recs)} points ({status}) to {path}")


def _current(args: argparse.Namespace) -> str:
    """The fingerprint of HEAD's settings."""
    return fingerprint(settings(snapshot(Path(args.work).resolve(), git_commit())))


def _status(args: argparse.Namespace) -> None:
    plan = read_plan()
    fp = _current(args)
    for folder in sorted(p for p in RESULTS.iterdir() if p.is_dir() and p.name != "specs"):
        n = len(list(folder.glob("p[0-9][0-9][0-9].json")))
        nf = len(list(folder.glob("p*.failed.json")))
        mark = " (current settings)" if folder.name == fp else ""
        print(f"{folder.name}{mark}: {n} of {len(plan)} done, {nf} failed")


def _lines(args: argparse.Namespace) -> None:
    """Every line point of every settings folder beside the shipped map's value at the inputs
    the run reached: a table on the terminal and ``lines.csv`` (the trend straight from the
    solver, per mesh level, against the fit)."""
    from ductgen.flow.recovery_map import fit_map, read_map_table

    m = fit_map(read_map_table(DATA_CSV.read_text()))
    rows = []
    for path in sorted(RESULTS.glob("*/line-*.json")):
        rec = json.loads(path.read_text())
        x = rec["map_inputs"]
        r = rec["cfd"]["result"]
        var = rec["plan_target"]["point"].split("-")[1]
        rows.append(
            {
                "line": var,
                "mesh": rec["settings"]["mesh"],
                "turbulence": rec["settings"].get("turbulence", "kOmegaSST"),
                "fingerprint": rec["fingerprint"],
                "point": rec["point"],
                **{k: round(x[k], 4) for k in INPUT_KEYS},
                "ram_recovery_flow_avg": round(r["ram_recovery_flow_avg"], 4),
                "ram_recovery_area_avg": round(r["ram_recovery_area_avg"], 4),
                "map": round(m(tuple(x[k] for k in INPUT_KEYS)), 4),
                "cells": r["cells"],
                "iterations": r["iterations"],
                "plateau": int(bool(r["plateau"])),
            }
        )
    if not rows:
        sys.exit(f"no line points in {RESULTS}")
    rows.sort(key=lambda r: (r["line"], r["turbulence"], r["mesh"], r[r["line"]]))
    out = RESULTS / "lines.csv"
    with out.open("w", newline="") as fh:
        fh.write(
            "# line points (bench/recovery_campaign.py line): CFD straight from the solver at "
            "the inputs it reached, and the shipped map (ductgen/data/recovery_map.csv) there\n"
        )
        w = csv.DictWriter(fh, fieldnames=list(rows[0]))
        w.writeheader()
        w.writerows(rows)
    cols = ["line", "turbulence", "mesh", *INPUT_KEYS]
    cols += ["ram_recovery_flow_avg", "ram_recovery_area_avg", "map"]
    print("  ".join(f"{c[:14]:>14}" for c in cols))
    for r in rows:
        print("  ".join(f"{r[c]:>14}" for c in cols))
    print(f"-> {out.relative_to(ROOT)}")


INPUT_KEYS = ("ramp_angle_deg", "width_over_depth", "delta_over_depth", "ivr")


#: The recalled published band (NACA ACR 5I20 / RM A7I30, recalled, not re-read): recovery
#: about 0.8-0.9 at IVR 0.8-1 with a thin boundary layer, 0.1-0.15 lower at delta/D ~ 1.
RECALLED_BAND = {"thin": (0.8, 1.0, 0.8, 0.9), "delta/D ~ 1": (0.8, 1.0, 0.65, 0.8)}


def _figure(args: argparse.Namespace) -> None:
    """Recovery against IVR: the campaign's CFD points, the capture model (x 0.95), the
    recalled published band and, when the table fits, the map at 7 deg, W/D 4."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    import numpy as np

    from ductgen.flow.recovery import CaptureRecovery
    from ductgen.flow.recovery_map import fit_map, read_map_table

    fp = args.fingerprint or _current(args)
    rows = table_rows(records(fp))
    fig, ax = plt.subplots(figsize=(7.0, 5.4), dpi=130)
    for (label, (x0, x1, y0, y1)), c in zip(
        RECALLED_BAND.items(), ("#9ecae1", "#fdd0a2"), strict=True
    ):
        ax.add_patch(
            plt.Rectangle(
                (x0, y0),
                x1 - x0,
                y1 - y0,
                color=c,
                alpha=0.6,
                lw=0,
                label=f"NACA band, {label} (recalled, not re-read)",
            )
        )
    ivr = np.linspace(0.3, 1.1, 81)
    for dd, ls in ((0.2, "-"), (1.0, "--")):
        cap = CaptureRecovery(dd, 0.95)
        ax.plot(
            ivr,
            [cap(v) for v in ivr],
            "k",
            ls=ls,
            lw=1,
            label=f"capture model x 0.95, delta/D {dd:g}",
        )
    try:
        m = fit_map(read_map_table(DATA_CSV.read_text()))
        for dd, ls in ((0.2, "-"), (1.0, "--")):
            ax.plot(
                ivr,
                [m((7.0, 4.0, dd, v)) for v in ivr],
                "C3",
                ls=ls,
                lw=1.5,
                label=f"CFD map, 7 deg, W/D 4, delta/D {dd:g}",
            )
    except (OSError, ValueError) as err:
        print(f"no map curve: {err}")
    if rows:
        sc = ax.scatter(
            [r["ivr"] for r in rows],
            [r["ram_recovery"] for r in rows],
            c=[r["delta_over_depth"] for r in rows],
            cmap="viridis",
            vmin=0,
            vmax=1.5,
            edgecolor="k",
            s=30,
            zorder=5,
            label=f"CFD points ({len(rows)} of {len(read_plan())})",
        )
        fig.colorbar(sc, ax=ax, label="delta/D")
    ax.set_xlabel("inlet velocity ratio IVR")
    ax.set_ylabel("ram recovery (p_t1 - p0)/q0")
    ax.set_xlim(0.25, 1.15)
    ax.set_ylim(0.3, 1.0)
    ax.grid(True, lw=0.3)
    ax.legend(fontsize=6.5, loc="upper center", bbox_to_anchor=(0.5, -0.13), ncol=2)
    ax.set_title(
        f"Ram recovery: ductgen CFD ({MESH} mesh) vs capture model vs recalled band", fontsize=9
    )
    fig.tight_layout()
    out = Path(args.out) if args.out else RESULTS / f"recovery-comparison-{fp}.png"
    fig.savefig(out)
    print(f"wrote {out}")


def main(argv: list[str] | None = None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    sub = ap.add_subparsers(dest="cmd", required=True)
    run = sub.add_parser("run", help="run the points not yet done")
    run.add_argument("-j", "--jobs", type=int, default=1, help="points at once (local)")
    run.add_argument("--np", type=int, default=2, help="MPI ranks per point")
    run.add_argument("--scheduler", default=None, help="Dask scheduler address")
    run.add_argument("--limit", type=int, default=None, help="run at most N points")
    run.add_argument("--points", default=None, help="comma list of point ids")
    run.add_argument("--retry-failed", action="store_true")
    run.add_argument("--no-nice", action="store_true", help="do not run under nice -n 19")
    run.add_argument("--work", default="/tmp/recovery-campaign", help="scratch folder")
    study = sub.add_parser("study", help="coarse/medium/fine study (GCI) of one point")
    study.add_argument("point", help="plan point id, e.g. p001")
    study.add_argument("--np", type=int, default=2, help="MPI ranks")
    study.add_argument("--scheduler", default=None, help="Dask scheduler address")
    study.add_argument("--no-nice", action="store_true", help="do not run under nice -n 19")
    study.add_argument("--work", default="/tmp/recovery-campaign", help="scratch folder")
    study.set_defaults(jobs=1, retry_failed=True, points=None, limit=None)
    col = sub.add_parser("collect", help="write the table of finished points")
    col.add_argument("--work", default="/tmp/recovery-campaign", help="scratch folder")
    col.add_argument("--fingerprint", default=None)
    col.add_argument("--out", default=None)
    col.add_argument("--to-data", action="store_true", help=f"write {DATA_CSV.name}")
    col.add_argument(
        "--mesh-study",
        default=None,
        help="a study-pNNN.json of other settings to state the mesh uncertainty from",
    )
    col.add_argument(
        "--mesh-study-why",
        default="the same meshes and solver settings",
        help="why that study applies (written into the table's header)",
    )
    fig = sub.add_parser("figure", help="recovery vs IVR: CFD, capture model, recalled band")
    fig.add_argument("--fingerprint", default=None)
    fig.add_argument("--out", default=None)
    fig.add_argument("--work", default="/tmp/recovery-campaign", help="scratch folder")
    line = sub.add_parser("line", help="points along one variable, others held (any mesh)")
    line.add_argument("--var", default="ramp_angle_deg", help=f"one of {', '.join(RANGES)}")
    line.add_argument("--values", default="5,7,9,11", help="comma list of the variable's values")
    line.add_argument("--at", default=None, help="the held values, e.g. ivr=0.6,width_over_depth=3")
    line.add_argument("--mesh", default=MESH, choices=["coarse", "medium", "fine"])
    line.add_argument(
        "--turbulence",
        default="kOmegaSST",
        choices=["kOmegaSST", "kOmega"],
        help="RAS model (ductgen cfd --turbulence): kOmega is the model-sensitivity check",
    )
    line.add_argument("--np", type=int, default=2, help="MPI ranks per point")
    line.add_argument("--no-nice", action="store_true", help="do not run under nice -n 19")
    line.add_argument("--work", default="/tmp/recovery-campaign", help="scratch folder")
    line.set_defaults(jobs=1, retry_failed=True, points=None, limit=None, scheduler=None)
    sub.add_parser("lines", help="the line points beside the map (lines.csv)")
    st = sub.add_parser("status", help="points done per settings fingerprint")
    st.add_argument("--work", default="/tmp/recovery-campaign", help="scratch folder")
    sub.add_parser("plan", help="write the plan and the specs")
    args = ap.parse_args(argv)
    if args.cmd in ("run", "study", "line"):
        _run(args)
    elif args.cmd == "collect":
        _collect(args)
    elif args.cmd == "figure":
        _figure(args)
    elif args.cmd == "lines":
        _lines(args)
    elif args.cmd == "status":
        _status(args)
    else:
        write_specs(read_plan())
        print(f"{PLAN} and {SPECS}/")


if __name__ == "__main__":
    main()
