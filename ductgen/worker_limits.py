"""The kernel worker's limits: the address-space cap and the per-job CPU-time limit, with
their environment variables (``DUCTGEN_MEMORY_MB``, ``DUCTGEN_TIMEOUT_S``) checked once.
(Re-exported by :mod:`ductgen.worker`.)"""

from __future__ import annotations

import os
from dataclasses import dataclass

__all__ = ["MEMORY_MB_RANGE", "TIMEOUT_S_RANGE", "WorkerLimits", "env_limit"]


@dataclass(frozen=True)
class WorkerLimits:
    """Limits of one kernel process.

    Attributes:
        memory_mb: address-space cap of the child (MiB); ``DUCTGEN_MEMORY_MB`` overrides.
        timeout_s: CPU-time limit of one job (s of the child's CPU); ``DUCTGEN_TIMEOUT_S``
            overrides. Wall-clock backstop: :data:`ductgen.worker.WALL_FACTOR` times this.
    """

    memory_mb: int = 8192
    timeout_s: float = 300.0

    @classmethod
    def from_env(cls) -> WorkerLimits:
        """The limits, with ``DUCTGEN_MEMORY_MB`` and ``DUCTGEN_TIMEOUT_S`` when set.

        Raises:
            SpecError: naming the variable, on a value that is not a number in its range.
        """
        return cls(
            memory_mb=int(env_limit(*MEMORY_MB_RANGE, default=cls.memory_mb, whole=True)),
            timeout_s=env_limit(*TIMEOUT_S_RANGE, default=cls.timeout_s),
        )


#: (variable, smallest, largest, unit, why) of the address-space cap. Measured on a full
#: build of a small spec: at 1 GiB the CAD kernel does not even load, at 2 GiB the preview
#: renderer runs out; 3 GiB builds everything.
MEMORY_MB_RANGE = (
    "DUCTGEN_MEMORY_MB",
    3072.0,
    1048576.0,
    "MiB",
    "the kernel process's memory cap; the CAD kernel and the preview renderer need about "
    "3 GiB of address space to load and run",
)
#: (variable, smallest, largest, unit, why) of the per-job time limit.
TIMEOUT_S_RANGE = (
    "DUCTGEN_TIMEOUT_S",
    0.1,
    86400.0,
    "s",
    "the longest one kernel job may run before it is stopped (at most a day)",
)


def env_limit(
    name: str, lo: float, hi: float, unit: str, why: str, *, default: float, whole: bool = False
) -> float:
    """The number in environment variable ``name`` (``default`` when unset or empty), checked
    to be finite (and whole with ``whole``) and within ``lo``..``hi``.

    Raises:
        SpecError: naming the variable, its range and why (exit 2).
    """
    import math

    from ductgen.errors import SpecError

    text = os.environ.get(name, "").strip()
    if not text:
        return default
    allowed = f"{'a whole number' if whole else 'a number'} from {lo:,.10g} to {hi:,.10g} {unit}"
    try:
        value = float(text)
    except ValueError:
        raise SpecError(name, text, allowed, f"not a number: {why}") from None
    if not math.isfinite(value) or (whole and not value.is_integer()):
        raise SpecError(name, text, allowed, why)
    if value < lo:
        reason = "too little memory" if unit == "MiB" else "too short"
        raise SpecError(name, text, allowed, f"{reason}: {why}")
    if value > hi:
        raise SpecError(name, text, allowed, why)
    return value
