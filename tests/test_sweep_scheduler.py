"""``sweep --scheduler`` at an address where no Dask scheduler runs: exit 2 within seconds,
with a sentence saying what was found there (nothing listening, a server that says nothing,
a server that speaks another protocol), and nothing written. Only 127.0.0.1 is used.
"""

from __future__ import annotations

import socket
import threading
from collections.abc import Callable, Iterator
from pathlib import Path

import pytest

from ductgen.cli.app import main
from ductgen.errors import SpecError
from ductgen.sweep.scheduler import check_scheduler, split_address
from tests.conftest import GOOD
from tests.helpers import tree_digest

pytestmark = pytest.mark.usefixtures("keep_signal_handlers")


def _closed_port() -> int:
    s = socket.socket()
    s.bind(("127.0.0.1", 0))
    port = int(s.getsockname()[1])
    s.close()
    return port


@pytest.fixture
def server() -> Iterator[Callable[[bytes], int]]:
    """A plain local TCP server on 127.0.0.1 that sends ``greeting`` (maybe nothing) to every
    connection and then keeps it open until the test ends."""
    socks: list[socket.socket] = []
    stop = threading.Event()

    def start(greeting: bytes) -> int:
        srv = socket.socket()
        srv.bind(("127.0.0.1", 0))
        srv.listen()
        srv.settimeout(0.2)
        socks.append(srv)

        def serve() -> None:
            while not stop.is_set():
                try:
                    conn, _ = srv.accept()
                except OSError:
                    continue
                socks.append(conn)
                if greeting:
                    conn.sendall(greeting)

        threading.Thread(target=serve, daemon=True).start()
        return int(srv.getsockname()[1])

    yield start
    stop.set()
    for s in socks:
        s.close()


def _sweep(tmp: Path, address: str) -> list[str]:
    spec = tmp / "s.toml"
    spec.write_text(GOOD)
    out = str(tmp / "sw")
    return ["sweep", str(spec), "-o", out, "--vary", "throat.width=70,90", "--scheduler", address]


def _refused(tmp: Path, capsys: pytest.CaptureFixture[str], address: str) -> str:
    args = _sweep(tmp, address)
    before = tree_digest(tmp)
    code = main(args)
    err = " ".join(capsys.readouterr().err.split())
    assert code == 2, err
    assert "--scheduler" in err and "Traceback" not in err and "internal error" not in err
    assert tree_digest(tmp) == before
    return err


def test_closed_port(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    err = _refused(tmp_path, capsys, f"tcp://127.0.0.1:{_closed_port()}")
    assert "nothing listens" in err and "connection refused" in err


def test_server_that_says_nothing(tmp_path: Path, capsys, server) -> None:  # type: ignore[no-untyped-def]
    """An HTTP server waits for a request: no Dask handshake arrives within the timeout."""
    err = _refused(tmp_path, capsys, f"tcp://127.0.0.1:{server(b'')}")
    assert "not as a Dask scheduler" in err and "no Dask handshake within 5 s" in err


@pytest.mark.parametrize(
    "greeting",
    [
        b"SSH-2.0-OpenSSH_9.2\r\n",  # a server that speaks first
        b"HTTP/1.0 400 Bad Request\r\n\r\n",  # read as a length, this asked Dask for 3.07 EiB
        b"\x20\x00\x00\x00\x00\x00\x00\x00" + b"\xff" * 8,  # a small length, no frame count
        b"\x01\x02",  # a few bytes, then nothing
    ],
)
def test_server_that_is_not_dask(tmp_path: Path, capsys, server, greeting: bytes) -> None:  # type: ignore[no-untyped-def]
    err = _refused(tmp_path, capsys, f"127.0.0.1:{server(greeting)}")
    assert "answers, but not as a Dask scheduler" in err


@pytest.mark.parametrize(
    ("address", "words"),
    [
        ("ucx://127.0.0.1:8786", "scheme ucx://"),
        ("tcp://127.0.0.1:70000", "1 to 65535"),
        ("tcp://127.0.0.1:http", "1 to 65535"),
        ("tcp://:8786", "no host"),
        ("tcp://no-such-host.invalid:8786", "unknown"),
    ],
)
def test_bad_addresses(address: str, words: str) -> None:
    with pytest.raises(SpecError) as err:
        check_scheduler(address, timeout_s=1.0)
    assert err.value.key == "--scheduler" and words in str(err.value)


def test_split_address() -> None:
    assert split_address("tcp://10.0.0.1:8786") == ("tcp", "10.0.0.1", 8786)
    assert split_address("10.0.0.1") == ("tcp", "10.0.0.1", 8786)  # Dask's default port
    assert split_address("tls://[::1]:9000") == ("tls", "::1", 9000)


def test_a_real_scheduler_passes() -> None:
    distributed = pytest.importorskip("distributed")
    with distributed.LocalCluster(
        n_workers=0, processes=False, protocol="tcp", host="127.0.0.1", dashboard_address=None
    ) as c:
        check_scheduler(c.scheduler_address)  # raises on anything but a Dask handshake
