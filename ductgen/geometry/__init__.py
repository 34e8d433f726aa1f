"""Pure geometry of the inlet (numpy/scipy only; no CAD kernel, no spec)."""

from ductgen.geometry.floor import Floor, ramp_angle_for_length, ramp_length
from ductgen.geometry.inlet import InletGeometry
from ductgen.geometry.lip import Lip
from ductgen.geometry.planform import Planform
from ductgen.geometry.profile import Profile, available_profiles, load_profile
from ductgen.geometry.transition import Transition

__all__ = [
    "Floor",
    "InletGeometry",
    "Lip",
    "Planform",
    "Profile",
    "Transition",
    "available_profiles",
    "load_profile",
    "ramp_angle_for_length",
    "ramp_length",
]
