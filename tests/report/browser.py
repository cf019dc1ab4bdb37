"""A small headless-Chromium harness for the report tests (standard library only).

Two ways in: plain command-line runs (``--screenshot``, ``--print-to-pdf``), and
a DevTools-protocol session over ``--remote-debugging-pipe`` (file descriptors 3
and 4, messages as JSON ended by a NUL byte) to watch network requests and
console messages and to print at a chosen paper size.
"""

from __future__ import annotations

import fcntl
import json
import os
import re
import select
import shutil
import subprocess
import tempfile
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

CHROMIUM_CANDIDATES = ("/usr/bin/chromium", "chromium", "chromium-browser")
FLAGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--disable-dev-shm-usage",
    "--hide-scrollbars",
]
PAPER_INCHES = {"A4": (8.27, 11.69), "Letter": (8.5, 11.0)}


def find_chromium() -> str | None:
    """Return the path of a Chromium executable, or None when there is none."""
    for name in CHROMIUM_CANDIDATES:
        path = shutil.which(name)
        if path:
            return path
    return None


def run_cli(chromium: str, url: str, extra: list[str], timeout: float = 90.0) -> subprocess.CompletedProcess:
    """Run Chromium once with ``extra`` flags on ``url``; returns the completed process (stderr as text)."""
    with tempfile.TemporaryDirectory(prefix="rc-chromium-") as profile:
        return subprocess.run(
            [chromium, *FLAGS, f"--user-data-dir={profile}", *extra, url],
            capture_output=True, text=True, timeout=timeout, check=False,
        )


def pdf_page_count(pdf: bytes) -> int:
    """Return the number of page objects in a PDF (``/Type /Page``, not ``/Pages``)."""
    return len(re.findall(rb"/Type\s*/Page(?![a-zA-Z])", pdf))


@dataclass
class PageLog:
    """What a page did while loading: requested URLs, console messages, exceptions, log entries."""

    requests: list[str] = field(default_factory=list)
    console: list[tuple[str, str]] = field(default_factory=list)
    exceptions: list[str] = field(default_factory=list)
    log_entries: list[tuple[str, str, str]] = field(default_factory=list)


