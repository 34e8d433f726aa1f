"""Shared fixtures: bundled samples, built once per test session."""

from __future__ import annotations

import os
from collections.abc import Iterator
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = sorted((ROOT / "samples").glob("*.toml"))


DATA = Path(__file__).resolve().parent / "data"

#: Headless Debian Chromium as it runs on this workplace (no network, no sandbox as root).
CHROMIUM_FLAGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
]

#: A small valid spec (TOML text) for command-line tests.
GOOD = """\
name = "t"
[throat]
width = 80
depth = 20
[ramp]
angle_deg = 7
[outlet]
kind = "round"
diameter = 50
transition_length = 100
"""


@pytest.fixture(scope="session", autouse=True)
def _session_solid_cache(tmp_path_factory: pytest.TempPathFactory) -> Iterator[None]:
    """The solid cache of session-wide fixtures (e.g. :func:`sample_builds`): an empty
    folder of this session, never the user's cache."""
    old = os.environ.get("DUCTGEN_CACHE_DIR")
    os.environ["DUCTGEN_CACHE_DIR"] = str(tmp_path_factory.mktemp("solid-cache-session"))
    yield
    if old is None:
        os.environ.pop("DUCTGEN_CACHE_DIR", None)
    else:
        os.environ["DUCTGEN_CACHE_DIR"] = old


@pytest.fixture(autouse=True)
def _solid_cache(tmp_path_factory: pytest.TempPathFactory, monkeypatch: pytest.MonkeyPatch) -> None:
    """Every test starts with an empty solid cache of its own (so its first build of a
    design runs the kernel, and no test reads another's or the user's entries)."""
    monkeypatch.setenv("DUCTGEN_CACHE_DIR", str(tmp_path_factory.mktemp("solid-cache")))
    monkeypatch.delenv("DUCTGEN_CACHE_MB", raising=False)


#: ductgen kernel jobs the current test ran (setup included), with DUCTGEN_CHECK_SLOW=1.
_KERNEL_JOBS_RUN: list[str] = []


def pytest_configure(config: pytest.Config) -> None:
    """With ``DUCTGEN_CHECK_SLOW=1``, note every ductgen job the kernel worker runs."""
    if os.environ.get("DUCTGEN_CHECK_SLOW") != "1":
        return
    from ductgen.worker import KernelWorker

    real = KernelWorker._run

    def spy(self: KernelWorker, target: str, *rest: object) -> object:
        if target.startswith("ductgen."):
            _KERNEL_JOBS_RUN.append(target)
        return real(self, target, *rest)

    KernelWorker._run = spy  # type: ignore[method-assign]


@pytest.hookimpl(tryfirst=True)
def pytest_runtest_setup(item: pytest.Item) -> None:
    _KERNEL_JOBS_RUN.clear()


@pytest.hookimpl(wrapper=True)
def pytest_runtest_call(item: pytest.Item) -> Iterator[None]:
    """With ``DUCTGEN_CHECK_SLOW=1``: a test that ran a ductgen job in the kernel worker (a
    solid, a panel, a preview picture; in its body or its fixtures' setup) and is not
    marked ``slow`` fails, naming the jobs. ``DUCTGEN_CHECK_SLOW=1 pytest -m "not slow"``
    lists the tests still to mark (builds in a child ``ductgen`` process are not seen).
    Off by default until every kernel test is marked."""
    result = yield
    if _KERNEL_JOBS_RUN and item.get_closest_marker("slow") is None:
        pytest.fail(f"ran kernel jobs {sorted(set(_KERNEL_JOBS_RUN))} but is not marked slow")
    return result


def naca_ordinates() -> list[tuple[float, float]]:
    """The standard wall table (x/L, 2y/W) from ``tests/data/naca_ordinates.json``, the one
    test copy of it (source: NACA ACR 5I20, recalled from memory; see the file)."""
    import json

    doc = json.loads((DATA / "naca_ordinates.json").read_text(encoding="utf-8"))
    return [(float(x), float(f)) for x, f in doc["rows"]]


def sample_ids() -> list[str]:
    return [p.stem for p in SAMPLES]


@pytest.fixture(scope="session")
def sample_builds(tmp_path_factory: pytest.TempPathFactory) -> dict:
    """Every sample built with every output kind, once: name → (BuildResult, out dir)."""
    from ductgen.pipeline import build
    from ductgen.spec import load_spec

    out = {}
    base = tmp_path_factory.mktemp("samples")
    for path in SAMPLES:
        spec = load_spec(path)
        folder = base / path.stem
        out[path.stem] = (build(spec, folder), folder)
    return out


@pytest.fixture
def keep_signal_handlers() -> Iterator[None]:
    """SIGTERM and SIGHUP handlers as they were before the test (``cli.main`` installs its
    own when a test calls it)."""
    import signal

    saved = {s: signal.getsignal(s) for s in (signal.SIGTERM, signal.SIGHUP)}
    yield
    for s, h in saved.items():
        signal.signal(s, h)
