"""A build's options (``--only``, ``--quality``, ``--force``, the solid cache), checked in one
place: :meth:`BuildOptions.check`. The CLI, the sweep and the design page build one and hand
it on; :func:`ductgen.pipeline.build` takes it as it is."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from ductgen.errors import SpecError
from ductgen.pipeline.outputs import OUTPUTS
from ductgen.solids.kinds import SOLID_KINDS
from ductgen.spec.model import PanelSkinSpec, Spec
from ductgen.tolerances import STL_QUALITY

__all__ = [
    "BuildOptions",
    "cuts_panel",
    "output_kinds",
    "planned_files",
    "planned_stages",
    "select_kinds",
]


def output_kinds() -> list[str]:
    """Every kind ``--only`` accepts, in build order."""
    return [*SOLID_KINDS, *OUTPUTS]


@dataclass(frozen=True)
class BuildOptions:
    """What to build and how, already checked.

    Attributes:
        kinds: the output kinds, in build order.
        quality: the STL tessellation setting (a key of ``tolerances.STL_QUALITY``).
        force: replace existing files.
        cache: take solids from the solid cache and store new ones there.
    """

    kinds: tuple[str, ...]
    quality: str = "normal"
    force: bool = False
    cache: bool = True

    @classmethod
    def check(
        cls,
        only: Sequence[str] | str | None = None,
        quality: str = "normal",
        force: bool = False,
        cache: bool = True,
    ) -> BuildOptions:
        """The options from user input: ``only`` a list of kinds or a comma list (None or
        an empty list: every kind; a comma list with no kind in it is refused, since it
        would silently build everything).

        Raises:
            SpecError: naming ``--only`` or ``--quality``, with what is allowed.
        """
        every = output_kinds()
        allowed = "a comma list of " + ", ".join(every)
        if isinstance(only, str):
            text = only
            only = [k.strip() for k in text.split(",") if k.strip()]
            if not only:
                raise SpecError("--only", text, allowed, "the list is empty")
        bad = [k for k in (only or ()) if k not in every]
        if bad:
            raise SpecError("--only", ",".join(bad), allowed, "unknown output kind")
        if quality not in STL_QUALITY:
            raise SpecError(
                "--quality", quality, " | ".join(STL_QUALITY), "STL tessellation setting"
            )
        kinds = tuple(k for k in every if not only or k in only)
        return cls(kinds, quality, force, cache)

    @property
    def solid_kinds(self) -> tuple[str, ...]:
        """The solid kinds among :attr:`kinds`."""
        return tuple(k for k in self.kinds if k in SOLID_KINDS)


def cuts_panel(spec: Spec, kinds: Sequence[str]) -> bool:
    """Whether the build writes ``NAME-panel.step``: the user's panel is a CAD file and the
    cutter is built."""
    skin = spec.skin
    return (
        isinstance(skin, PanelSkinSpec)
        and "cutter" in kinds
        and Path(skin.file).suffix.lower() in (".step", ".stp")
    )


def planned_files(spec: Spec, kinds: Sequence[str]) -> list[str]:
    """File names a build of ``kinds`` will write (``report.json`` always)."""
    names = [f"{spec.name}-panel.step"] if cuts_panel(spec, kinds) else []
    for k in kinds:
        if k in SOLID_KINDS:
            names += [f"{spec.name}-{k}.step", f"{spec.name}-{k}.stl"]
            if k == "insert":
                names.append(f"{spec.name}-insert.3mf")
        elif OUTPUTS[k].made_for(spec):
            names += [f"{spec.name}-{suffix}" for suffix in OUTPUTS[k].suffixes]
    return [*names, "report.json"]


def planned_stages(spec: Spec, kinds: Sequence[str]) -> list[str]:
    """The stages :func:`~ductgen.pipeline.build` reports through ``progress``, in order
    (an ``"insert split"`` stage is added when the insert turns out larger than the bed)."""
    stages = ["geometry"]
    if any(k in SOLID_KINDS for k in kinds):
        stages.append("solids")
    if cuts_panel(spec, kinds):
        stages.append("panel")
    made = [k for k in kinds if k in OUTPUTS and OUTPUTS[k].made_for(spec)]
    return [*stages, *made, "publish"]


def select_kinds(only: list[str] | None) -> list[str]:
    """The output kinds to build, in build order; every kind when ``only`` is empty."""
    return list(BuildOptions.check(only).kinds)
