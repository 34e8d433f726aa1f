"""Template PDF of every sample: nothing drawn under a label or a check square, all text on
the printable page, read back with pymupdf.

Sources: 1 pt = 1/72 in (PDF reference) [published], so 100 mm = 283.465 pt; a printable area
at least 6 mm from the sheet edge and check squares on empty paper are shop practice
(common practice, no source). Boxes come from the file: pymupdf's text span boxes and the
squares' drawn paths; see ``tests/pdf_overlap.py``.
"""

from __future__ import annotations

import pymupdf
import pytest

from ductgen.design import build_design
from ductgen.export.template import template_files
from ductgen.spec import load_spec, parse_spec
from tests.conftest import SAMPLES, sample_ids
from tests.pdf_overlap import PT, audit_page


def _doc(spec) -> pymupdf.Document:  # type: ignore[no-untyped-def]
    data = template_files(build_design(spec), spec)["template.pdf"]
    return pymupdf.open(stream=data, filetype="pdf")


def _check(doc: pymupdf.Document) -> None:
    assert len(doc) >= 3
    for page in doc:
        a = audit_page(page, edge_mm=6.0)
        where = f"page {page.number + 1}"
        assert a.square_hits == 0, where
        assert a.square_text == [], where
        assert a.text_hits == [], where
        assert a.off_page == [], where
        # both check squares are there and true: 100 mm and 4 in = 101.6 mm (uncorrected)
        sides = sorted(round(r.width / PT, 2) for r in a.squares)
        assert sides == [pytest.approx(100.0, abs=0.02), pytest.approx(101.6, abs=0.02)], where


@pytest.mark.parametrize("path", SAMPLES, ids=sample_ids())
def test_sample_template_pdf_has_no_overlaps(path) -> None:  # type: ignore[no-untyped-def]
    _check(_doc(load_spec(path)))


@pytest.mark.parametrize("paper", ["A4", "Letter"])
@pytest.mark.parametrize("size", [(40, 8), (160, 40), (260, 60)])
def test_other_sizes_and_papers_have_no_overlaps(paper: str, size: tuple[int, int]) -> None:
    spec = parse_spec(
        {"name": "p", "throat": {"width": size[0], "depth": size[1]}, "template": {"paper": paper}}
    )
    _check(_doc(spec))


def test_audit_finds_a_square_drawn_over_lines() -> None:
    """The audit itself can fail: a page with a line through a square counts its points."""
    doc = pymupdf.open()
    page = doc.new_page(width=595, height=842)
    shape = page.new_shape()
    shape.draw_rect(pymupdf.Rect(50, 50, 50 + 288, 50 + 288))
    shape.finish(color=(0.0, 0.35, 0.75))
    shape.draw_line((20, 200), (500, 200))
    shape.finish(color=(0.85, 0.0, 0.0))
    shape.commit()
    page.insert_text((60, 205), "label on the line", fontsize=8)
    a = audit_page(page)
    assert a.square_hits > 100
    assert a.text_hits and a.square_text
