"""What identifies a design: the hash of the numbers its files are made from.

Two specs that differ only in keys no file's geometry reads (``[flow]``, the losses, the
name) give one design and one :func:`design_sha256`; the 1:1 template prints it, so a
paper template matches every spec it fits, and ``report.json`` carries it beside the
spec's own hash.
"""

from __future__ import annotations

import dataclasses
from typing import TYPE_CHECKING, Any

from ductgen.cache import fingerprint
from ductgen.design.build import Design

if TYPE_CHECKING:
    from ductgen.spec.model import Spec

__all__ = ["design_fields", "design_sha256", "drawn_from"]


def design_fields(d: Design) -> dict[str, Any]:
    """``d``'s fields without its name, warnings and checks (not what the files are made
    from), its geometry without the name."""
    skip = ("name", "warnings", "fabrication_checked")
    fields = {f.name: getattr(d, f.name) for f in dataclasses.fields(d) if f.name not in skip}
    g = d.geometry
    fields["geometry"] = {f.name: getattr(g, f.name) for f in dataclasses.fields(g)}
    del fields["geometry"]["name"]
    return fields


def design_sha256(d: Design) -> str | None:
    """The hex SHA-256 of :func:`design_fields` (None when the design holds something the
    hash cannot read)."""
    try:
        return fingerprint("design", design_fields(d))
    except TypeError:
        return None


def drawn_from(d: Design, spec: Spec) -> str:
    """What a drawing (the template) says it was drawn from: the design's hash
    (:func:`design_sha256`, in ``report.json`` too), or the spec's where the design cannot be
    hashed; 16 hex digits. Here, not beside the template's encoders, so a build whose
    template comes from the cache keys it without loading them (the DXF library's import
    ~0.4 s)."""
    from ductgen.spec.load import spec_sha256

    h = design_sha256(d)
    return f"design sha256 {h[:16]}" if h is not None else f"spec sha256 {spec_sha256(spec)[:16]}"
