"""The design page's local HTTP server (standard library ``http.server``, one thread per
request) and its JSON API.

Routes (all answers are JSON unless a file is asked for):

* ``GET /`` the page; ``GET /assets/NAME`` its script and style (package data, nothing
  from the internet);
* ``GET /api/init`` the published JSON Schema, unit hints, the starting spec data, the
  output kinds and the current job;
* ``POST /api/preview`` spec data → numbers, drawings, airflow, warnings or problems;
* ``POST /api/build``, ``POST /api/sweep`` start the one background job; ``GET /api/job``
  its progress; ``GET /out/PATH`` a file of the last finished job;
* ``POST /api/save`` writes the spec as TOML; ``POST /api/open`` reads a spec file.

Bound to loopback unless the caller allows otherwise (``ductgen design --host``). Requests
must name this server in their ``Host`` header (a web page elsewhere cannot reach it through
DNS rebinding) and POST bodies must be JSON (a cross-site form cannot send that).
"""

from __future__ import annotations

import ipaddress
import json
import mimetypes
import socket
from dataclasses import dataclass, field
from http.server import BaseHTTPRequestHandler, ThreadingHTTPServer
from importlib.resources import files
from pathlib import Path
from typing import Any
from urllib.parse import unquote, urlsplit

from ductgen.errors import DuctgenError, OverwriteError, SpecError
from ductgen.page.jobs import MAX_SWEEP_VARIANTS, Busy, JobRunner
from ductgen.page.preview import check_spec, preview, problem_lines

__all__ = ["ASSETS", "DesignApp", "is_loopback", "make_server"]

#: The page's files, served from the package.
ASSETS = ("index.html", "page.css", "page.js", "viewer.js")

#: Largest request body read (bytes): a spec is a few kB.
MAX_BODY_BYTES = 1_000_000


def is_loopback(host: str) -> bool:
    """Whether ``host`` names this computer only (127.0.0.0/8, ::1 or ``localhost``)."""
    if host.strip().lower() == "localhost":
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False


@dataclass
class DesignApp:
    """What the server serves: the starting spec, where files go, the job runner.

    Attributes:
        data: the starting spec as plain data (units as written).
        spec_path: the spec file (default target of *save*), or None.
        out_dir: the build folder given on the command line, or None (``./NAME``).
        load_problems: the starting spec's problems, shown beside the fields at once.
    """

    data: dict[str, Any]
    spec_path: Path | None = None
    out_dir: Path | None = None
    jobs: JobRunner = field(default_factory=JobRunner)

    def init(self) -> dict[str, Any]:
        from ductgen.page.fields import schema_json, unit_hints
        from ductgen.pipeline.builder import output_kinds, package_version

        return {
            "schema": schema_json(),
            "units": unit_hints(),
            "data": self.data,
            "spec_path": str(self.spec_path) if self.spec_path else "",
            "out_dir": str(self.out_dir) if self.out_dir else "",
            "output_kinds": output_kinds(),
            "max_sweep_variants": MAX_SWEEP_VARIANTS,
            "version": package_version(),
            "job": self.jobs.snapshot(),
        }


def _base_dir(body: dict[str, Any]) -> Path:
    p = str(body.get("spec_path") or "").strip()
    return Path(p).expanduser().absolute().parent if p else Path.cwd()


def _path_or_none(value: Any) -> Path | None:
    text = str(value or "").strip()
    return Path(text).expanduser() if text else None


def _only(value: Any) -> list[str] | None:
    if not value:
        return None
    if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
        raise SpecError("outputs", value, "a list of output kinds", "from the page's checkboxes")
    return value


