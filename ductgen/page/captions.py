"""The caption under the design page's two drawings, one per ``skin.shape``: which drawing
is true to scale, which is drawn on the skin, and how much the developed plan stretches
lengths (%)."""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from ductgen.design import Design

__all__ = ["SKIN_CAPTIONS", "skin_caption"]


def _flat_caption(d: Design, skin: dict[str, Any]) -> str:
    return "flat skin: both drawings are true to scale"


def _curved_caption(d: Design, skin: dict[str, Any]) -> str:
    shape = skin["shape"]
    if shape == "cylinder":
        what = f"cylinder R {skin['radius_mm']:g} mm ({skin['side']}, axis {skin['axis']})"
        along = skin["axis"] == "spanwise"
    else:
        what = (
            f"doubly curved R {skin['radius_streamwise_mm']:g} along / "
            f"{skin['radius_spanwise_mm']:g} across mm ({skin['side']})"
        )
        along = True
    section = (
        "section drawn on the curved skin, depths along its normal"
        if along
        else "the skin curves across the flow only, so the centreline section is true"
    )
    return f"{what}: {section}; plan drawn flat as the developed opening ({_stretch(d)})"


def _panel_caption(d: Design, skin: dict[str, Any]) -> str:
    return (
        f"your panel {skin.get('file', '')}: section drawn on the panel along the centreline "
        f"(its frame at the datum, x along the flow); plan drawn flat as the developed "
        f"opening ({_stretch(d)})"
    )


def _stretch(d: Design) -> str:
    dev = d.development
    if dev.exact:
        return "developed exactly"
    return f"lengths stretched up to {dev.max_length_distortion_pct:.2f} %"


#: ``skin.shape`` → the caption under the drawings (total over the spec's shapes).
SKIN_CAPTIONS: dict[str, Callable[[Design, dict[str, Any]], str]] = {
    "flat": _flat_caption,
    "cylinder": _curved_caption,
    "doubly": _curved_caption,
    "panel": _panel_caption,
}


def skin_caption(d: Design) -> str:
    """What the two drawings show of the skin: which one is drawn flat, and how much the
    developed plan stretches lengths."""
    skin = dict(d.skin_summary)
    return SKIN_CAPTIONS[str(skin.get("shape", "flat"))](d, skin)
