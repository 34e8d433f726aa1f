"""The design page's server as an attacker meets it: a live ``ductgen design`` process, driven
with raw HTTP (no browser), every hostile request refused and the files checked afterwards.

The rules tested are the page's own (README, "What the design page protects"): a per-run key,
this server's Host, the page's own Origin, paths only inside the work folder, and a server that
keeps answering while many connections stall. Common web practice (OWASP: "DNS rebinding",
"Cross-Site Request Forgery"); no published values involved.
"""

from __future__ import annotations

import http.client
import json
import re
import socket
import subprocess
import sys
import time
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import pytest

from tests.test_page import checkout_env, start_design

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "samples" / "club-racer-brake.toml"


@dataclass
class Live:
    """A running page: its address, key, work folder, and its terminal output so far."""

    host: str
    port: int
    key: str
    work: Path
    proc: subprocess.Popen[str]

    def request(
        self,
        method: str,
        path: str,
        body: Any = None,
        *,
        key: str | None = "",
        headers: dict[str, str] | None = None,
    ) -> tuple[int, bytes, dict[str, str]]:
        """One request; ``key=""`` sends this run's key, None sends none."""
        conn = http.client.HTTPConnection(self.host, self.port, timeout=30)
        h = dict(headers or {})
        if key is not None:
            h.setdefault("Authorization", f"Bearer {key or self.key}")
        data = None
        if body is not None:
            data = json.dumps(body)
            h.setdefault("Content-Type", "application/json")
        conn.request(method, path, data, h)
        r = conn.getresponse()
        out = (r.status, r.read(), {k.lower(): v for k, v in r.getheaders()})
        conn.close()
        return out

    def post(self, path: str, body: Any, **kw: Any) -> tuple[int, dict[str, Any]]:
        status, raw, _ = self.request("POST", path, body, **kw)
        return status, json.loads(raw or b"{}")


def _start(work: Path, *extra: str) -> Live:
    spec = work / "inlet.toml"
    if not spec.exists():
        spec.write_text(SAMPLE.read_text())
    proc, lines = start_design(spec, work, *extra)
    m = re.fullmatch(r"http://(\S+):(\d+)/\?token=([A-Za-z0-9_\-]{40,})\n", lines[1])
    assert m, f"the address is not on a line of its own: {lines!r}"
    host = "127.0.0.1" if m.group(1) in ("0.0.0.0", "localhost") else m.group(1)
    return Live(host, int(m.group(2)), m.group(3), work, proc)


def _stop(live: Live) -> str:
    live.proc.terminate()
    _, err = live.proc.communicate(timeout=30)
    return err


@pytest.fixture
def outside(tmp_path: Path) -> Path:
    """A folder beside the work folder with a file an attacker wants."""
    d = tmp_path / "outside"
    d.mkdir()
    (d / "secret.toml").write_text(SAMPLE.read_text().replace("club-racer-brake", "secret-one"))
    (d / "settings.json").write_text('{"keep": true}')
    (d / "id_ed25519").write_text("PRIVATE KEY")
    return d


@pytest.fixture
def live(tmp_path: Path, outside: Path) -> Iterator[Live]:
    work = tmp_path / "work"
    work.mkdir()
    (work / "escape").symlink_to(outside, target_is_directory=True)
    (work / "notes.toml").write_text('title = "not a spec"\n')
    page = _start(work)
    yield page
    err = _stop(page)
    assert "Traceback" not in err, err


def _spec_data() -> dict[str, Any]:
    import tomllib

    return tomllib.loads(SAMPLE.read_text())


def _snapshot(folder: Path) -> dict[str, bytes]:
    return {
        str(p.relative_to(folder)): p.read_bytes()
        for p in sorted(folder.rglob("*"))
        if p.is_file() and not p.is_symlink()
    }


def test_the_key_is_needed_for_every_api_and_file_request(live: Live) -> None:
    for method, path in (("GET", "/api/init"), ("GET", "/api/job"), ("GET", "/out/1/x.stl")):
        assert live.request(method, path, key=None)[0] == 401, path
        assert live.request(method, path, key="wrong-key-" * 4)[0] == 403, path
    data = _spec_data()
    for path in ("/api/preview", "/api/save", "/api/open", "/api/build", "/api/sweep"):
        body = {"data": data, "path": "stolen.toml", "out": "stolen"}
        assert live.post(path, body, key=None)[0] == 401, path
        assert live.post(path, body, key="wrong-key-" * 4)[0] == 403, path
    assert not (live.work / "stolen.toml").exists() and not (live.work / "stolen").exists()
    # the printed address sets an HttpOnly, SameSite=Strict cookie and drops the key from the
    # address bar; the cookie alone then opens the API
    status, _, headers = live.request("GET", f"/?token={live.key}", key=None)
    assert status == 303 and headers["location"] == "/"
    cookie = headers["set-cookie"]
    assert "HttpOnly" in cookie and "SameSite=Strict" in cookie and live.key in cookie
    jar = cookie.split(";")[0]
    assert live.request("GET", "/api/init", key=None, headers={"Cookie": jar})[0] == 200
    assert live.request("GET", "/?token=not-the-key", key=None)[0] == 403
    assert live.request("GET", "/api/init")[0] == 200  # the bearer key