class _Handler(BaseHTTPRequestHandler):
    server_version = "ductgen-design"
    app: DesignApp
    hosts: frozenset[str] | None

    def log_message(self, format: str, *args: Any) -> None:
        pass  # the terminal stays quiet; the page shows what happens

    # --- answers ---------------------------------------------------------------------------
    def _send(self, code: int, body: bytes, ctype: str, extra: dict[str, str] | None = None):  # type: ignore[no-untyped-def]
        self.send_response(code)
        self.send_header("Content-Type", ctype)
        self.send_header("Content-Length", str(len(body)))
        self.send_header("Cache-Control", "no-store")
        self.send_header("X-Content-Type-Options", "nosniff")
        for k, v in (extra or {}).items():
            self.send_header(k, v)
        self.end_headers()
        if self.command != "HEAD":
            self.wfile.write(body)

    def _json(self, code: int, obj: Any) -> None:
        body = json.dumps(obj, allow_nan=False, default=str).encode()
        self._send(code, body, "application/json; charset=utf-8")

    def _error(self, err: Exception) -> None:
        if isinstance(err, Busy):
            self._json(409, {"ok": False, "busy": True, "message": str(err), "job": err.state})
        elif isinstance(err, SpecError):
            self._json(400, {"ok": False, "problems": problem_lines(err), "message": str(err)})
        elif isinstance(err, OverwriteError):
            self._json(409, {"ok": False, "problems": [], "message": str(err)})
        elif isinstance(err, DuctgenError):
            self._json(500, {"ok": False, "problems": [], "message": str(err)})
        else:
            raise err

    def _host_ok(self) -> bool:
        if self.hosts is None:
            return True
        host = (self.headers.get("Host") or "").strip().lower()
        if host in self.hosts:
            return True
        self._json(421, {"ok": False, "message": f"unexpected Host header {host!r}"})
        return False

    # --- GET --------------------------------------------------------------------------------
    def do_GET(self) -> None:
        if not self._host_ok():
            return
        path = unquote(urlsplit(self.path).path)
        if path in ("/", "/index.html"):
            return self._asset("index.html")
        if path.startswith("/assets/"):
            return self._asset(path.removeprefix("/assets/"))
        if path == "/api/init":
            return self._json(200, self.app.init())
        if path == "/api/job":
            return self._json(200, self.app.jobs.snapshot())
        if path.startswith("/out/"):
            return self._out(path.removeprefix("/out/"))
        self._json(404, {"ok": False, "message": f"no such page {path}"})

    do_HEAD = do_GET

    def _asset(self, name: str) -> None:
        if name not in ASSETS:
            return self._json(404, {"ok": False, "message": f"no such asset {name}"})
        body = files("ductgen.page").joinpath("assets", name).read_bytes()
        ctype = mimetypes.guess_type(name)[0] or "application/octet-stream"
        self._send(200, body, f"{ctype}; charset=utf-8")

    def _out(self, rel: str) -> None:
        root = self.app.jobs.out_dir()
        if root is None:
            return self._json(404, {"ok": False, "message": "no finished build or sweep yet"})
        root = root.resolve()
        target = (root / rel).resolve()
        if not target.is_relative_to(root) or not target.is_file():
            return self._json(404, {"ok": False, "message": f"no file {rel} in {root}"})
        ctype = mimetypes.guess_type(target.name)[0] or "application/octet-stream"
        if target.suffix.lower() in (".html", ".json", ".csv", ".txt"):
            ctype += "; charset=utf-8"
        self._send(200, target.read_bytes(), ctype)

    # --- POST -------------------------------------------------------------------------------
    def _body(self) -> dict[str, Any] | None:
        ctype = (self.headers.get("Content-Type") or "").split(";")[0].strip().lower()
        if ctype != "application/json":
            self._json(415, {"ok": False, "message": "POST bodies must be application/json"})
            return None
        try:
            n = int(self.headers.get("Content-Length") or 0)
        except ValueError:
            n = -1
        if not 0 <= n <= MAX_BODY_BYTES:
            self._json(413, {"ok": False, "message": f"at most {MAX_BODY_BYTES:,} bytes"})
            return None
        try:
            body = json.loads(self.rfile.read(n) or b"{}")
        except (ValueError, RecursionError):
            self._json(400, {"ok": False, "message": "the request is not valid JSON"})
            return None
        if not isinstance(body, dict):
            self._json(400, {"ok": False, "message": "the request must be a JSON object"})
            return None
        return body

    def do_POST(self) -> None:
        if not self._host_ok():
            return
        body = self._body()
        if body is None:
            return
        path = urlsplit(self.path).path
        routes = {
            "/api/preview": self._preview,
            "/api/build": self._build,
            "/api/sweep": self._sweep,
            "/api/save": self._save,
            "/api/open": self._open,
        }
        route = routes.get(path)
        if route is None:
            return self._json(404, {"ok": False, "message": f"no such action {path}"})
        try:
            route(body)
        except (DuctgenError, Busy) as err:
            self._error(err)

    def _preview(self, body: dict[str, Any]) -> None:
        self._json(200, preview(body.get("data"), _base_dir(body)))

    def _build(self, body: dict[str, Any]) -> None:
        out = _path_or_none(body.get("out")) or self.app.out_dir
        state = self.app.jobs.start_build(
            body.get("data"),
            _base_dir(body),
            out,
            only=_only(body.get("only")),
            force=bool(body.get("force")),
            quality=str(body.get("quality") or "normal"),
        )
        self._json(202, {"ok": True, "job": state})

    def _sweep(self, body: dict[str, Any]) -> None:
        state = self.app.jobs.start_sweep(
            body.get("data"),
            _base_dir(body),
            str(body.get("key") or ""),
            str(body.get("values") or ""),
            _path_or_none(body.get("out")),
            only=_only(body.get("only")),
        )
        self._json(202, {"ok": True, "job": state})

    def _save(self, body: dict[str, Any]) -> None:
        from ductgen.atomic import write_atomic
        from ductgen.spec.write import spec_text

        path = _path_or_none(body.get("path"))
        if path is None or path.suffix.lower() not in (".toml", ".json"):
            raise SpecError("save as", str(path or ""), "a .toml or .json file", "spec format")
        data = body.get("data")
        check_spec(data, _base_dir(body))  # only a valid spec is written
        text = spec_text(data, path, "ductgen spec, written by ductgen design")
        write_atomic(path, text.encode(), force=bool(body.get("force")))
        self._json(200, {"ok": True, "path": str(path.resolve())})

    def _open(self, body: dict[str, Any]) -> None:
        from ductgen.spec import read_spec_data

        path = _path_or_none(body.get("path"))
        if path is None:
            raise SpecError("open", "", "a spec file path", "nothing to open")
        data = read_spec_data(path)
        self._json(200, {"ok": True, "data": data, "spec_path": str(path.absolute())})


