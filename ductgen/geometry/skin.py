"""Skin maps: from design coordinates to points in space.

Every solid, template and sheet is laid out in *design coordinates* (mm): ``u`` along the
skin surface in the flow direction (0 at the ramp start), ``v`` along the surface across the
flow (0 on the centreline), ``w`` along the local outward surface normal (0 on the outer skin
surface, negative into the body). A :class:`SkinMap` turns them into model coordinates
``(x, y, z)`` — the one place that knows the shape of the panel.

A flat skin is the identity (x = u, y = v, z = w). A curved skin is a new ``SkinMap``
(a cylinder or a doubly curved patch maps ``u, v`` by arc length onto its surface and ``w``
along its normal); nothing else in the package changes for it. The marking template is drawn
in ``(u, v)``: the developed (unrolled) opening, exact for developable skins.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Protocol

import numpy as np

__all__ = ["FLAT", "FlatSkin", "SkinMap"]


class SkinMap(Protocol):
    """Design coordinates (u, v, w) → model coordinates (x, y, z), all in mm."""

    name: str

    def to_model(self, uvw: np.ndarray) -> np.ndarray:
        """Points (N, 3) in design coordinates → (N, 3) model coordinates (mm)."""
        ...

    def normal(self, uv: np.ndarray) -> np.ndarray:
        """Outward unit surface normals (N, 3) at surface points (N, 2) given as (u, v)."""
        ...

    @property
    def is_flat(self) -> bool:
        """True when the map is a rigid motion, so planar faces stay planar."""
        ...


@dataclass(frozen=True)
class FlatSkin:
    """A flat panel: design coordinates are model coordinates (skin outer surface z = 0)."""

    name: str = "flat"

    def to_model(self, uvw: np.ndarray) -> np.ndarray:
        return np.asarray(uvw, dtype=float).reshape(-1, 3)

    def normal(self, uv: np.ndarray) -> np.ndarray:
        n = len(np.asarray(uv).reshape(-1, 2))
        return np.tile([0.0, 0.0, 1.0], (n, 1))

    @property
    def is_flat(self) -> bool:
        return True


#: The flat skin (``skin.shape = "flat"``).
FLAT = FlatSkin()
