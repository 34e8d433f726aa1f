"""The limits a skin is held to (analytic skins and the user's panel alike)."""

from __future__ import annotations

__all__ = ["MAX_DEPTH_FRACTION", "MAX_DISTORTION_PCT", "MAX_WRAP_DEG"]

#: Largest angle (deg) the opening, flange or plug plate may wrap around a curved skin.
#: ductgen's design coordinates lay the flat-plate inlet of the NACA tests onto the panel;
#: beyond about a sixth of a turn the panel is no longer "locally gently curved" under the
#: inlet and a one-piece template or flange cannot be laid on it (common practice, no source).
MAX_WRAP_DEG = 60.0
#: Inside a convex skin the floor and duct may reach at most this fraction of the radius
#: deep: beyond it the normals through the part converge so much that walls of the flat
#: design thin out by more than half.
MAX_DEPTH_FRACTION = 0.5

#: Largest length distortion (percent) of a flattened template worth no warning: 0.5 % is
#: 1.5 mm over a 300 mm opening, about what a shop absorbs when it marks and trims by hand
#: (common practice, no source); beyond it mark from the cutter solid or a formed template.
MAX_DISTORTION_PCT = 0.5
