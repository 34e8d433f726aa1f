"""Drawing sheet of every sample: the centreline section's labels clear of its lines,
read back with pymupdf (an independent reader).

The dimension values sit on a white box over their own dimension line by design, so the
check covers the section's free labels (``ramp ... deg``, ``outlet ...``). Labels clear of
lines is drawing practice (common practice, no source).
"""

from __future__ import annotations

import pymupdf
import pytest

from ductgen.design import geometry_from_spec
from ductgen.sheets.sheet import sheet_pdf
from ductgen.spec import load_spec, spec_sha256
from tests.conftest import SAMPLES, sample_ids
from tests.pdf_overlap import audit_page


@pytest.mark.parametrize("path", SAMPLES, ids=sample_ids())
def test_section_labels_clear_of_lines(path) -> None:  # type: ignore[no-untyped-def]
    spec = load_spec(path)
    g = geometry_from_spec(spec)
    split = (0.55 * g.length_mm, 1.2 * g.length_mm)  # two glue faces of a split insert
    doc = pymupdf.open(
        stream=sheet_pdf(g, spec, spec_sha256(spec), "0", None, split_x_mm=split), filetype="pdf"
    )
    page = doc[0]
    text = page.get_text()
    assert "split 1" in text
    if g.transition is not None:
        assert "outlet " in text
    a = audit_page(page, edge_mm=5.0)
    free = [(t, n) for t, n in a.text_hits if t.startswith(("outlet", "ramp ", "split"))]
    assert free == []
    assert a.off_page == []
