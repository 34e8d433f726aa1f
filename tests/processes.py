"""Helpers the signal tests share: processes found by the marker in their environment
(``DUCTGEN_TEST_MARK``), their command lines, and waiting for a condition."""

from __future__ import annotations

import time
from pathlib import Path

import pytest

WAIT_S = 120.0  # upper bound of any wait (the machine is shared; kernel start takes 2-8 s)


def marked(marker: str) -> list[int]:
    """Live (non-zombie) processes whose environment holds ``marker``."""
    found = []
    needle = f"DUCTGEN_TEST_MARK={marker}".encode()
    for d in Path("/proc").iterdir():
        if not d.name.isdigit():
            continue
        try:
            if needle not in (d / "environ").read_bytes().split(b"\0"):
                continue
            state = (d / "stat").read_text().rsplit(")", 1)[1].split()[0]
        except OSError:
            continue
        if state != "Z":
            found.append(int(d.name))
    return found


def cmdline(pid: int) -> str:
    try:
        return Path(f"/proc/{pid}/cmdline").read_bytes().replace(b"\0", b" ").decode()
    except OSError:
        return ""


def until(cond, what: str) -> None:  # type: ignore[no-untyped-def]
    deadline = time.monotonic() + WAIT_S
    while not cond():
        if time.monotonic() > deadline:
            pytest.fail(f"waited {WAIT_S:.0f} s for {what}")
        time.sleep(0.1)


def gone(marker: str) -> bool:
    return not marked(marker)
