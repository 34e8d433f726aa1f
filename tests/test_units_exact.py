"""The units converted without pint (``ductgen.units.EXACT_UNITS``) give pint's answer.

Reference: pint (the registry's unit library, the one the package reads every other unit
with) and the exact definitions the table is written from: 1 in = 0.0254 m and 1 ft =
0.3048 m (international yard and pound, 1959), 1 mile = 1609.344 m, 1 knot = 1852 m/h,
1 lbf = 0.45359237 kg × 9.80665 m/s² (BIPM SI Brochure, 9th ed., standard gravity).
"""

from __future__ import annotations

import subprocess
import sys

import pytest
from hypothesis import given
from hypothesis import strategies as st

from ductgen import units

#: The unit each dimension is read into somewhere in the spec (spec/types.py and the
#: sections' fields), and one more of the same dimension.
TARGETS = {
    "length": ("mm", "m"),
    "angle": ("deg", "rad"),
    "speed": ("m/s", "km/h"),
    "volume_flow": ("m^3/s", "L/s"),
    "mass_flow": ("kg/s", "g/s"),
    "pressure": ("Pa", "kPa"),
    "density": ("kg/m^3", "kg/m**3"),
    "temperature": ("K", "delta_degC"),
    "area": ("m^2", "mm^2"),
}

#: Values as people write them in a spec file.
WRITTEN = ("0", "1", "2", "0.5", "4.5", "12.7", "25", "60", "99.9", "110", "160", "3500", "0.06")


def _by_pint(monkeypatch: pytest.MonkeyPatch, *args: object) -> float:
    """``units.convert(*args)`` with the table emptied: every unit read by pint."""
    with monkeypatch.context() as m:
        m.setattr(units, "EXACT_UNITS", {})
        units.rescale.cache_clear()
        try:
            return units.convert(*args)  # type: ignore[arg-type]
        finally:
            units.rescale.cache_clear()


def test_every_factor_is_pints() -> None:
    reg = units.ureg()
    for text, (dimension, si_value) in units.EXACT_UNITS.items():
        q = reg.Quantity(1.0, text)
        assert q.check(
            reg.get_dimensionality(units.DIMENSIONS[dimension][0])
            if units.DIMENSIONS[dimension][0]
            else q.dimensionality
        ), text
        assert q.to_base_units().magnitude == pytest.approx(si_value, rel=1e-15), text


def test_written_values_convert_to_the_same_float(monkeypatch: pytest.MonkeyPatch) -> None:
    checked = 0
    for text, (dimension, _) in units.EXACT_UNITS.items():
        for target in TARGETS[dimension]:
            for number in WRITTEN:
                value = f"{number} {text.replace('**', '^')}"
                got = units.convert(value, dimension, target)
                assert got == _by_pint(monkeypatch, value, dimension, target), (value, target)
                checked += 1
    assert checked == len(units.EXACT_UNITS) * 2 * len(WRITTEN)


def test_bare_numbers_in_the_default_unit(monkeypatch: pytest.MonkeyPatch) -> None:
    for number in (0, 1, 2.5, 36, 349.4, 1234.5678):
        assert units.convert(number, "length", "mm", "mm") == number
        assert units.convert(number, "length", "m", "mm") == _by_pint(
            monkeypatch, number, "length", "m", "mm"
        )
        assert units.convert(number, "angle", "deg", "deg") == number


@given(st.floats(min_value=1e-6, max_value=1e6), st.sampled_from(sorted(units.EXACT_UNITS)))
def test_any_magnitude_agrees_with_pint(x: float, text: str) -> None:
    dimension = units.EXACT_UNITS[text][0]
    target = TARGETS[dimension][0]
    reg = units.ureg()
    want = reg.Quantity(x, text).to(target.replace("^", "**")).magnitude
    got = units.convert(f"{x!r} {text}", dimension, target)
    assert got == pytest.approx(want, rel=1e-11)


def test_other_units_still_go_through_pint() -> None:
    # pint's inch of water (4 degC column, standard gravity): 249.08891 Pa
    assert units.convert("1 inH2O", "pressure", "Pa") == pytest.approx(249.08891, rel=1e-7)
    with pytest.raises(ValueError, match="temperature difference"):
        units.convert("10 degC", "temperature", "K")
    with pytest.raises(ValueError, match="not a length"):
        units.convert("3 km/h", "length", "mm")
    with pytest.raises(ValueError, match="unknown unit"):
        units.convert("3 furlongz", "length", "mm")


def test_a_spec_in_exact_units_loads_without_pint(tmp_path) -> None:  # type: ignore[no-untyped-def]
    spec = tmp_path / "s.toml"
    spec.write_text(
        'name = "u"\nthroat = { width = "4.5 in", depth = "30 mm" }\n'
        'ramp = { angle_deg = "7 deg" }\n[flow]\nspeed = "160 km/h"\n'
    )
    code = (
        "import sys; from ductgen.spec import load_spec; "
        f"s = load_spec({str(spec)!r}); print(s.throat.width, 'pint' in sys.modules)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.split() == ["114.3", "False"]
