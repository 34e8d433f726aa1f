"""The ``[flow]`` section: operating condition and the system behind the throat.

Owned by the airflow work (brief §6); SI units inside.
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field

from ductgen.spec.types import M, MPerS, Section, si

__all__ = ["FlowSpec"]


class HoseLoss(Section):
    kind: Literal["hose"] = "hose"
    length: Annotated[M, Field(gt=0, description="hose length")]
    diameter: Annotated[M, Field(gt=0, description="hose inner diameter")]


class BendLoss(Section):
    kind: Literal["bend"] = "bend"
    angle_deg: Annotated[float, Field(gt=0, le=180, description="bend angle, deg")]
    radius: Annotated[M, Field(gt=0, description="centreline bend radius")]
    diameter: Annotated[M, Field(gt=0, description="hose inner diameter")]


LossElement = Annotated[HoseLoss | BendLoss, Field(discriminator="kind")]


class FlowSpec(Section):
    """Flight or driving condition and the duct system the inlet feeds."""

    speed: Annotated[MPerS, Field(gt=0, description="vehicle speed relative to the air")]
    altitude: Annotated[M, Field(default=0.0, ge=-5000, le=20000, description="geometric altitude")]
    run_length: Annotated[
        M, Field(default=1.0, gt=0, description="wetted run from the body's leading edge to the ramp start")
    ]
    required_flow: Annotated[
        float | None, si("volume_flow", "m^3/s"), Field(default=None, gt=0, description="volume flow needed")
    ]
    losses: list[LossElement] = Field(default_factory=list)
