"""The PDF report: summary on page one, a page header and numbers on every page, the paper asked for, pages drawn.

WeasyPrint is the optional ``pdf`` extra; CI installs it with the ``test`` extra, so these run there. Outside CI
they skip when it is missing (with the reason).
"""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

pytest.importorskip("weasyprint", reason="the pdf extra (WeasyPrint) is not installed")
pdfium = pytest.importorskip("pypdfium2", reason="pypdfium2 (test extra) renders the PDF pages to images")

from rulecheck.report import pdf  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
A4 = (595.28, 841.89)  # ISO 216: 210 mm × 297 mm in PostScript points (72 per inch)
LETTER = (612.0, 792.0)  # ANSI: 8.5 in × 11 in


def _pages(data: bytes) -> list[tuple[tuple[float, float], str]]:
    doc = pdfium.PdfDocument(data)
    return [(tuple(page.get_size()), page.get_textpage().get_text_range()) for page in doc]


@pytest.fixture(scope="module")
def demo_pdf(tmp_path_factory) -> bytes:
    out = tmp_path_factory.mktemp("pdf") / "demo.pdf"
    proc = subprocess.run([sys.executable, "-m", "rulecheck", "check", "specs_demo/", "--format", "pdf", "-o",
                           str(out), "--no-cache", "--project", "Harbour plant", "--revision", "B",
                           "--reviewer", "J. Doe", "--report-date", "2026-12-05"],
                          cwd=ROOT, capture_output=True, text=True)
    assert proc.returncode == 1, proc.stderr  # the demo carries seeded mistakes
    assert "Traceback" not in proc.stderr
    return out.read_bytes()


def test_demo_summary_fits_page_one(demo_pdf):
    pages = _pages(demo_pdf)
    first = " ".join(pages[0][1].split())
    for tag in ("HR-CV-110", "HR-CV-120", "HR-DC-510", "HR-F-610", "HR-H-310", "HR-M-710", "HR-P-210", "HR-SV-410"):
        assert tag in first, tag
    assert "Hazards raised by failing" in first
    # the first drive train's section starts page two: everything of the summary was on page one
    assert " ".join(pages[1][1].split()).startswith("1. HR-CV-120")


def test_every_page_has_header_and_number_on_a4(demo_pdf):
    pages = _pages(demo_pdf)
    n = len(pages)
    # 7 drive trains with findings, 1 passing: the summary page, a few pages each, cautions and sign-off
    assert 8 <= n <= 1 + 5 * 7 + 2, n
    for i, (size, text) in enumerate(pages, start=1):
        assert size == pytest.approx(A4, abs=0.5)
        flat = " ".join(text.split())
        assert "Harbour plant · rev. B · reviewer J. Doe · 2026-12-05" in flat, i
        assert f"page {i} of {n}" in flat, i
    assert "Review and sign-off" in pages[-1][1] or "Review and sign-off" in pages[-2][1]


def test_letter_paper_and_pages_are_drawn(samples, tmp_path):
    data = pdf.render(samples["plant"],
                      meta={"paper": "letter", "project": "P"})
    pages = _pages(data)
    assert all(size == pytest.approx(LETTER, abs=0.5) for size, _ in pages)
    image = np.asarray(pdfium.PdfDocument(data)[0].render(scale=1).to_pil().convert("L"))
    ink = np.mean(image < 200)
    assert 0.01 < ink < 0.5, ink  # text, tables and badges: neither blank nor a black page


def test_no_word_is_broken_across_lines(demo_pdf):
    # print CSS never breaks inside a word: no line of the PDF's text ends in the middle of a word of the
    # report's own headings and column names
    for _size, text in _pages(demo_pdf):
        for cut in ("deri", "Exp", "Requ", "Marg"):
            assert not re.search(rf"\b{cut}\r?\n[a-z]", text), cut


def test_bad_paper_is_refused(samples):
    with pytest.raises(ValueError, match="a4"):
        pdf.render(samples["conveyor"], meta={"paper": "a3"})


def test_demo_email_is_under_one_megabyte(tmp_path):
    # the target: the demo's e-mail (summary body, the full report attached once as PDF) under 1 MB
    eml = tmp_path / "demo.eml"
    proc = subprocess.run([sys.executable, "-m", "rulecheck", "mail", "specs_demo/", "--to", "lead@plant.example",
                           "--eml", str(eml), "--no-cache"], cwd=ROOT, capture_output=True, text=True)
    assert proc.returncode == 1 and "Traceback" not in proc.stderr, proc.stderr  # the demo's seeded mistakes
    data = eml.read_bytes()
    assert len(data) < 2**20, len(data)
    assert data.count(b"filename=") == 1 and b"application/pdf" in data


def test_demo_pdf_pages_show_the_failing_crosses_where_the_captions_say_fails(demo_pdf):
    # every page is rendered to an image; a page with the failing cross (report/charts.py _FAIL, #b00020, a
    # solid fill) carries a chart caption naming the rule that FAILS, and the demo has at least three:
    # CV-120 and F-610 (torque-margin-continuous) and M-710 (dol-starting)
    doc = pdfium.PdfDocument(demo_pdf)
    crossed = []
    for i, page in enumerate(doc):
        pixels = np.asarray(page.render(scale=1).to_pil().convert("RGB"), dtype=int).reshape(-1, 3)
        if int((np.abs(pixels - (0xB0, 0x00, 0x20)) <= 25).all(axis=1).sum()) > 30:
            crossed.append(i)
            assert "FAILS:" in page.get_textpage().get_text_range(), i
    assert len(crossed) >= 3, crossed


def test_each_failing_drive_train_prints_in_about_three_pages(demo_pdf):
    # the page budget: a failing drive train in at most about three pages (its findings, what it needs, the
    # derived values its findings use and its charts); a long finding may continue on the next page rather than
    # leave half a page empty. SV-410 has three charts (torque–speed, duty, back-EMF) and takes four.
    pages = [" ".join(text.split()) for _size, text in _pages(demo_pdf)]
    starts = [(i, m.group(1)) for i, text in enumerate(pages)
              if (m := re.match(r"(?:Drive-train design-rule report · \S+ )?\d+\. (HR-[A-Z0-9-]+) ", text))]
    assert len(starts) == 8, starts
    ends = [i for i, _tag in starts[1:]] + [next(i for i, t in enumerate(pages) if t.startswith("Cautions")
                                                 or " Cautions A screening aid" in t[:120])]
    lengths = {tag: end - start for (start, tag), end in zip(starts, ends, strict=True)}
    budget = {"HR-SV-410": 4, "HR-P-210": 3, "HR-CV-110": 3}
    for tag, n in lengths.items():
        assert n <= budget.get(tag, 3), (tag, n, lengths)
