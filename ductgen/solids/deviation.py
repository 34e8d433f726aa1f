"""How far an edge lies from its faces (CAD kernel: runs in the kernel worker; mm): the
kernel's measure, and :class:`Deviation`, which asks for it only when a cheaper lower bound
cannot decide. Used by :mod:`ductgen.solids.tighten`."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import numpy as np

if TYPE_CHECKING:  # the kernel's bindings carry no type information
    from OCP.TopoDS import TopoDS_Edge, TopoDS_Face

__all__ = ["PROBES", "Deviation", "curve_on_face_deviation"]

#: Points at which :class:`Deviation` samples an edge for its lower bound.
PROBES = 17


def curve_on_face_deviation(e: TopoDS_Edge, f: TopoDS_Face) -> float:
    """Largest distance (mm) between the edge's 3D curve and its surface curve on ``f``
    mapped through the surface (the kernel's optimiser, as its checks measure it); inf
    when the edge has no surface curve there."""
    from OCP.BRepAdaptor import BRepAdaptor_Curve, BRepAdaptor_Curve2d, BRepAdaptor_Surface

    try:
        c2 = BRepAdaptor_Curve2d(e, f)
    except Exception:  # no surface curve (kernel exceptions share no base class)
        return float("inf")
    return _measured(BRepAdaptor_Curve(e), c2, BRepAdaptor_Surface(f))


def _measured(curve: Any, on: Any, surface: Any) -> float:
    """The kernel's optimiser's largest distance (mm) between a 3D curve adaptor and a
    surface curve adaptor mapped through a surface adaptor; inf when it fails."""
    from OCP.Adaptor3d import Adaptor3d_CurveOnSurface
    from OCP.GeomLib import GeomLib_CheckCurveOnSurface

    check = GeomLib_CheckCurveOnSurface(curve, 1e-9)
    check.Perform(Adaptor3d_CurveOnSurface(on, surface))
    return float(check.MaxDistance()) if check.IsDone() else float("inf")


class Deviation:
    """An edge's present deviation (mm) from its faces, as :func:`curve_on_face_deviation`
    measures it (the larger of the two), asked for only when a decision needs it: the
    kernel's optimiser costs 2-4 ms a face on a mapped solid's edges, and most questions
    ("above 2e-8 mm?", "above the rebuilt edge's 1e-9 mm?") are settled by a lower bound,
    the largest distance at :data:`PROBES` points between the 3D curve and each surface
    curve mapped through its surface. The curves are held, so the edge may be changed
    meanwhile."""

    def __init__(self, e: TopoDS_Edge | None, faces: list[TopoDS_Face], value: float = 0.0):
        self._exact: float | None = None
        self.lower = value
        if e is None:
            self._exact = value
            return
        from OCP.BRepAdaptor import BRepAdaptor_Curve, BRepAdaptor_Curve2d, BRepAdaptor_Surface

        self._curve = BRepAdaptor_Curve(e)
        try:
            self._on = [(BRepAdaptor_Curve2d(e, f), BRepAdaptor_Surface(f)) for f in faces]
        except Exception:  # no surface curve (kernel exceptions share no base class)
            self._exact = self.lower = float("inf")
            return
        c = self._curve
        for t in np.linspace(c.FirstParameter(), c.LastParameter(), PROBES):
            p = c.Value(float(t))
            for k, s in self._on:
                uv = k.Value(float(t))
                self.lower = max(self.lower, p.Distance(s.Value(uv.X(), uv.Y())))

    @classmethod
    def known(cls, value: float) -> Deviation:
        """A deviation already measured (mm)."""
        return cls(None, [], value)

    def exact(self) -> float:
        """The kernel's measure (mm), as :func:`curve_on_face_deviation` on the edge as it
        was."""
        if self._exact is None:
            self._exact = max(_measured(self._curve, k, s) for k, s in self._on)
        return self._exact

    def above(self, x: float) -> bool:
        """Whether the deviation exceeds ``x`` (mm)."""
        return self.lower > x or self.exact() > x
