"""Benchmark of the design page's redraw: server time per change (not a test).

Run: ``python bench/bench_page.py [--changes N] [--profile]``. A live page server (the one
``ductgen design`` runs, on a free port, in this process) answers ``POST /api/preview`` for
every sample, once per change of the ramp angle (5.0°, 5.1°, ... so every answer is new).
Two times are shown per sample, in milliseconds: ``server``, the request handler from the
first byte read to the answer written (what the 50 ms median target refers to), its
``CPU`` time (the handler thread's; less sensitive to other work on the machine), and
``round trip`` as a client measures it. Median, 10th and 90th percentile and the largest.
``--profile`` prints the 15 most expensive functions of one sample's previews (cProfile).
"""

from __future__ import annotations

import argparse
import cProfile
import http.client
import json
import os
import pstats
import statistics
import threading
import time
from pathlib import Path
from typing import Any

import tomllib

ROOT = Path(__file__).resolve().parents[1]


def _stats(ms: list[float]) -> str:
    q = statistics.quantiles(ms, n=10)
    return (
        f"{statistics.median(ms):7.1f} {q[0]:7.1f} {q[-1]:7.1f} {max(ms):7.1f}"
        if len(ms) > 1
        else f"{ms[0]:7.1f}"
    )


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--changes", type=int, default=30)
    ap.add_argument("--profile", action="store_true")
    args = ap.parse_args()

    from ductgen.page.app import DesignApp
    from ductgen.page.guard import WorkFolder
    from ductgen.page.preview import preview
    from ductgen.page.server import _Handler, make_server

    timings: list[float] = []
    cpu: list[float] = []
    original = _Handler._preview

    def timed(self: Any, body: dict[str, Any]) -> None:
        t0, c0 = time.perf_counter(), time.thread_time()
        original(self, body)
        timings.append((time.perf_counter() - t0) * 1e3)
        cpu.append((time.thread_time() - c0) * 1e3)

    _Handler._preview = timed  # type: ignore[method-assign]
    work = ROOT / "samples"
    app = DesignApp(data={}, work=WorkFolder(work))
    server = make_server(app, "127.0.0.1", 0)
    threading.Thread(target=server.serve_forever, daemon=True).start()
    port = server.server_address[1]
    auth = {"Authorization": f"Bearer {app.secret}", "Content-Type": "application/json"}

    print(
        f"{'sample':24s}  server ms: median   p10     p90     max | CPU ms: median"
        " | round trip ms: median"
    )
    everything: list[float] = []
    all_cpu: list[float] = []
    for path in sorted(work.glob("*.toml")):
        data = tomllib.loads(path.read_text())
        timings.clear()
        cpu.clear()
        trips: list[float] = []
        conn = http.client.HTTPConnection("127.0.0.1", port, timeout=60)
        for k in range(args.changes + 1):
            data = {**data, "ramp": {**data.get("ramp", {}), "angle_deg": 5.0 + 0.1 * k}}
            data["ramp"].pop("length", None)
            t0 = time.perf_counter()
            conn.request("POST", "/api/preview", json.dumps({"data": data}), auth)
            answer = json.loads(conn.getresponse().read())
            trips.append((time.perf_counter() - t0) * 1e3)
            assert answer["ok"], answer.get("message")
        conn.close()
        server_ms, trips = timings[1:], trips[1:]  # the first answer warms caches
        everything += server_ms
        all_cpu += cpu[1:]
        print(
            f"{path.stem:24s}  {_stats(server_ms)}   | {statistics.median(cpu[1:]):7.1f}"
            f"        | {statistics.median(trips):7.1f}"
        )
        if args.profile and path.stem == "club-racer-brake":
            prof = cProfile.Profile()
            prof.enable()
            for k in range(args.changes):
                data["ramp"]["angle_deg"] = 6.0 + 0.05 * k
                preview(data, work)
            prof.disable()
            pstats.Stats(prof).sort_stats("cumulative").print_stats(15)
    print(f"{'all samples':24s}  {_stats(everything)}   | {statistics.median(all_cpu):7.1f}")
    print(f"load average while measuring: {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores")
    server.shutdown()


if __name__ == "__main__":
    main()
