"""The shipped recovery map against what the NACA reports state, and what a designer
needs of it (it moves with ramp angle, W/D and the boundary layer; it reproduces its
points). The map comes from ductgen's own CFD campaign (``bench/recovery_campaign.py``);
these tests run once a map of at least MIN_POINTS points is shipped in
``ductgen/data/recovery_map.csv`` and are skipped, saying why, before that (no test here runs
the campaign). Two trends are not met by the shipped map (a best ramp angle near 7°,
recalled; recovery rising with the mass flow, published); they are strict expected failures
that state the measured figures, so a better map turns them into failures to be promoted to
passing tests.

Trends checked (sources in docs/sources.md):
- recovery falls as the boundary layer thickens: NACA RM A7I30, abstract (published);
- the best ramp angle within the 5°-7° the same abstract recommends (published: a
  recommendation, which the map meets) and near 7° (NACA ACR 5I20 / RM A7I30 [recalled, not
  re-read]; the one published 7° statement to hand, NASA Memo 12-21-58L's abstract, is about
  drag, not recovery);
- recovery rises with the mass flow, by less and less, at mass-flow ratios up to 0.67: NACA
  RM A50C13, abstract (published; transonic, Mach 0.70-1.15).

Evidence behind the two expected failures, straight from the solver rather than the fit
(``bench/recovery_campaign.py line``, ``bench/results/recovery_campaign/lines.csv``; W/D 4,
delta/D 0.5): along ramp angle 5/7/9/11 deg the coarse mesh gives 0.793/0.774/0.739/0.700 and
the medium mesh 0.795/0.783/0.760/0.725, the fine mesh 0.808/0.793 at 5/7 deg (the map
0.794/0.772/0.738/0.699 at the coarse runs' inputs): the fall is the solver's, not the fit's,
and every mesh keeps it (5 to 7 deg: -0.019 coarse, -0.011 medium, -0.015 fine). Along IVR
0.43/0.59/0.74/0.89 at 7 deg (coarse) the flow-averaged recovery is 0.851/0.805/0.774/0.744
and the area-averaged 0.720/0.723/0.719/0.687: neither average rises with the flow the way
the transonic abstract states; the area average is nearly flat up to IVR ~0.7 and falls
above it. A second turbulence model (Wilcox's k-omega, ``ductgen cfd --turbulence kOmega``)
keeps the fall with ramp angle: 0.783/0.768/0.732/0.695 at 5/7/9/11 deg on the coarse mesh,
0.782/0.772/0.750 at 5/7/9 deg on the medium one (5 to 7 deg: -0.016 coarse, -0.010 medium),
and the fall with flow: 0.847/0.800/0.768/0.737 at IVR 0.43/0.59/0.74/0.89 (area-averaged
0.722/0.718/0.708/0.677); so neither disagreement is the k-omega SST model's alone.
"""

from __future__ import annotations

import csv
import io

import numpy as np
import pytest

from ductgen.flow.recovery_map import INPUTS, MAP_FILE, default_map

try:
    MAP = default_map()
    WHY = ""
except (OSError, ValueError) as err:  # no map, or a partial campaign below MIN_POINTS
    MAP, WHY = None, f"no complete recovery map shipped yet: {err}"

pytestmark = pytest.mark.skipif(MAP is None, reason=WHY or "map present")


def _r(angle: float = 7.0, wd: float = 4.0, dd: float = 0.5, ivr: float = 0.8) -> float:
    assert MAP is not None
    return MAP((angle, wd, dd, ivr))


def test_recovery_falls_as_the_boundary_layer_thickens() -> None:
    # NACA RM A7I30, abstract: boundary-layer thickness has a large effect on ram recovery
    for ivr in (0.6, 0.8, 1.0):
        assert _r(dd=0.2, ivr=ivr) > _r(dd=1.0, ivr=ivr)


def test_best_ramp_angle_within_the_recommended_five_to_seven_degrees() -> None:
    # NACA RM A7I30, abstract: ramp angles of 5-7 deg recommended (published)
    angles = np.linspace(5.0, 11.0, 25)
    for ivr in (0.6, 0.8, 1.0):
        best = angles[int(np.argmax([_r(angle=a, ivr=ivr) for a in angles]))]
        assert 5.0 <= best <= 7.0


@pytest.mark.xfail(
    strict=True,
    reason="known disagreement: the CFD map's recovery falls steadily with ramp angle over "
    "5-11 deg (0.789 at 5 deg, 0.761 at 7, 0.721 at 9, 0.673 at 11; W/D 4, delta/D 0.5, IVR 0.8), "
    "no optimum near 7 deg; the medium and fine meshes keep the fall (5 to 7 deg: -0.019 "
    "coarse, -0.011 medium, -0.015 fine), and so does Wilcox's k-omega (-0.016 coarse, -0.010 "
    "medium; module docstring)",
)
def test_best_ramp_angle_near_seven_degrees() -> None:
    # NACA ACR 5I20 / RM A7I30 [recalled, not re-read]: a best ramp angle near 7 deg
    angles = np.linspace(5.0, 11.0, 25)
    best = angles[int(np.argmax([_r(angle=a) for a in angles]))]
    assert 6.0 <= best <= 8.0


@pytest.mark.xfail(
    strict=True,
    reason="known disagreement: the map's flow-averaged recovery falls as the flow rises "
    "(0.864 at IVR 0.4, 0.790 at 0.65; 7 deg, W/D 4, delta/D 0.5); the campaign's area average "
    "is nearly flat there, with k-omega SST and Wilcox's k-omega alike (module docstring); low "
    "speed against a transonic test",
)
def test_recovery_rises_with_the_mass_flow() -> None:
    # NACA RM A50C13, abstract (published; Mach 0.70-1.15, mass-flow ratios up to 0.67): more
    # mass flow raised the ram recovery, by less and less at the higher mass flows
    r = [_r(ivr=v) for v in (0.4, 0.55, 0.67)]
    assert r[0] < r[1] < r[2] and r[1] - r[0] > r[2] - r[1]


def test_the_map_moves_with_the_design() -> None:
    # a designer's sweep must see it: ramp angle 5/7/9 deg differ by >= 0.01, W/D 3 vs 4
    # moves it, a thicker layer lowers it
    by_angle = [_r(angle=a) for a in (5.0, 7.0, 9.0)]
    assert max(by_angle) - min(by_angle) >= 0.01
    assert _r(wd=3.0) != pytest.approx(_r(wd=4.0), abs=1e-4)
    assert _r(dd=1.2) < _r(dd=0.3)


def test_fit_reproduces_the_campaign_points_within_the_stated_residual() -> None:
    # the table read here with the csv module, independently of the map's reader
    from ductgen.resources import data_path

    text = data_path(MAP_FILE).read_text(encoding="utf-8")
    rows = list(csv.DictReader(io.StringIO(
        "\n".join(ln for ln in text.splitlines() if not ln.startswith("#")))))  # fmt: skip
    assert MAP is not None and len(rows) == MAP.points
    for row in rows:
        x = tuple(float(row[k]) for k in INPUTS)
        assert abs(MAP(x) - float(row["ram_recovery"])) <= MAP.residual_max + 1e-9
