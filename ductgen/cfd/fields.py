"""Initial and boundary fields (``0/``) of the CFD case, kinematic units (m, m/s, m²/s²).

Inlet: a 1/7-power turbulent boundary layer of the thickness the flat-plate estimate gives
at the inlet station, with k from the friction velocity and ω from a mixing length
(``fixedProfile`` tables in z). Top and sides are free-stream boundaries (air may cross
them, p → 0 there), so the duct's intake does not decelerate a confined channel; the
far-field outflow holds p = 0.
The duct outlet is a ``fanPressure`` patch whose "fan curve" is the duct system behind it
(hose, bends, cooler, exit; from the 1-D model) with the sign turned, so the static pressure
there rises with the flow as the real system demands and one solve finds the operating point.
Walls use Spalding's law (valid at any y+) with the ω and k wall functions.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ductgen.cfd.templates import header

__all__ = ["InletProfile", "field_files", "inlet_profile"]

#: k-ω SST / mixing-length constants: C_mu, von Kármán κ (textbook values, memory).
C_MU, KAPPA = 0.09, 0.41
#: Free-stream turbulence intensity at the inlet (an assumption, common practice).
FREE_STREAM_INTENSITY = 0.01


@dataclass(frozen=True)
class InletProfile:
    """Tables over z (m) of the inlet's U_x (m/s), k (m²/s²) and ω (1/s)."""

    z_m: tuple[float, ...]
    u_m_s: tuple[float, ...]
    k_m2_s2: tuple[float, ...]
    omega_1_s: tuple[float, ...]
    delta_m: float
    #: Height of the skin under the inlet's centre (m): z in the tables counts from it.
    origin_m: float = 0.0


def inlet_profile(
    speed_m_s: float, delta_m: float, run_m: float, nu_m2_s: float, z_top_m: float
) -> InletProfile:
    """1/7-power profile of thickness ``delta_m`` (m) at a run of ``run_m`` (m).

    Skin friction of the 1/7-power flat plate, c_f = 0.0592 Re_x^-0.2 (Schlichting,
    Boundary-Layer Theory, turbulent flat plate; recalled); u_τ = V √(c_f/2);
    k = u_τ²/√C_μ (1 − z/δ) + k∞ inside the layer; mixing length min(κ z, 0.09 δ).
    """
    re = speed_m_s * run_m / nu_m2_s
    u_tau = speed_m_s * math.sqrt(0.0592 * re**-0.2 / 2.0)
    k_inf = 1.5 * (FREE_STREAM_INTENSITY * speed_m_s) ** 2
    zs = sorted({*(delta_m * (i / 24.0) ** 2 for i in range(25)), 1.05 * delta_m, z_top_m})
    u, k, w = [], [], []
    for z in zs:
        eta = min(z / delta_m, 1.0)
        u.append(speed_m_s * eta ** (1.0 / 7.0))
        kk = k_inf + u_tau**2 / math.sqrt(C_MU) * (1.0 - eta)
        length = max(min(KAPPA * max(z, 1e-5), 0.09 * delta_m), 1e-6)
        if eta >= 1.0:
            length = 0.09 * delta_m
        k.append(kk)
        w.append(math.sqrt(kk) / (C_MU**0.25 * length))
    return InletProfile(tuple(zs), tuple(u), tuple(k), tuple(w), delta_m)


def _table(zs: tuple[float, ...], values: list[str]) -> str:
    return "\n".join(f"            ({z:.8g} {v})" for z, v in zip(zs, values, strict=True))


def _profile(p: InletProfile, which: str, direction: tuple[float, float]) -> str:
    cx, cy = direction
    if which == "U":
        vals = [f"({u * cx:.8g} {u * cy:.8g} 0)" for u in p.u_m_s]
    elif which == "k":
        vals = [f"{v:.8g}" for v in p.k_m2_s2]
    else:
        vals = [f"{v:.8g}" for v in p.omega_1_s]
    return (
        f"{{ type fixedProfile; direction (0 0 1); origin {p.origin_m:.8g};\n"
        "        profile table\n        (\n" + _table(p.z_m, vals) + "\n        ); }"
    )


