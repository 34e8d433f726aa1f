"""ductgen: flush (NACA-type) submerged air inlets from one spec file.

The curated public API (imported on first use, so ``import ductgen`` stays light)::

    from ductgen import load_spec, build_design, build
    spec = load_spec("samples/ekart-battery-vent.toml")
    d = build_design(spec)             # the design, checked once: geometry in mm, layout
    result = build(spec, "out/")       # solids, files, report.json
"""

from __future__ import annotations

from importlib import import_module
from typing import Any

_EXPORTS = {
    "load_spec": "ductgen.spec",
    "parse_spec": "ductgen.spec",
    "Spec": "ductgen.spec",
    "build_design": "ductgen.design",
    "Design": "ductgen.design",
    "InletGeometry": "ductgen.geometry",
    "build": "ductgen.pipeline",
    "BuildResult": "ductgen.pipeline",
    "DuctgenError": "ductgen.errors",
    "SpecError": "ductgen.errors",
    "GeometryError": "ductgen.errors",
    "DesignWarning": "ductgen.errors",
}

__all__ = ["__version__", *_EXPORTS]


def _version() -> str:
    """The installed distribution's version (read on first use: ``importlib.metadata``
    imports the e-mail package, the largest part of ``import ductgen`` before the command
    line can handle Ctrl-C)."""
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("ductgen")
    except PackageNotFoundError:  # pragma: no cover - running from a bare checkout
        return "0+unknown"


def __getattr__(name: str) -> Any:
    if name == "__version__":
        globals()["__version__"] = found = _version()
        return found
    if name in _EXPORTS:
        return getattr(import_module(_EXPORTS[name]), name)
    raise AttributeError(f"module 'ductgen' has no attribute {name!r}")
