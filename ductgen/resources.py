"""Data shipped inside the package: wall-curve tables, the print-materials table, samples.

Everything is read through :mod:`importlib.resources`, so a wheel or any non-editable
install finds the same files as a checkout. ``$DUCTGEN_PROFILES`` may point at a folder of
extra or replacement wall-curve tables.
"""

from __future__ import annotations

import os
from importlib.resources import files
from pathlib import Path

__all__ = ["data_path", "materials_path", "profiles_dir", "samples_dir"]


def data_path(*parts: str) -> Path:
    """A file or folder under ``ductgen/data`` as a filesystem path.

    ductgen is installed unzipped (setuptools' default), so the package's resources are
    real files; a zipped install is refused with a clear message.
    """
    res = files("ductgen").joinpath("data", *parts)
    path = Path(str(res))
    if not path.exists():
        raise FileNotFoundError(
            f"bundled data {'/'.join(parts)!r} is missing from the installed package "
            f"(looked at {path}); reinstall ductgen"
        )
    return path


def profiles_dir() -> Path:
    """Folder of the bundled wall-curve tables, or ``$DUCTGEN_PROFILES`` when set."""
    env = os.environ.get("DUCTGEN_PROFILES")
    return Path(env) if env else data_path("profiles")


def materials_path() -> Path:
    """The print-materials table (density, heat-deflection temperature)."""
    return data_path("materials.csv")


def samples_dir() -> Path:
    """The bundled sample specs (``ductgen init --example NAME``; also ``samples/`` in a
    checkout, which links here)."""
    return data_path("samples")
