"""A build's options (``--only``, ``--quality``, ``--force``, the solid cache), checked in one
place: :meth:`BuildOptions.check`. The CLI, the sweep and the design page build one and hand
it on; :func:`ductgen.pipeline.build` takes it as it is."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from ductgen.errors import SpecError
from ductgen.pipeline.outputs import OUTPUTS
from ductgen.solids.kinds import SOLID_KINDS
from ductgen.tolerances import STL_QUALITY

__all__ = ["BuildOptions", "output_kinds"]


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
