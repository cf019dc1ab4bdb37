"""Fixtures for the report tests: the sample results and a Chromium that must exist in CI."""

from __future__ import annotations

import os

import pytest

from . import browser, sample


@pytest.fixture(scope="session")
def samples() -> dict:
    """Return every sample result by name."""
    return sample.all_samples()


@pytest.fixture(scope="session")
def chromium() -> str:
    """Return the Chromium executable; skip outside CI when it is missing, fail in CI."""
    path = browser.find_chromium()
    if path is None:
        message = "chromium is not installed (apt-get install -y chromium)"
        if os.environ.get("CI"):
            pytest.fail(f"{message}; the browser tests are required in CI")
        pytest.skip(message)
    return path