def test_foreign_origin_and_host_are_refused(live: Live, outside: Path) -> None:
    before = _snapshot(outside)
    body = {"data": _spec_data(), "path": "mine.toml"}
    evil = {"Origin": "http://evil.example"}
    assert live.post("/api/save", body, headers=evil)[0] == 403
    assert live.post("/api/save", body, headers={"Origin": "null"})[0] == 403
    assert live.post("/api/save", body, headers={"Sec-Fetch-Site": "cross-site"})[0] == 403
    # DNS rebinding: the browser names the attacker's host
    rebound = {"Host": f"attacker.example:{live.port}"}
    assert live.request("GET", "/api/job", headers=rebound)[0] == 403
    assert live.post("/api/save", body, headers=rebound)[0] == 403
    assert live.request("GET", "/api/job", headers={"Host": "127.0.0.1:1"})[0] == 403
    assert not (live.work / "mine.toml").exists()
    # the page's own origin works
    own = {"Origin": f"http://127.0.0.1:{live.port}"}
    assert live.post("/api/save", body, headers=own)[0] == 200
    assert (live.work / "mine.toml").is_file()
    assert _snapshot(outside) == before


def test_paths_that_leave_the_work_folder_are_refused(live: Live, outside: Path) -> None:
    before_out, before_work = _snapshot(outside), _snapshot(live.work)
    data = _spec_data()
    for target in (
        str(outside / "settings.json"),
        str(outside / "new.toml"),
        "../outside/new.toml",
        "escape/new.toml",  # a symbolic link inside the folder that leads out
        "escape/secret.toml",
        "~/new.toml",
        "notes.toml",  # inside, but not a ductgen spec: never replaced
        "inlet.json",  # the page saves .toml only
    ):
        status, res = live.post("/api/save", {"data": data, "path": target, "force": True})
        assert status == 400, (target, res)
        assert res["message"], target
    for target in (str(outside / "secret.toml"), "../outside/secret.toml", "escape/secret.toml"):
        status, raw, _ = live.request("POST", "/api/open", {"path": target})
        assert status == 400, target
        assert b"secret-one" not in raw, target
    for out in (str(outside / "build"), "../outside/build", "escape/build", "/tmp"):
        status, _ = live.post("/api/build", {"data": data, "out": out, "only": ["template"]})
        assert status == 400, out
        status, _ = live.post("/api/sweep", {"data": data, "sweep_out": out, "key": "x"})
        assert status == 400, out
    # a spec that names a file outside the folder is not read
    bad = {**data, "planform": {**data["planform"], "profile": str(outside / "secret.csv")}}
    status, res = live.post("/api/preview", {"data": bad})
    assert status == 200 and not res["ok"] and res["problems"][0]["key"] == "planform.profile"
    for rel in ("1/../../outside/id_ed25519", "1/escape/id_ed25519", "../id_ed25519"):
        assert live.request("GET", f"/out/{rel}")[0] == 404, rel
    assert live.request("GET", "/api/job")[0] == 200
    assert _snapshot(outside) == before_out
    assert _snapshot(live.work) == before_work


def test_own_files_inside_the_folder_still_work(live: Live) -> None:
    data = _spec_data()
    status, res = live.post("/api/save", {"data": data, "path": "drafts/../mine.toml"})
    assert status == 200 and res["path"] == "mine.toml"
    from ductgen.spec import load_spec

    assert load_spec(live.work / "mine.toml") == load_spec(SAMPLE)
    # replacing it needs the box ticked, and the sentence says so in the page's words
    status, res = live.post("/api/save", {"data": data, "path": "mine.toml"})
    assert status == 409 and "--force" not in res["message"]
    assert live.post("/api/save", {"data": data, "path": "mine.toml", "force": True})[0] == 200
    status, res = live.post("/api/open", {"path": "mine.toml"})
    assert status == 200 and res["data"]["name"] == data["name"]
    # init offers the work folder and a save name that is not the package's sample
    init = json.loads(live.request("GET", "/api/init")[1])
    assert init["work_dir"] == str(live.work.resolve())
    assert init["save_path"] == "club-racer-brake.toml"  # a new name, not the opened file


