"""The design page's local HTTP server (standard library ``http.server``, one thread per
connection, a cap on connections) and its JSON API.

Routes (all answers are JSON unless a file is asked for):

* ``GET /?token=KEY`` sets the key cookie and sends the browser to ``/``; ``GET /`` the page;
  ``GET /assets/NAME`` its script and style (package data, nothing from the internet);
* ``GET /api/init`` the published JSON Schema, unit hints, the starting spec data, the
  output kinds and the current job;
* ``POST /api/preview`` spec data → numbers, drawings, airflow, warnings or problems;
* ``POST /api/build``, ``POST /api/sweep`` start the one background job; ``GET /api/job``
  its progress; ``GET /out/JOB/NAME`` a file job JOB of this run wrote;
* ``POST /api/cancel`` stops the running build (nothing it staged is published);
* ``GET /api/panel-files`` the STEP/STL/OBJ/PLY files inside the work folder (a panel skin);
* ``POST /api/save`` writes the spec as TOML; ``POST /api/open`` reads a spec file.

Who may ask and which files a request may touch is :mod:`ductgen.page.guard`'s business:
every request is checked there before it reaches a route. A refused request costs one line
on the terminal, never a traceback.
"""

from __future__ import annotations

import contextlib
import json
import mimetypes
import socket
import sys
import threading
from http.server import ThreadingHTTPServer
from importlib.resources import files
from typing import Any, cast
from urllib.parse import parse_qs, unquote, urlsplit

from ductgen.errors import SpecError
from ductgen.page.answers import Answers, port_of, say
from ductgen.page.app import DesignApp
from ductgen.page.guard import (
    allowed_hosts,
    cookie_name,
    credential_status,
    is_loopback,
)
from ductgen.page.preview import check_spec, preview, problem_lines

__all__ = ["ASSETS", "DesignApp", "is_loopback", "make_server"]

#: The page's files, served from the package.
ASSETS = ("index.html", "page.css", "form.js", "page.js", "viewer.js")

#: Largest request body read (bytes): a spec is a few kB.
MAX_BODY_BYTES = 1_000_000


#: Connections served at once; more are answered 503 and closed at once.
MAX_CONNECTIONS = 96


def _only(value: Any) -> list[str] | None:
    if not value:
        return None
    if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
        raise SpecError("outputs", value, "a list of output kinds", "from the page's checkboxes")
    return value


