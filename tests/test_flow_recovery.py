"""Ram recovery models: capture estimate, constant, user table."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from scipy.integrate import quad

from ductgen.errors import SpecError
from ductgen.flow.recovery import (
    CaptureRecovery,
    ConstantRecovery,
    capture_height_ratio,
    capture_recovery,
    table_recovery,
)
from ductgen.flow.warnings import IVR_LOW
from ductgen.spec import load_spec
from ductgen.spec.recovery_table import read_recovery_table


def load_recovery_table(path: Path):  # type: ignore[no-untyped-def]
    return table_recovery(*read_recovery_table(path), path=str(path))


def _numeric_capture(s: float) -> tuple[float, float]:
    """h/delta and mass-averaged (u/V)^2 of the lowest layer carrying s = Q/(W V delta),
    by numerical integration of u/V = min(y/delta, 1)^(1/7) (delta = 1)."""
    from scipy.optimize import brentq

    def u(y: float) -> float:
        return min(y, 1.0) ** (1.0 / 7.0)

    def flux(h: float) -> float:
        return quad(u, 0.0, h, points=[1.0] if h > 1 else None)[0]

    h = brentq(lambda h: flux(h) - s, 1e-12, 10.0, xtol=1e-14)
    pts = [1.0] if h > 1 else None
    energy = quad(lambda y: u(y) ** 3, 0.0, h, points=pts)[0]
    return h, energy / flux(h)


@pytest.mark.parametrize("s", [0.01, 0.1, 0.5, 0.875, 1.2, 3.0])
def test_capture_model_closed_form(s: float) -> None:
    # [derived] eta = 0.8 (h/delta)^(2/7) for h <= delta, blended with free stream above:
    # the closed form must equal direct integration of the 1/7-power profile
    h, eta = _numeric_capture(s)
    assert capture_height_ratio(s) == pytest.approx(h, rel=1e-8)
    assert capture_recovery(s) == pytest.approx(eta, rel=1e-8)
    if h <= 1.0:
        assert capture_recovery(s) == pytest.approx(0.8 * h ** (2 / 7), rel=1e-12)


def test_capture_recovery_rises_with_ivr() -> None:
    # [derived] a larger IVR swallows a taller layer of faster air
    model = CaptureRecovery(delta_over_depth=1.2, loss_factor=0.95)
    ivr = np.linspace(0.3, 2.0, 200)  # above the zero-flow floor
    r = np.array([model(v) for v in ivr])
    assert np.all(np.diff(r) > 0)
    assert r[-1] < 0.95  # never above the loss factor times free-stream recovery
    # at h = delta exactly the layer's recovery is 0.8 (IVR*D/delta = 7/8)
    assert model(0.875 * 1.2) == pytest.approx(0.95 * 0.8, rel=1e-12)


def test_constant_recovery_used_exactly() -> None:
    assert ConstantRecovery(0.73)(0.2) == 0.73
    assert ConstantRecovery(0.73)(1.4) == 0.73


def _table(tmp_path: Path, text: str, name: str = "rec.csv") -> Path:
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_table_recovery_used_exactly(tmp_path: Path) -> None:
    p = _table(
        tmp_path,
        "# source: my wind-tunnel run (test data)\nivr,recovery\n0.2,0.5\n0.6,0.8\n1.0,0.7\n",
    )
    t = load_recovery_table(p)
    assert t(0.6) == 0.8  # at a row: the row
    assert t(0.4) == pytest.approx(0.65, abs=1e-15)  # linear between rows
    assert t(0.0) == 0.5 and t(2.0) == 0.7  # held at the ends
    assert not t.covers(1.5)


@pytest.mark.parametrize(
    ("text", "why"),
    [
        ("ivr,recovery\n0.2,0.5\n0.2,0.6\n", "increase"),
        ("ivr,recovery\n0.4,0.5\n0.3,0.6\n", "increase"),
        ("ivr,recovery\n0.2,0.5\n0.4,1.3\n", "outside"),
        ("ivr,recovery\n0.2,0.5\n", "two rows"),
        ("ivr,recovery\n0.2,0.5\n0.4,abc\n", "not numbers"),
    ],
)
def test_bad_table_rejected_at_load(tmp_path: Path, text: str, why: str) -> None:
    _table(tmp_path, text)
    spec = tmp_path / "s.toml"
    spec.write_text(
        'throat = { width = 100, depth = 25 }\n[flow]\nspeed = "50 m/s"\nrecovery = "rec.csv"\n',
        encoding="utf-8",
    )
    with pytest.raises(SpecError) as info:
        load_spec(spec)
    assert info.value.key == "flow.recovery"
    assert why in str(info.value)


def test_table_path_relative_to_spec_folder(tmp_path: Path) -> None:
    sub = tmp_path / "tables"
    sub.mkdir()
    _table(sub, "0.1,0.4\n0.9,0.8\n")
    spec = tmp_path / "s.toml"
    spec.write_text(
        'throat = { width = 100, depth = 25 }\n[flow]\nspeed = "50 m/s"\n'
        'recovery = "tables/rec.csv"\n',
        encoding="utf-8",
    )
    s = load_spec(spec)
    assert s.flow is not None and s.flow.recovery_kind == "table"
    assert Path(str(s.flow.recovery)) == (sub / "rec.csv").resolve()


def test_low_flow_recovery_floor() -> None:
    # the capture estimate alone falls to 0 as IVR -> 0, while a flush inlet at zero
    # flow keeps part of the boundary layer's total pressure (about 0.5: a recalled figure,
    # not verified here). The model must be continuous, monotone, finite and > 0 at IVR -> 0.
    for d_over in (0.3, 1.0, 2.5):
        model = CaptureRecovery(delta_over_depth=d_over, loss_factor=0.95)
        ivr = np.concatenate([[0.0, 1e-12, 1e-6], np.linspace(1e-4, 2.0, 4001)])
        r = np.array([model(v) for v in ivr])
        assert np.all(np.isfinite(r)) and r[0] > 0
        assert r[0] == pytest.approx(0.5, abs=1e-12)  # the stated floor
        assert np.all(np.diff(r) >= 0)  # monotone (non-decreasing) in IVR
        # continuous: no jump larger than the fine grid's slope allows
        assert np.max(np.abs(np.diff(r))) < 5e-3
        # above the floor the capture estimate is used unchanged
        hi = ivr > IVR_LOW * 3
        expect = [0.95 * capture_recovery(v / d_over) for v in ivr[hi]]
        assert np.allclose(r[hi], np.maximum(expect, 0.5), rtol=0, atol=1e-15)