@pytest.mark.slow
def test_out_serves_only_what_the_job_wrote(live: Live) -> None:
    (live.work / "build").mkdir()
    (live.work / "build" / "id_rsa").write_text("PRIVATE KEY")
    status, res = live.post(
        "/api/build", {"data": _spec_data(), "out": "build", "only": ["template"]}
    )
    assert status == 202, res
    deadline = time.monotonic() + 300
    job: dict[str, Any] = {}
    while time.monotonic() < deadline:
        job = json.loads(live.request("GET", "/api/job")[1])
        if job["status"] in ("done", "failed"):
            break
        time.sleep(0.5)
    assert job["status"] == "done", job
    base = job["base_url"]
    assert base == f"/out/{job['id']}/"
    status, raw, _ = live.request("GET", base + "report.json")
    assert status == 200
    assert raw == (live.work / "build" / "report.json").read_bytes()
    assert live.request("GET", base + "club-racer-brake-template.dxf")[0] == 200
    assert live.request("GET", base + "id_rsa")[0] == 404  # in the folder, not written by it
    assert live.request("GET", base + "report.json", key=None)[0] == 401


def test_foreign_host_is_refused_with_host_all_interfaces(tmp_path: Path) -> None:
    work = tmp_path / "work"
    work.mkdir()
    page = _start(work, "--host", "0.0.0.0")
    try:
        rebound = {"Host": f"attacker.example:{page.port}"}
        assert page.request("GET", "/api/job", headers=rebound)[0] == 403
        assert page.request("GET", "/api/job", key=None)[0] == 401
        # an address literal cannot be rebound: a LAN client naming the IP is served
        ip = {"Host": f"192.0.2.7:{page.port}"}
        assert page.request("GET", "/api/job", headers=ip)[0] == 200
    finally:
        err = _stop(page)
    assert "Traceback" not in err
    assert "warning: listening on 0.0.0.0" in err


def test_stalled_clients_do_not_stop_a_normal_request(live: Live) -> None:
    stalled: list[socket.socket] = []
    try:
        for _ in range(60):
            s = socket.create_connection((live.host, live.port), timeout=5)
            s.sendall(b"GET /api/job HTTP/1.1\r\nHost: 127.0.0.1\r\n")  # never finished
            stalled.append(s)
        status, raw, _ = live.request("GET", "/api/job")
        assert status == 200 and json.loads(raw)["status"] == "idle"
    finally:
        for s in stalled:
            s.close()


def test_refusals_are_one_line_each_on_the_terminal(tmp_path: Path) -> None:
    work = tmp_path / "work"
    work.mkdir()
    page = _start(work)
    try:
        page.request("GET", "/api/init", key=None)
        page.post("/api/open", {"path": "/etc/passwd"})
        page.request("POST", "/api/save", None, headers={"Content-Type": "text/plain"})
        with socket.create_connection((page.host, page.port), timeout=5) as s:
            s.sendall(b"\x16\x03\x01garbage\r\n\r\n")  # not HTTP at all
            s.recv(1000)
    finally:
        err = _stop(page)
    lines = [ln for ln in err.splitlines() if ln.strip() and not ln.startswith("interrupted")]
    assert "Traceback" not in err
    assert sum("refused 401" in ln for ln in lines) == 1
    assert sum("refused 400 POST /api/open" in ln for ln in lines) == 1
    assert all(ln.startswith("ductgen design: ") for ln in lines), lines


@pytest.mark.parametrize(
    ("args", "key"),
    [
        (["--port", "70000"], "--port"),
        (["--port", "-1"], "--port"),
        (["--host", "not a host"], "--host"),
        (["--host", "203.0.113.9"], "--host"),
        (["--root", "/no/such/folder"], "--root"),
        (["-o", "/tmp/elsewhere"], "-o/--out"),
    ],
)
def test_bad_design_options_exit_2_naming_the_option(
    tmp_path: Path, args: list[str], key: str
) -> None:
    spec = tmp_path / "inlet.toml"
    spec.write_text(SAMPLE.read_text())
    r = subprocess.run(
        [sys.executable, "-m", "ductgen", "design", str(spec), "--no-browser", *args],
        capture_output=True,
        text=True,
        env=checkout_env(),
        cwd=tmp_path,
        timeout=60,
    )
    assert r.returncode == 2, (r.stdout, r.stderr)
    assert key in r.stderr and "Traceback" not in r.stderr
