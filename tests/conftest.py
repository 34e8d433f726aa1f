"""Shared fixtures: bundled samples, built once per test session."""

from __future__ import annotations

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
