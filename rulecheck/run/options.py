"""What a run is asked to do (the command line's options) and the error that stops it before it starts."""

from __future__ import annotations

import datetime as _dt
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

__all__ = ["FAST_VALIDATOR_FROM", "RunOptions", "UsageError"]

FAST_VALIDATOR_FROM = 50  # specs to check before compiling the fast validator pays for itself


class UsageError(Exception):
    """A problem with how rulecheck was called or configured (exit code 2)."""


@dataclass
class RunOptions:
    """What the command line asks of a run."""

    paths: list[str]
    config: str | None = None
    rule_paths: list[str] = field(default_factory=list)
    fail_on: str | None = None
    units: str | None = None
    today: _dt.date | None = None
    jobs: int = 1  # 0 = all cores
    cache_dir: str | None = None  # None = no cache
    changed_since: str | None = None
    charts: bool = True  # compute chart series beside the results (for the HTML report and the e-mail)
    # draw each spec's charts where it is checked (report.charts.draw_series): Stream.drawings has them
    draw: Callable[[dict[str, Any], dict[str, Any], str], dict[str, str]] | None = None
    code_cache_dir: str | None = None  # compiled rules and lint results, kept even when results are not cached
    lazy_cached: bool = False  # yield cached results unparsed (CachedEntry): enough for a JSON report
