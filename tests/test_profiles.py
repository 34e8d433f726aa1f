"""Wall-curve tables: bundled list and validation of a user's CSV."""

from __future__ import annotations

from pathlib import Path

import pytest

from ductgen.design import geometry_from_spec
from ductgen.errors import SpecError
from ductgen.geometry import available_profiles
from ductgen.spec import load_spec


def test_bundled_profiles_carry_a_source() -> None:
    profs = available_profiles()
    assert "naca-standard" in [p.name for p in profs]
    assert all(p.source for p in profs)


def _spec_with(tmp_path: Path, rows: str) -> Path:
    (tmp_path / "walls.csv").write_text("x_over_L,two_y_over_W\n" + rows)
    spec = tmp_path / "s.toml"
    spec.write_text('[throat]\nwidth = 100\ndepth = 25\n[planform]\nprofile = "walls.csv"\n')
    return spec


def test_custom_profile_relative_to_the_spec(tmp_path: Path) -> None:
    spec = _spec_with(tmp_path, "0,0.1\n0.4,0.4\n0.8,0.9\n1,1\n")
    g = geometry_from_spec(load_spec(spec))
    assert float(g.planform.half_width(0.4 * g.length_mm)) == pytest.approx(20.0, abs=1e-9)


@pytest.mark.parametrize(
    ("rows", "words"),
    [
        ("0,0.1\n0.5,0.5\n1,1\n", "at least 4 rows"),
        ("0,0.1\n0.6,0.4\n0.5,0.9\n1,1\n", "strictly increasing"),
        ("0,0.1\n0.4,0.4\n0.8,1.2\n1,1\n", "0 < 2y/W <= 1"),
        ("0,0.1\n0.4,0.4\n0.8,0.9\n1,0.95\n", "2y/W = 1 at x/L = 1"),
        ("0.1,0.1\n0.4,0.4\n0.8,0.9\n1,1\n", "x/L from 0 to 1"),
        ("0,0.1\n0.4,0.6\n0.8,0.5\n1,1\n", "non-decreasing"),
        ("0,0.1\n0.4,abc\n0.8,0.9\n1,1\n", "numbers"),
    ],
)
def test_invalid_custom_profile_is_a_spec_error(tmp_path: Path, rows: str, words: str) -> None:
    spec = _spec_with(tmp_path, rows)
    with pytest.raises(SpecError) as err:
        geometry_from_spec(load_spec(spec))
    assert err.value.key == "planform.profile"
    assert words in err.value.allowed or words in err.value.reason