class _Handler(Answers):
    """The routes; answering, refusing and admitting requests: :class:`Answers`."""

    # --- GET --------------------------------------------------------------------------------
    def do_GET(self) -> None:
        try:
            self._get()
        except Exception as err:  # one line, never a traceback
            self._error(err)

    do_HEAD = do_GET

    def _get(self) -> None:
        parts = urlsplit(self.path)
        path = unquote(parts.path)
        if path in ("/", "/index.html") and "token" in parse_qs(parts.query):
            return self._enter(parse_qs(parts.query)["token"][0])
        if not self._admit():
            return
        if path in ("/", "/index.html"):
            return self._asset("index.html")
        if path.startswith("/assets/"):
            return self._asset(path.removeprefix("/assets/"))
        if path == "/api/init":
            return self._json(200, self.app.init())
        if path == "/api/job":
            return self._json(200, self.app.job_snapshot())
        if path == "/api/panel-files":
            return self._json(200, {"ok": True, "files": self.app.panel_files()})
        if path.startswith("/out/"):
            return self._out(path.removeprefix("/out/"))
        self._json(404, {"ok": False, "message": f"no such page {path}"})

    def _enter(self, token: str) -> None:
        """The printed address: a right key sets the cookie and leaves the key out of the
        address bar and the history (303 to ``/``)."""
        if not self._admit(need_key=False):
            return
        port = port_of(self.server.server_address)
        if credential_status(self.app.secret, port, None, f"Bearer {token}"):
            return self._refuse(403, "wrong key for this page")
        cookie = f"{cookie_name(port)}={self.app.secret}; Path=/; HttpOnly; SameSite=Strict"
        self._send(303, b"", "text/plain", {"Location": "/", "Set-Cookie": cookie})

    def _asset(self, name: str) -> None:
        if name not in ASSETS:
            return self._json(404, {"ok": False, "message": f"no such asset {name}"})
        body = (files("ductgen.page") / "assets" / name).read_bytes()
        ctype = mimetypes.guess_type(name)[0] or "application/octet-stream"
        self._send(200, body, f"{ctype}; charset=utf-8")

    def _out(self, rel: str) -> None:
        target = self.app.served_file(rel)
        if target is None:
            return self._json(404, {"ok": False, "message": f"no file {rel} from this page's jobs"})
        ctype = mimetypes.guess_type(target.name)[0] or "application/octet-stream"
        if target.suffix.lower() in (".html", ".json", ".csv", ".txt"):
            ctype += "; charset=utf-8"
        self._send(200, target.read_bytes(), ctype)

    # --- POST -------------------------------------------------------------------------------
    def _body(self) -> dict[str, Any] | None:
        ctype = (self.headers.get("Content-Type") or "").split(";")[0].strip().lower()
        if ctype != "application/json":
            self._refuse(415, "POST bodies must be application/json")
            return None
        try:
            n = int(self.headers.get("Content-Length") or 0)
        except ValueError:
            n = -1
        if not 0 <= n <= MAX_BODY_BYTES:
            self._refuse(413, f"a request body of at most {MAX_BODY_BYTES:,} bytes")
            return None
        try:
            body = json.loads(self.rfile.read(n) or b"{}")
        except (ValueError, RecursionError):
            self._refuse(400, "the request is not valid JSON")
            return None
        if not isinstance(body, dict):
            self._refuse(400, "the request must be a JSON object")
            return None
        return body

    def do_POST(self) -> None:
        try:
            self._post()
        except Exception as err:  # one line, never a traceback
            self._error(err)

    def _post(self) -> None:
        if not self._admit():
            return
        path = urlsplit(self.path).path
        routes = {
            "/api/preview": self._preview,
            "/api/build": self._build,
            "/api/sweep": self._sweep,
            "/api/save": self._save,
            "/api/open": self._open,
            "/api/cancel": self._cancel,
        }
        route = routes.get(path)
        if route is None:
            return self._json(404, {"ok": False, "message": f"no such action {path}"})
        body = self._body()
        if body is None:
            return
        route(body)

    def _spec_in(self, body: dict[str, Any]) -> tuple[Any, Any]:
        base = self.app.base_dir(body)
        data = body.get("data")
        self.app.check_files(data, base)
        return data, base

    def _preview(self, body: dict[str, Any]) -> None:
        try:
            data, base = self._spec_in(body)
        except SpecError as err:
            return self._json(
                200, {"ok": False, "problems": problem_lines(err), "message": str(err)}
            )
        self._json(200, preview(data, base))

    def _build(self, body: dict[str, Any]) -> None:
        data, base = self._spec_in(body)
        cli_out = self.app.out_dir
        default = str(cli_out) if cli_out is not None else _name(data)
        state = self.app.jobs.start_build(
            data,
            base,
            self.app.out_target(body.get("out"), default),
            only=_only(body.get("only")),
            force=bool(body.get("force")),
            quality=str(body.get("quality") or "normal"),
        )
        self._json(202, {"ok": True, "job": state})

    def _sweep(self, body: dict[str, Any]) -> None:
        data, base = self._spec_in(body)
        state = self.app.jobs.start_sweep(
            data,
            base,
            str(body.get("key") or ""),
            str(body.get("values") or ""),
            self.app.out_target(body.get("sweep_out"), f"{_name(data)}-sweep"),
            only=_only(body.get("only")),
        )
        self._json(202, {"ok": True, "job": state})

    def _cancel(self, body: dict[str, Any]) -> None:
        self._json(200, {"ok": True, "job": self.app.jobs.cancel()})

    def _save(self, body: dict[str, Any]) -> None:
        from ductgen.atomic import write_atomic
        from ductgen.spec.write import spec_text

        path = self.app.save_target(body.get("path"))
        data, base = self._spec_in(body)
        check_spec(data, base)  # only a valid spec is written
        text = spec_text(data, path, "ductgen spec, written by ductgen design")
        write_atomic(path, text.encode(), force=bool(body.get("force")))
        self._json(200, {"ok": True, "path": self.app.work.show(path)})

    def _open(self, body: dict[str, Any]) -> None:
        from ductgen.spec import read_spec_data

        path = self.app.open_target(body.get("path"))
        data = read_spec_data(path)
        self._json(200, {"ok": True, "data": data, "spec_path": self.app.work.show(path)})


