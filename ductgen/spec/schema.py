"""The published JSON Schema of the spec (``ductgen/schema/spec.schema.json``).

Regenerate after changing a spec section: ``python -m ductgen.spec.schema``; a test fails
while the file is stale.
"""

from __future__ import annotations

import json
from pathlib import Path

from ductgen.spec.model import Spec

__all__ = ["SCHEMA_PATH", "schema_text"]

SCHEMA_PATH = Path(__file__).resolve().parents[1] / "schema" / "spec.schema.json"


def schema_text() -> str:
    """The schema as indented JSON text (input side: numbers or strings with units)."""
    schema = Spec.model_json_schema(mode="validation")
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    schema["title"] = "ductgen spec"
    return json.dumps(schema, indent=2, sort_keys=True) + "\n"


if __name__ == "__main__":
    SCHEMA_PATH.write_text(schema_text(), encoding="utf-8")
    print(f"wrote {SCHEMA_PATH}")
