"""How the design page's server answers a request: the security headers on every answer,
refusals said once on the terminal, errors as JSON with the CLI's words, and the Host,
Origin and key checks (:mod:`ductgen.page.guard`) every request passes before a route."""

from __future__ import annotations

import json
import sys
from http.server import BaseHTTPRequestHandler
from typing import Any
from urllib.parse import urlsplit

from ductgen.errors import DuctgenError, OverwriteError, SpecError, excerpt
from ductgen.page.app import DesignApp
from ductgen.page.guard import HostRule, Refusal, check_origin, credential_status
from ductgen.page.jobs import Busy
from ductgen.page.preview import problem_lines

__all__ = ["SOCKET_TIMEOUT_S", "Answers", "port_of", "say"]

#: Seconds a connection may stay silent before it is closed.
SOCKET_TIMEOUT_S = 10.0

_NO_KEY = (
    "this page needs the key ductgen design printed: open the address it printed "
    "(http://HOST:PORT/?token=...)"
)


def say(line: str) -> None:
    """One line on the terminal (the server's only output besides the address)."""
    try:
        safe = "".join(c if c.isprintable() else "?" for c in line)  # no terminal escapes
        if len(safe) > 300:
            safe = safe[:299] + "…"
        sys.stderr.write(f"ductgen design: {safe}\n")
        sys.stderr.flush()
    except (OSError, ValueError):
        pass


def port_of(address: object) -> int:
    """The port of a TCP server's address, ``(host, port)`` or ``(host, port, flow, scope)``."""
    if not isinstance(address, tuple):
        raise TypeError(f"not a TCP address: {address!r}")
    return int(address[1])


class Answers(BaseHTTPRequestHandler):
    """How the design page's server answers: JSON or a file with the page's security
    headers, a refusal in one line on the terminal, every error as a status and a message
    (never a traceback), and :meth:`_admit`, the Host, Origin and key checks every request
    passes first."""

    server_version = "ductgen-design"
    timeout = SOCKET_TIMEOUT_S  # StreamRequestHandler sets it on the socket
    app: DesignApp
    hosts: HostRule

    def log_message(self, format: str, *args: Any) -> None:
        pass  # refusals are said once each by _refuse; the page shows the rest

    def log_error(self, format: str, *args: Any) -> None:
        say(f"bad request from {self.client_address[0]}: {format % args}")

    # --- answers ---------------------------------------------------------------------------
    def _send(
        self, code: int, body: bytes, ctype: str, extra: dict[str, str] | None = None
    ) -> None:
        self.send_response(code)
        self.send_header("Content-Type", ctype)
        self.send_header("Content-Length", str(len(body)))
        self.send_header("Cache-Control", "no-store")
        self.send_header("X-Content-Type-Options", "nosniff")
        self.send_header("X-Frame-Options", "DENY")
        self.send_header("Referrer-Policy", "no-referrer")
        self.send_header(
            "Content-Security-Policy",
            "default-src 'self'; img-src 'self' data: blob:; style-src 'self' 'unsafe-inline'; "
            "frame-ancestors 'none'",
        )
        for k, v in (extra or {}).items():
            self.send_header(k, v)
        self.end_headers()
        if self.command != "HEAD":
            self.wfile.write(body)

    def _json(self, code: int, obj: Any) -> None:
        body = json.dumps(obj, allow_nan=False, default=str).encode()
        self._send(code, body, "application/json; charset=utf-8")

    def _refuse(self, code: int, message: str) -> None:
        what = f"{self.command} {urlsplit(self.path).path[:80]}"
        say(f"refused {code} {what} from {self.client_address[0]}: {message}")
        self._json(code, {"ok": False, "problems": [], "message": message})

    def _error(self, err: Exception) -> None:
        if isinstance(err, Refusal):
            self._refuse(err.status, str(err))
        elif isinstance(err, Busy):
            self._json(409, {"ok": False, "busy": True, "message": str(err), "job": err.state})
        elif isinstance(err, SpecError):
            self._json(400, {"ok": False, "problems": problem_lines(err), "message": str(err)})
        elif isinstance(err, OverwriteError):
            self._json(409, {"ok": False, "problems": [], "message": _page_words(str(err))})
        elif isinstance(err, DuctgenError):
            self._json(500, {"ok": False, "problems": [], "message": str(err)})
        else:
            say(f"internal error in {self.command} {self.path}: {type(err).__name__}: {err}")
            msg = f"internal error: {type(err).__name__}: {excerpt(str(err), 300)}"
            self._json(500, {"ok": False, "problems": [], "message": msg})

    # --- every request ---------------------------------------------------------------------
    def _admit(self, *, need_key: bool = True) -> bool:
        """Host, Origin and key checks; False when the request was refused (and answered)."""
        host = self.headers.get("Host")
        if not self.hosts.accepts(host):
            self._refuse(403, f"Host {host!r} does not name this server")
            return False
        why = check_origin(self.headers.get("Origin"), host, self.headers.get("Sec-Fetch-Site"))
        if why is not None:
            self._refuse(403, why)
            return False
        if need_key:
            status = credential_status(
                self.app.secret,
                port_of(self.server.server_address),
                self.headers.get("Cookie"),
                self.headers.get("Authorization"),
            )
            if status:
                self._refuse(status, _NO_KEY if status == 401 else "wrong key for this page")
                return False
        return True


def _page_words(message: str) -> str:
    """The CLI's overwrite sentence in the page's words (a checkbox, not ``--force``)."""
    return message.replace("pass --force", "tick 'replace existing files'").replace(
        "--force", "'replace existing files'"
    )
