"""The PDF report: the HTML report laid out on A4 or Letter pages by WeasyPrint.

WeasyPrint is an HTML/CSS layout engine in Python (no browser at run time): it reads the report's print CSS,
including the paged-media rules the browsers ignore — the running header (project, revision, reviewer, date),
page numbers "page n of N" in the margin box, and the paper size from the configuration. It is an optional
dependency (``pip install rulecheck[pdf]``; it needs the system's Pango library); without it the PDF report is
refused with a message that says what to install, never a traceback.

The PDF of the same result is the same bytes for the same WeasyPrint: the document's dates come from the
result's own ``generated`` time, and nothing else in it depends on the clock.
"""

from __future__ import annotations

import logging
from collections.abc import Mapping
from typing import Any

from rulecheck.report import html

__all__ = ["PdfUnavailable", "available", "render"]


class PdfUnavailable(RuntimeError):
    """The PDF cannot be written: the library is not installed (or cannot load its system libraries), or it failed
    to lay the report out; ``str()`` says what to do."""


def _weasyprint() -> Any:
    try:
        import weasyprint
    except (ImportError, OSError) as exc:  # OSError: the Python package is there but Pango is not
        raise PdfUnavailable(
            "the PDF report needs WeasyPrint: install it with 'pip install rulecheck[pdf]' (it uses the system's "
            f"Pango library, e.g. Debian's libpango-1.0-0); the HTML report needs nothing extra ({exc})") from None
    return weasyprint


def available() -> bool:
    """Return whether the PDF report can be written here."""
    try:
        _weasyprint()
    except PdfUnavailable:
        return False
    return True


def render(result: dict, *, units: str = "si", charts: bool = True, meta: Mapping[str, Any] | None = None,
           details: bool = True) -> bytes:
    """Return the report of ``result`` as PDF bytes (the HTML report's content on pages; see :mod:`html`)."""
    weasyprint = _weasyprint()
    text = html.render(result, units=units, charts=charts, meta=meta, details=details)
    logging.getLogger("weasyprint").setLevel(logging.ERROR)
    logging.getLogger("fontTools").setLevel(logging.ERROR)
    document = weasyprint.HTML(string=text, base_url=None, url_fetcher=_no_fetch)
    try:
        return document.write_pdf() or b""
    except Exception as exc:  # a layout engine's failure is reported, never a traceback  # noqa: BLE001
        raise PdfUnavailable(f"the PDF could not be laid out ({type(exc).__name__}: {str(exc)[:200]}); "
                             "write the HTML report (--format html) and print it instead") from None


def _no_fetch(url: str, *args: Any, **kwargs: Any) -> dict[str, Any]:
    raise ValueError(f"the report fetches nothing ({url[:80]})")
