"""What the design page lets a request do: who may ask, from where, and which files it may
touch.

The page writes and reads the user's files, so every request is treated as hostile until it
shows otherwise:

* **A secret per run.** :func:`new_secret` makes a random key; ``ductgen design`` prints it in
  the page's address (``?token=...``). The first load with it sets an ``HttpOnly;
  SameSite=Strict`` cookie; scripts may send ``Authorization: Bearer KEY`` instead. Without
  the key, ``/api/*`` and ``/out/*`` answer 401 (no key) or 403 (a wrong key). Another local
  user or process cannot read the key from the process list (it is never an argument).
* **This server, this page.** The ``Host`` header must name this server (an IP literal or a
  name this computer answers to, with the bound port): a web page elsewhere that reaches the
  server through DNS rebinding names its own host and is refused. An ``Origin`` header, when
  sent, must be the page's own (``http://`` + the Host), and a browser's
  ``Sec-Fetch-Site: cross-site`` is refused: another web page in the same browser cannot
  drive the API.
* **One work folder.** :class:`WorkFolder` resolves every path a request names inside the
  folder the user chose (the spec's folder or ``--root``): relative paths are taken inside it;
  absolute paths, ``..`` and symbolic links that lead out of it are refused; nothing is
  written inside the installed package.
"""

from __future__ import annotations

import hmac
import ipaddress
import os
import secrets
import socket
from dataclasses import dataclass
from http.cookies import CookieError, SimpleCookie
from importlib.resources import files
from pathlib import Path

__all__ = [
    "PathRefused",
    "Refusal",
    "WorkFolder",
    "allowed_hosts",
    "check_origin",
    "cookie_name",
    "credential_status",
    "is_loopback",
    "new_secret",
    "package_dir",
]

#: Spec files the page may open (by suffix); it saves ``.toml`` only.
SPEC_SUFFIXES = (".toml", ".yaml", ".yml", ".json")


class Refusal(Exception):
    """A request refused before any work: ``status`` is the HTTP status, the message one
    sentence for the page and the terminal."""

    def __init__(self, status: int, message: str) -> None:
        super().__init__(message)
        self.status = status


class PathRefused(Refusal):
    """A path that leads out of the work folder, or is not what the action may touch (400)."""

    def __init__(self, message: str) -> None:
        super().__init__(400, message)


def new_secret() -> str:
    """A random key for one run of the page (256 bits, URL-safe)."""
    return secrets.token_urlsafe(32)


def cookie_name(port: int) -> str:
    """The cookie holding the key; named by port, because cookies are shared between ports
    of one host and two pages may run at once."""
    return f"ductgen_key_{port}"


def credential_status(secret: str, port: int, cookie: str | None, auth: str | None) -> int:
    """0 when the request carries the right key (cookie or ``Authorization: Bearer``),
    401 when it carries none, 403 when it carries a wrong one."""
    offered: list[str] = []
    if auth:
        scheme, _, value = auth.strip().partition(" ")
        if scheme.lower() == "bearer" and value.strip():
            offered.append(value.strip())
    if cookie:
        try:
            jar = SimpleCookie(cookie)
        except CookieError:
            jar = SimpleCookie()
        morsel = jar.get(cookie_name(port))
        if morsel is not None and morsel.value:
            offered.append(morsel.value)
    if not offered:
        return 401
    good = any(hmac.compare_digest(o.encode(), secret.encode()) for o in offered)
    return 0 if good else 403


def is_loopback(host: str) -> bool:
    """Whether ``host`` names this computer only (127.0.0.0/8, ::1 or ``localhost``)."""
    if host.strip().lower() == "localhost":
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False


def _ip_literal(host: str) -> ipaddress.IPv4Address | ipaddress.IPv6Address | None:
    try:
        return ipaddress.ip_address(host.strip("[]"))
    except ValueError:
        return None


@dataclass(frozen=True)
class HostRule:
    """Which ``Host`` headers name this server: ``port`` must match; a loopback bind accepts
    loopback names only; a bind to another address (``--host``) also accepts IP literals
    (a rebinding attack needs a domain name) and this computer's own names."""

    port: int
    loopback_only: bool
    names: frozenset[str]

    def accepts(self, header: str | None) -> bool:
        text = (header or "").strip().lower()
        if not text:
            return False
        if text.startswith("["):
            host, _, rest = text[1:].partition("]")
            port = rest.removeprefix(":")
        else:
            host, sep, port = text.rpartition(":")
            if not sep:
                host, port = text, ""
        if port != str(self.port):
            return False
        ip = _ip_literal(host)
        if ip is not None:
            return ip.is_loopback or not self.loopback_only
        return host in self.names