def make_server(
    app: DesignApp, host: str = "127.0.0.1", port: int = 0, *, allow_remote: bool = False
) -> ThreadingHTTPServer:
    """A server for ``app`` bound to ``host:port`` (port 0: any free port).

    Raises:
        SpecError: ``host`` is not a loopback address and ``allow_remote`` is False (the
            CLI sets it only when ``--host`` is given), or the port cannot be bound.
    """
    if not allow_remote and not is_loopback(host):
        raise SpecError(
            "--host",
            host,
            "127.0.0.1, ::1 or localhost",
            "the design page serves this computer only unless --host is given",
        )
    family = socket.AF_INET6 if ":" in host else socket.AF_INET
    server_cls = type("DesignServer", (ThreadingHTTPServer,), {"address_family": family})
    handler = type("Handler", (_Handler,), {"app": app, "hosts": None})
    try:
        server = server_cls((host.strip("[]"), port), handler)
    except OSError as err:
        raise SpecError("--port", port, "a free port (0 = any)", err.strerror or str(err)) from err
    server.daemon_threads = True
    bound = server.server_address[1]
    if is_loopback(host):
        names = ("127.0.0.1", "localhost", "[::1]", host.lower())
        handler.hosts = frozenset(f"{n}:{bound}" for n in names)
    return server
