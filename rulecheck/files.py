"""Writing a file atomically: a private temporary file beside the target, then a rename onto it."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

__all__ = ["publish", "write_atomic"]


def write_atomic(target: Path, data: bytes) -> None:
    """Write ``data`` to ``target`` through a temporary file in the same folder, renamed onto it once complete,
    with ordinary permissions (mkstemp makes the file private); the temporary file is removed on any failure."""
    folder = target.parent if str(target.parent) else Path(".")
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
        publish(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


def publish(tmp: str, target: str | Path) -> None:
    """Give a finished temporary file ordinary permissions and rename it onto its target (atomic)."""
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(tmp, 0o666 & ~umask)  # mkstemp makes the file private; a report is an ordinary file
    os.replace(tmp, target)
