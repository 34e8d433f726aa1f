"""Checking a ``--scheduler`` address before Dask's client is pointed at it.

Dask's client trusts what answers: an HTTP server's reply read as a Dask frame header asked
for 3.07 EiB (a MemoryError), a silent server kept it waiting, and a refused connection was
retried for half a minute. So the address is checked here first, within a few seconds: the
scheme is one ductgen can check (``tcp://``, or ``tls://`` for the connection only), the host
resolves, something accepts the connection, and (over plain TCP) it sends a Dask handshake
first, as a Dask scheduler does on every new connection: an 8-byte little-endian length of a
small message, then that message, which starts with its own frame count.
"""

from __future__ import annotations

import socket
import struct
import time

from ductgen.errors import SpecError

__all__ = ["CONNECT_TIMEOUT_S", "check_scheduler", "split_address"]

#: Seconds allowed to connect and to receive the scheduler's handshake.
CONNECT_TIMEOUT_S = 5.0
#: Largest handshake accepted (bytes); Dask's is a few hundred bytes of msgpack.
MAX_HANDSHAKE_BYTES = 1 << 20
_ALLOWED = "the address of a running Dask scheduler, tcp://HOST:PORT (or tls://HOST:PORT)"
_DEFAULT_PORT = 8786


def _refuse(address: str, reason: str) -> SpecError:
    return SpecError("--scheduler", address, _ALLOWED, reason)


def split_address(address: str) -> tuple[str, str, int]:
    """(scheme, host, port) of a scheduler address; a bare ``HOST:PORT`` is TCP.

    Raises:
        SpecError: on ``--scheduler`` for an unknown scheme or a bad port.
    """
    text = address.strip()
    scheme, sep, rest = text.partition("://")
    if not sep:
        scheme, rest = "tcp", text
    scheme = scheme.lower()
    if scheme not in ("tcp", "tls"):
        raise _refuse(address, f"the scheme {scheme}:// is not one ductgen can check")
    rest = rest.rstrip("/")
    if rest.startswith("["):  # [IPv6]:port
        host, _, port_text = rest[1:].partition("]")
        port_text = port_text.removeprefix(":")
    else:
        host, _, port_text = rest.rpartition(":") if ":" in rest else (rest, "", "")
    if not host:
        raise _refuse(address, "no host is given")
    if not port_text:
        return scheme, host, _DEFAULT_PORT
    if not port_text.isdigit() or not 1 <= int(port_text) <= 65535:
        raise _refuse(address, f"the port {port_text!r} is not a number from 1 to 65535")
    return scheme, host, int(port_text)


def _recv_exact(sock: socket.socket, n: int, deadline: float) -> bytes:
    data = b""
    while len(data) < n:
        sock.settimeout(max(0.05, deadline - time.monotonic()))
        chunk = sock.recv(n - len(data))
        if not chunk:
            break
        data += chunk
    return data


def check_scheduler(address: str, timeout_s: float = CONNECT_TIMEOUT_S) -> None:
    """Refuse, within about ``2 × timeout_s``, an address where no Dask scheduler answers.

    Raises:
        SpecError: on ``--scheduler`` (exit 2), with a sentence saying what was found there.
    """
    scheme, host, port = split_address(address)
    where = f"{host}:{port}"
    try:
        sock = socket.create_connection((host, port), timeout=timeout_s)
    except socket.gaierror as err:
        raise _refuse(address, f"the host {host!r} is unknown ({err.strerror})") from None
    except ConnectionRefusedError:
        raise _refuse(address, f"nothing listens at {where} (connection refused)") from None
    except TimeoutError:
        raise _refuse(address, f"{where} did not accept a connection in {timeout_s:g} s") from None
    except OSError as err:
        raise _refuse(address, f"cannot connect to {where}: {err.strerror or err}") from None
    if scheme == "tls":  # the handshake is encrypted: Dask's client checks the rest
        sock.close()
        return
    not_dask = f"{where} answers, but not as a Dask scheduler"
    try:
        deadline = time.monotonic() + timeout_s
        head = _recv_exact(sock, 8, deadline)
        if len(head) < 8:
            raise _refuse(address, f"{not_dask} (it sent {len(head)} bytes and then nothing)")
        (size,) = struct.unpack("<Q", head)
        if not 16 <= size <= MAX_HANDSHAKE_BYTES:
            raise _refuse(address, f"{not_dask} (its first bytes are {head!r})")
        body = _recv_exact(sock, min(size, 8), deadline)
        (frames,) = struct.unpack("<Q", body) if len(body) == 8 else (0,)
        if not 1 <= frames <= 64:
            raise _refuse(address, f"{not_dask} (its first bytes are {(head + body)!r})")
    except TimeoutError:
        raise _refuse(
            address, f"{not_dask}: it sent no Dask handshake within {timeout_s:g} s"
        ) from None
    except OSError as err:
        raise _refuse(address, f"{not_dask}: {err.strerror or err}") from None
    finally:
        sock.close()
