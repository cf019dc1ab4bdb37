"""The HTML report in a real headless Chromium: it draws, prints on A4 and Letter, logs nothing, fetches nothing.

Skipped with a reason when Chromium is missing outside CI; a failure in CI (see conftest).
"""

from __future__ import annotations

import re

import numpy as np
import pytest

from rulecheck.report import html

from . import browser, sample

CONSOLE = re.compile(r"CONSOLE[:(]")


def _pixels(path):
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.image as mpimg

    return mpimg.imread(str(path))


def test_screenshot_is_not_blank(chromium, samples, tmp_path):
    page = browser.write_report(tmp_path, "plant.html", html.render(samples["plant"]))
    shot = tmp_path / "shot.png"
    done = browser.run_cli(chromium, page.as_uri(), ["--enable-logging=stderr", "--v=0", f"--screenshot={shot}",
                                                     "--window-size=1280,2000"])
    assert shot.exists(), done.stderr[-2000:]
    img = _pixels(shot)
    assert img.shape[:2] == (2000, 1280)
    rgb = np.round(img[..., :3] * 255).astype(np.uint8).reshape(-1, 3)
    colours = np.unique(rgb, axis=0)
    ink = np.mean(rgb.min(axis=1) < 200)  # share of pixels clearly darker than the paper
    # a rendered report has text, rules and badges: many shades, and some ink (a blank page has 1 colour, 0 ink)
    assert len(colours) > 50, len(colours)
    assert 0.01 < ink < 0.6, ink
    assert not CONSOLE.search(done.stderr), done.stderr


def test_print_to_pdf_from_the_command_line(chromium, samples, tmp_path):
    page = browser.write_report(tmp_path, "plant.html", html.render(samples["plant"]))
    pdf = tmp_path / "plant.pdf"
    done = browser.run_cli(chromium, page.as_uri(), ["--enable-logging=stderr", "--v=0", f"--print-to-pdf={pdf}",
                                                     "--no-pdf-header-footer"])
    assert pdf.exists(), done.stderr[-2000:]
    data = pdf.read_bytes()
    assert data.startswith(b"%PDF-")
    # four drive trains, each starting on a new page after the overview: at least 5 pages; a finding or a
    # chart is never cut, so a drive train takes one to three pages here
    assert 5 <= browser.pdf_page_count(data) <= 1 + 3 * 4
    assert not CONSOLE.search(done.stderr), done.stderr


@pytest.fixture(scope="module")
def devtools(chromium):
    with browser.DevTools(chromium) as session:
        yield session


def test_harness_sees_requests_and_console_errors(devtools, tmp_path):
    # the control: a page that does fetch and does log must be caught, or the checks below prove nothing
    bad = browser.write_report(tmp_path, "bad.html", '<!DOCTYPE html><html><body><img src="http://example.invalid/'
                               'x.png"><script>console.error("boom")</script></body></html>')
    _, log = devtools.open(bad.as_uri())
    assert "http://example.invalid/x.png" in log.requests
    assert ("error", "boom") in log.console


@pytest.mark.parametrize("name", ["plant", "hostile", "servo"])
def test_no_network_requests_and_no_console_messages(devtools, samples, tmp_path, name):
    page = browser.write_report(tmp_path, f"{name}.html", html.render(samples[name]))
    session, log = devtools.open(page.as_uri())
    assert log.requests == [page.as_uri()], log.requests
    assert log.console == [] and log.exceptions == []
    assert [e for e in log.log_entries if e[0] in ("error", "warning")] == []
    # nothing injected ran: the hostile strings stayed text
    assert devtools.evaluate(session, "document.querySelectorAll('script, img, iframe, object').length") == 0
    assert devtools.evaluate(session, "document.querySelectorAll('svg.chart').length") == len(
        [k for s in samples[name]["specs"] for k in s["charts"]])


def _invalid_specs(n: int) -> dict:
    specs = []
    for i in range(n):
        s = sample.invalid()
        s["file"] = f"specs_demo/broken{i}.yaml"
        specs.append(s)
    return sample.result(*specs)


def test_each_drive_train_starts_a_new_page_on_a4_and_letter(devtools, tmp_path):
    # a drive train that failed to load takes a third of a page; without a page break before each one,
    # three of them would share a page. With the breaks, each one added adds exactly one page.
    for paper in ("A4", "Letter"):
        counts = []
        for n in (1, 3):
            page = browser.write_report(tmp_path, f"n{n}.html", html.render(_invalid_specs(n)))
            session, _ = devtools.open(page.as_uri())
            counts.append(browser.pdf_page_count(devtools.print_pdf(session, paper)))
        assert counts[1] - counts[0] == 2, (paper, counts)
        assert counts[0] == 2, (paper, counts)  # overview and cautions on page 1, the drive train on page 2


@pytest.mark.parametrize("paper", ["A4", "Letter"])
def test_whole_plant_prints_on_both_papers(devtools, samples, tmp_path, paper):
    page = browser.write_report(tmp_path, "plant.html", html.render(samples["plant"]))
    session, _ = devtools.open(page.as_uri())
    pages = browser.pdf_page_count(devtools.print_pdf(session, paper))
    assert 5 <= pages <= 1 + 3 * 4, pages


def test_charts_fit_the_printed_page_width(devtools, samples, tmp_path):
    page = browser.write_report(tmp_path, "servo.html", html.render(samples["servo"]))
    session, _ = devtools.open(page.as_uri(), width=760, height=1100)  # about A4 width at 96 px/in less margins
    devtools.call("Emulation.setEmulatedMedia", {"media": "print"}, session=session)
    widths = devtools.evaluate(
        session, "Array.from(document.querySelectorAll('svg.chart')).map(e => [e.getBoundingClientRect().right,"
                 " document.documentElement.clientWidth, e.getBoundingClientRect().height])")
    assert widths and all(right <= page_width and height > 100 for right, page_width, height in widths), widths