def _name(data: Any) -> str:
    """The spec's name for a default folder (checked with the spec itself later)."""
    name = data.get("name") if isinstance(data, dict) else None
    return name.strip() if isinstance(name, str) and name.strip() else "ductgen"


class _Server(ThreadingHTTPServer):
    """A threading server with a cap on connections and a one-line error report."""

    daemon_threads = True
    request_queue_size = 128
    address_family = socket.AF_INET

    def __init__(self, *args: Any, **kw: Any) -> None:
        self._slots = threading.BoundedSemaphore(MAX_CONNECTIONS)
        super().__init__(*args, **kw)

    def process_request(self, request: Any, client_address: Any) -> None:
        if not self._slots.acquire(blocking=False):
            with contextlib.suppress(OSError):
                request.sendall(
                    b"HTTP/1.0 503 Service Unavailable\r\nContent-Length: 0\r\n"
                    b"Connection: close\r\n\r\n"
                )
            self.shutdown_request(request)
            return
        try:
            super().process_request(request, client_address)
        except Exception:
            self._slots.release()
            raise

    def process_request_thread(self, request: Any, client_address: Any) -> None:
        try:
            super().process_request_thread(request, client_address)
        finally:
            self._slots.release()

    def handle_error(self, request: Any, client_address: Any) -> None:
        err = sys.exc_info()[1]
        where = client_address[0] if client_address else "?"
        say(f"connection from {where} dropped: {type(err).__name__}: {err}")


def make_server(
    app: DesignApp, host: str = "127.0.0.1", port: int = 0, *, allow_remote: bool = False
) -> ThreadingHTTPServer:
    """A server for ``app`` bound to ``host:port`` (port 0: any free port).

    Raises:
        SpecError: ``host`` is not a loopback address and ``allow_remote`` is False (the
            CLI sets it only when ``--host`` is given), ``host`` is not an address of this
            computer (on ``--host``), or the port cannot be bound (on ``--port``).
    """
    if not allow_remote and not is_loopback(host):
        raise SpecError(
            "--host",
            host,
            "127.0.0.1, ::1 or localhost",
            "the design page serves this computer only unless --host is given",
        )
    if not 0 <= port <= 65535:
        raise SpecError("--port", port, "0 to 65535 (0 = any free port)", "a TCP port number")
    bind = host.strip().strip("[]")
    try:
        infos = socket.getaddrinfo(bind, port, type=socket.SOCK_STREAM)
    except (socket.gaierror, UnicodeError) as err:
        raise SpecError(
            "--host", host, "an address or name of this computer", f"cannot resolve it: {err}"
        ) from err
    family = infos[0][0]
    server_cls = type("DesignServer", (_Server,), {"address_family": family})
    handler = cast("type[_Handler]", type("Handler", (_Handler,), {"app": app}))
    try:
        server = server_cls((bind, port), handler)
    except OSError as err:
        key, allowed = ("--port", "a free port (0 = any)")
        if err.errno in (99, 49):  # EADDRNOTAVAIL (Linux, BSD): not an address of this host
            key, allowed = ("--host", "an address of this computer")
        raise SpecError(
            key, host if key == "--host" else port, allowed, err.strerror or str(err)
        ) from err
    handler.hosts = allowed_hosts(bind, port_of(server.server_address))
    return server
