"""Errors and soft warnings shared by every layer of ductgen.

Hard problems are exceptions that say what to do; soft problems are :class:`DesignWarning`
records that end up in ``report.json`` under ``warnings`` and never block a build.

Exit codes used by the CLI: :class:`SpecError` → 2 (bad input), every other
:class:`DuctgenError` → 1 (internal or kernel failure).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

__all__ = [
    "EXCERPT_CHARS",
    "DesignWarning",
    "DuctgenError",
    "ExportError",
    "GeometryError",
    "OverwriteError",
    "SpecError",
    "excerpt",
]


class DuctgenError(Exception):
    """Base class of every error ductgen raises on purpose."""

    exit_code: int = 1


@dataclass(frozen=True)
class _Problem:
    key: str
    value: Any
    allowed: str
    reason: str


class SpecError(DuctgenError):
    """Bad input: names the key, the value given, the allowed range and why.

    Several problems found in one spec are collected in :attr:`problems` so a user
    can fix them all in one pass.
    """

    exit_code = 2

    def __init__(
        self,
        key: str,
        value: Any = None,
        allowed: str = "",
        reason: str = "",
        *,
        problems: list[_Problem] | None = None,
        source: str | None = None,
    ) -> None:
        self.problems = problems or [_Problem(key, value, allowed, reason)]
        self.source = source
        first = self.problems[0]
        self.key, self.value, self.allowed, self.reason = (
            first.key,
            first.value,
            first.allowed,
            first.reason,
        )
        super().__init__(self._format())

    def __reduce__(self) -> tuple[Any, tuple[Any, ...]]:  # survive pickling across processes
        return (_rebuild_spec_error, ([vars(p) for p in self.problems], self.source))

    @classmethod
    def many(
        cls, problems: list[tuple[str, Any, str, str]], source: str | None = None
    ) -> SpecError:
        """Build one error from several ``(key, value, allowed, reason)`` tuples."""
        items = [_Problem(*p) for p in problems]
        first = items[0]
        return cls(
            first.key, first.value, first.allowed, first.reason, problems=items, source=source
        )

    def _format(self) -> str:
        head = f"invalid spec {self.source}:" if self.source else "invalid input:"
        lines = [head]
        for p in self.problems:
            line = f"  {p.key}"
            if p.value is not None:
                line += f" = {excerpt(p.value)}"
            if p.allowed:
                line += f": allowed {p.allowed}"
            if p.reason:
                line += f" ({p.reason})"
            lines.append(line)
        return "\n".join(lines)


class GeometryError(DuctgenError):
    """The CAD kernel or a geometry check failed; :attr:`stage` names where."""

    def __init__(self, stage: str, message: str) -> None:
        self.stage = stage
        self.detail = message
        super().__init__(f"geometry failed at stage '{stage}': {message}")

    def __reduce__(self) -> tuple[Any, tuple[Any, ...]]:
        return (GeometryError, (self.stage, self.detail))


class ExportError(DuctgenError):
    """Writing an output file failed."""


class OverwriteError(ExportError):
    """An output file exists and ``--force`` was not given (bad input: exit 2)."""

    exit_code = 2


#: Longest echo of a user's value in a message (characters).
EXCERPT_CHARS = 80


def excerpt(value: Any, limit: int = EXCERPT_CHARS) -> str:
    """A short ``repr`` of ``value`` for messages: a 50 MB string or a huge table is cut to
    ``limit`` characters with its full length stated."""
    import reprlib

    r = reprlib.Repr()
    r.maxstring = r.maxother = r.maxlong = limit
    r.maxlist = r.maxtuple = r.maxdict = r.maxset = 6
    r.maxlevel = 3
    text = r.repr(value)
    if isinstance(value, str | bytes) and len(value) > limit:
        text += f" ({len(value):,} characters)"
    return text if len(text) <= 2 * limit else text[: 2 * limit] + "…"


def _rebuild_spec_error(problems: list[dict[str, Any]], source: str | None) -> SpecError:
    return SpecError.many(
        [(p["key"], p["value"], p["allowed"], p["reason"]) for p in problems], source
    )


@dataclass(frozen=True)
class DesignWarning:
    """A soft problem: a stable ``code`` for scripts and a sentence for people."""

    code: str
    message: str

    def to_dict(self) -> dict[str, str]:
        return {"code": self.code, "message": self.message}
