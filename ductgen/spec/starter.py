"""The commented starter spec written by ``ductgen init``, and the bundled examples."""

from __future__ import annotations

from pathlib import Path

from ductgen.resources import samples_dir

__all__ = ["STARTER", "example_files", "example_names", "example_path", "samples_dir"]

STARTER = """\
# ductgen spec: one flush (NACA-type) submerged inlet.
# Lengths are mm unless a unit is written ("4.5 in", "12 cm"); angles in degrees.
# Unknown keys are errors, so a typo never falls back to a default.
name = "my-inlet"                      # file prefix of every output

[throat]                               # the open rectangle at the lip station
width = 100                            # W
depth = 25                             # D: floor to lip underside
                                       # (W/D 3-5 was tested, NACA RM A7I30)

[ramp]
angle_deg = 7.0                        # 5-7 deg recommended (NACA RM A7I30)
                                       # or give length = ... instead
entry_radius = 0                       # tangent arc where the ramp leaves the skin; 0 = sharp

[planform]
profile = "naca-standard"              # `ductgen profiles` lists tables; or a path to your own CSV
edge_radius = 0                        # round where the walls meet the skin

[lip]
style = "flush"                        # "flush": lip top in the skin; "raised": lip stands proud
thickness = 4
nose_ratio = 2.0                       # elliptical nose, major/minor

[outlet]
kind = "round"                         # "round" hose spigot, "rect", or "none"
diameter = "2 in"                      # hose inner diameter
transition_length = 120                # throat-to-outlet transition
spigot_length = 40

[skin]
shape = "flat"
thickness = 2.0

# [flow]                               # optional: the delivered-airflow estimate
# speed = "120 km/h"                   # flow quantities need a unit
# run_length = "1.2 m"                 # wetted run ahead of the ramp start (boundary layer)
"""


def example_names() -> list[str]:
    return sorted(p.stem for p in samples_dir().glob("*.toml"))


def example_path(name: str) -> Path:
    return samples_dir() / f"{name}.toml"


def example_files(name: str) -> dict[str, bytes]:
    """The files a bundled sample names beside itself (e.g. its panel's STEP, as
    ``skin.file``), by file name: ``ductgen init --example`` writes them next to the spec so
    the copy builds where it is written."""
    from ductgen.spec.load import FILE_KEYS, tomllib

    folder = samples_dir()
    values = tomllib.loads(example_path(name).read_text(encoding="utf-8"))
    found: dict[str, bytes] = {}
    for section, key in FILE_KEYS:
        text = values.get(section, {}).get(key)
        if isinstance(text, str) and (folder / text).is_file():  # not a bundled table's name
            found[text] = (folder / text).read_bytes()
    return found