class DevTools:
    """A DevTools-protocol session with one headless Chromium over a pipe."""

    def __init__(self, chromium: str) -> None:
        self._profile = tempfile.TemporaryDirectory(prefix="rc-cdp-")
        to_chrome_r, self._to_chrome = os.pipe()
        self._from_chrome, from_chrome_w = os.pipe()
        # Chromium reads commands on fd 3 and writes replies on fd 4. Move the child's pipe ends above 10
        # first, so that putting them on 3 and 4 cannot overwrite one with the other; bash does the placing.
        child_r = fcntl.fcntl(to_chrome_r, fcntl.F_DUPFD, 10)
        child_w = fcntl.fcntl(from_chrome_w, fcntl.F_DUPFD, 10)
        for fd in (to_chrome_r, from_chrome_w):
            os.close(fd)
        shell = f'exec "$0" "$@" 3<&{child_r} 4>&{child_w} {child_r}<&- {child_w}>&-'
        self.proc = subprocess.Popen(
            ["bash", "-c", shell, chromium, *FLAGS, f"--user-data-dir={self._profile.name}",
             "--remote-debugging-pipe", "about:blank"],
            pass_fds=(child_r, child_w), stdin=subprocess.DEVNULL,
            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
        )
        os.close(child_r)
        os.close(child_w)
        self._buffer = b""
        self._next_id = 0
        self.events: list[dict[str, Any]] = []

    def close(self) -> None:
        """End the browser this session started and remove its profile."""
        try:
            self.call("Browser.close", timeout=5)
        except (RuntimeError, OSError):
            pass
        try:
            self.proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.proc.kill()
            self.proc.wait(timeout=10)
        for fd in (self._to_chrome, self._from_chrome):
            try:
                os.close(fd)
            except OSError:
                pass
        self._profile.cleanup()

    def __enter__(self) -> DevTools:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def _read_message(self, deadline: float) -> dict[str, Any]:
        while b"\0" not in self._buffer:
            left = deadline - time.monotonic()
            if left <= 0:
                raise RuntimeError("DevTools: timed out waiting for Chromium")
            ready, _, _ = select.select([self._from_chrome], [], [], left)
            if ready:
                chunk = os.read(self._from_chrome, 1 << 20)
                if not chunk:
                    raise RuntimeError("DevTools: Chromium closed the pipe")
                self._buffer += chunk
        raw, self._buffer = self._buffer.split(b"\0", 1)
        return json.loads(raw)

    def call(self, method: str, params: dict | None = None, session: str | None = None,
             timeout: float = 60.0) -> dict[str, Any]:
        """Send one command and return its result; events seen meanwhile are kept in ``events``."""
        self._next_id += 1
        msg: dict[str, Any] = {"id": self._next_id, "method": method, "params": params or {}}
        if session:
            msg["sessionId"] = session
        os.write(self._to_chrome, json.dumps(msg).encode() + b"\0")
        deadline = time.monotonic() + timeout
        while True:
            reply = self._read_message(deadline)
            if reply.get("id") == self._next_id:
                if "error" in reply:
                    raise RuntimeError(f"DevTools {method}: {reply['error']}")
                return reply.get("result", {})
            self.events.append(reply)

    def wait_event(self, method: str, session: str, timeout: float = 60.0) -> dict[str, Any]:
        """Return the first event ``method`` of ``session`` (seen already or arriving before ``timeout``)."""
        deadline = time.monotonic() + timeout
        while True:
            for e in self.events:
                if e.get("method") == method and e.get("sessionId") == session:
                    return e
            self.events.append(self._read_message(deadline))

    def open(self, url: str, width: int = 1280, height: int = 2000) -> tuple[str, PageLog]:
        """Load ``url`` in a new page; returns its session id and what it requested and logged while loading."""
        target = self.call("Target.createTarget", {"url": "about:blank"})["targetId"]
        session = self.call("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]
        for domain in ("Network", "Runtime", "Log", "Page"):
            self.call(f"{domain}.enable", session=session)
        self.call("Emulation.setDeviceMetricsOverride",
                  {"width": width, "height": height, "deviceScaleFactor": 1, "mobile": False}, session=session)
        start = len(self.events)
        self.call("Page.navigate", {"url": url}, session=session)
        self.wait_event("Page.loadEventFired", session)
        # let late console messages or sub-resource requests arrive
        deadline = time.monotonic() + 0.5
        try:
            while time.monotonic() < deadline:
                self.events.append(self._read_message(deadline))
        except RuntimeError:
            pass
        log = PageLog()
        for e in self.events[start:]:
            if e.get("sessionId") != session:
                continue
            p = e.get("params", {})
            m = e.get("method")
            if m == "Network.requestWillBeSent":
                log.requests.append(p["request"]["url"])
            elif m == "Runtime.consoleAPICalled":
                text = " ".join(str(a.get("value", a.get("description", ""))) for a in p.get("args", []))
                log.console.append((p.get("type", ""), text))
            elif m == "Runtime.exceptionThrown":
                log.exceptions.append(json.dumps(p.get("exceptionDetails", {}))[:500])
            elif m == "Log.entryAdded":
                entry = p.get("entry", {})
                log.log_entries.append((entry.get("level", ""), entry.get("source", ""), entry.get("text", "")))
        return session, log

    def print_pdf(self, session: str, paper: str) -> bytes:
        """Return the page printed to PDF on ``paper`` ("A4" or "Letter"), backgrounds included."""
        import base64

        width, height = PAPER_INCHES[paper]
        result = self.call("Page.printToPDF", {"paperWidth": width, "paperHeight": height, "printBackground": True,
                                               "preferCSSPageSize": False}, session=session, timeout=120)
        return base64.b64decode(result["data"])

    def evaluate(self, session: str, expression: str) -> Any:
        """Return the value of a JavaScript expression evaluated in the page (for layout checks)."""
        result = self.call("Runtime.evaluate", {"expression": expression, "returnByValue": True}, session=session)
        return result.get("result", {}).get("value")


def write_report(tmp: Path, name: str, text: str) -> Path:
    """Write ``text`` to ``tmp/name`` and return the path."""
    path = tmp / name
    path.write_text(text, encoding="utf-8")
    return path