def allowed_hosts(bind: str, port: int) -> HostRule:
    """The :class:`HostRule` for a server bound to ``bind:port``."""
    names = {"localhost"}
    bind = bind.strip().strip("[]").lower()
    if _ip_literal(bind) is None:
        names.add(bind)
    loopback_only = is_loopback(bind)
    if not loopback_only:
        for name in (socket.gethostname(), socket.getfqdn()):
            if name:
                names.add(name.lower())
    return HostRule(port=port, loopback_only=loopback_only, names=frozenset(names))


def check_origin(origin: str | None, host: str | None, fetch_site: str | None) -> str | None:
    """Why a request from another web page is refused, or None when it may go on: an
    ``Origin``, when sent, must be ``http://`` + the request's Host; a browser's
    ``Sec-Fetch-Site: cross-site`` is refused whatever the Origin."""
    if (fetch_site or "").strip().lower() == "cross-site":
        return "the request comes from another web site (Sec-Fetch-Site: cross-site)"
    if origin is None:
        return None
    want = f"http://{(host or '').strip().lower()}"
    if origin.strip().lower() != want:
        return f"Origin {origin.strip()!r} is not this page ({want})"
    return None


def package_dir() -> Path:
    """The installed ``ductgen`` package's folder (nothing is ever written inside it)."""
    return Path(str(files("ductgen"))).resolve()


class WorkFolder:
    """The one folder the page reads and writes: every path a request names is resolved
    inside it or refused.

    Args:
        root: an existing folder (resolved: symbolic links in the root itself are fine).
    """

    def __init__(self, root: Path) -> None:
        self.root = Path(root).resolve(strict=True)

    def resolve(self, text: object, what: str) -> Path:
        """The real path of ``text`` inside the work folder.

        ``text`` relative is taken inside the folder; absolute must lie inside it. Symbolic
        links are followed and the *result* must lie inside the folder.

        Raises:
            PathRefused: empty, not text, ``~``, a NUL byte, or a path that leads out.
        """
        if not isinstance(text, str) or not text.strip():
            raise PathRefused(f"{what}: give a file or folder name inside {self.root}")
        raw = text.strip()
        if "\x00" in raw or raw.startswith("~"):
            raise PathRefused(f"{what} {raw!r}: give a plain path inside {self.root}")
        p = Path(raw)
        if not p.is_absolute():
            p = self.root / p
        real = Path(os.path.realpath(p))
        if real != self.root and not real.is_relative_to(self.root):
            raise PathRefused(
                f"{what} {raw!r} leads outside the work folder {self.root}; the page reads "
                "and writes only inside it (start it with --root DIR for another folder)"
            )
        return real

    def writable(self, text: object, what: str) -> Path:
        """:meth:`resolve`, and refused inside the installed package."""
        real = self.resolve(text, what)
        pkg = package_dir()
        if real == pkg or real.is_relative_to(pkg):
            raise PathRefused(
                f"{what} {text!r} is inside the installed ductgen package; save and build "
                "into a folder of your own"
            )
        return real

    def show(self, path: Path) -> str:
        """``path`` as the page shows it: relative to the work folder."""
        real = Path(os.path.realpath(path))
        try:
            rel = real.relative_to(self.root)
        except ValueError:
            return str(real)
        return str(rel) if str(rel) != "." else "."

    def free_name(self, stem: str, suffix: str = ".toml") -> str:
        """A file name in the work folder that does not exist yet: ``stem.toml``, then
        ``stem-2.toml``, ``stem-3.toml``..."""
        safe = "".join(c if c.isalnum() or c in "-_." else "-" for c in stem).strip(".") or "spec"
        for k in range(1, 1000):
            name = f"{safe}{suffix}" if k == 1 else f"{safe}-{k}{suffix}"
            if not (self.root / name).exists():
                return name
        return f"{safe}-{secrets.token_hex(3)}{suffix}"