#: Wall patches and far-field patches of every case (regular expressions of names).
_WALLS = "duct_floor|duct_cavity|duct_hose|lowerBox"
_FAR = "top|sides"

#: A field: class, dimensions, internal value and boundary condition by patch pattern.
_Field = tuple[str, str, str, dict[str, str]]


def field_files(
    p: InletProfile, speed_m_s: float, direction: tuple[float, float]
) -> dict[str, str]:
    """``0/U``, ``0/p``, ``0/k``, ``0/omega``, ``0/nut`` as text by file name."""
    fields = {**_flow_fields(p, speed_m_s, direction), **_turbulence_fields(p, direction)}
    out: dict[str, str] = {}
    for name, (cls, dims, internal, patches) in fields.items():
        body = [
            f"dimensions {dims};",
            f"internalField uniform {internal};",
            "boundaryField",
            "{",
            '    #includeEtc "caseDicts/setConstraintTypes"',
        ]
        for pat, bc in patches.items():
            key = f'"{pat}"' if "|" in pat else pat
            body.append(f"    {key}\n    {bc}")
        body.append("}")
        out[name] = header(cls, name, "0") + "\n".join(body) + "\n"
    return out


def _flow_fields(
    p: InletProfile, speed_m_s: float, direction: tuple[float, float]
) -> dict[str, _Field]:
    """Velocity (the inflow's profile, free stream on the far field) and pressure (the duct
    system's fan curve at the duct's outlet)."""
    cx, cy = direction
    u0 = f"({speed_m_s * cx:.8g} {speed_m_s * cy:.8g} 0)"
    walls, far = _WALLS, _FAR
    return {
        "U": (
            "volVectorField",
            "[0 1 -1 0 0 0 0]",
            u0,
            {
                "inlet": _profile(p, "U", direction),
                "outflow": "{ type inletOutlet; inletValue uniform (0 0 0); value uniform "
                + u0
                + "; }",
                far: "{ type freestreamVelocity; freestreamValue uniform " + u0 + "; }",
                walls: "{ type noSlip; }",
                "duct_outlet": "{ type pressureInletOutletVelocity; value uniform (0 0 0); }",
            },
        ),
        "p": (
            "volScalarField",
            "[0 2 -2 0 0 0 0]",
            "0",
            {
                "inlet": "{ type zeroGradient; }",
                "outflow": "{ type fixedValue; value uniform 0; }",
                far: "{ type freestreamPressure; freestreamValue uniform 0; }",
                walls: "{ type zeroGradient; }",
                "duct_outlet": '{ type fanPressure; file "<constant>/ductSystem"; '
                "outOfBounds clamp; direction out; p0 uniform 0; value uniform 0; }",
            },
        ),
    }


def _turbulence_fields(p: InletProfile, direction: tuple[float, float]) -> dict[str, _Field]:
    """k and omega (the inflow's profile, its free-stream values elsewhere) and nut."""
    k0, w0 = p.k_m2_s2[-1], p.omega_1_s[-1]
    walls, far = _WALLS, _FAR
    return {
        "k": (
            "volScalarField",
            "[0 2 -2 0 0 0 0]",
            f"{k0:.8g}",
            {
                "inlet": _profile(p, "k", direction),
                f"outflow|duct_outlet|{far}": f"{{ type inletOutlet; inletValue uniform {k0:.8g}; "
                f"value uniform {k0:.8g}; }}",
                walls: f"{{ type kqRWallFunction; value uniform {k0:.8g}; }}",
            },
        ),
        "omega": (
            "volScalarField",
            "[0 0 -1 0 0 0 0]",
            f"{w0:.8g}",
            {
                "inlet": _profile(p, "omega", direction),
                f"outflow|duct_outlet|{far}": f"{{ type inletOutlet; inletValue uniform {w0:.8g}; "
                f"value uniform {w0:.8g}; }}",
                walls: f"{{ type omegaWallFunction; value uniform {w0:.8g}; }}",
            },
        ),
        "nut": (
            "volScalarField",
            "[0 2 -1 0 0 0 0]",
            "0",
            {
                f"inlet|outflow|duct_outlet|{far}": "{ type calculated; value uniform 0; }",
                walls: "{ type nutUSpaldingWallFunction; value uniform 0; }",
            },
        ),
    }
