"""Files: writing one atomically (a private temporary file beside the target, then a rename onto it), and
reading one within a size bound, regular files only (every file rulecheck reads goes through :func:`read_head`)."""

from __future__ import annotations

import errno
import os
import stat
import tempfile
from pathlib import Path

__all__ = ["READ_CAP", "ReadRefused", "publish", "read_head", "read_limited", "temporary_beside", "write_all",
           "write_atomic"]


def temporary_beside(target: Path) -> tuple[int, str]:
    """Return (descriptor, path) of a new private temporary file beside ``target`` (``.NAME.PID.xxxx.tmp``),
    after removing the ones a run that was killed left for the same target (their process no longer exists)."""
    folder = target.parent if str(target.parent) else Path(".")
    _sweep(folder, target.name)
    return tempfile.mkstemp(prefix=f".{target.name}.{os.getpid()}.", suffix=".tmp", dir=folder)


def _sweep(folder: Path, name: str) -> None:
    """Remove ``.NAME.PID.*.tmp`` files in ``folder`` whose process is gone (a report killed mid-write)."""
    prefix = f".{name}."
    try:
        with os.scandir(folder) as found:
            leftovers = [e for e in found if e.name.startswith(prefix) and e.name.endswith(".tmp")]
    except OSError:
        return
    for entry in leftovers:
        pid = entry.name[len(prefix):].split(".", 1)[0]
        if pid.isdigit() and int(pid) != os.getpid() and not _alive(int(pid)):
            try:
                os.unlink(entry.path)
            except OSError:
                pass


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OSError, OverflowError):
        return True  # someone else's, or cannot tell: leave it
    return True


def write_atomic(target: Path, data: bytes) -> None:
    """Write ``data`` to ``target`` through a temporary file in the same folder, renamed onto it once complete,
    with ordinary permissions (mkstemp makes the file private); the temporary file is removed on any failure."""
    write_all([(target, data)])


def write_all(items: list[tuple[Path, bytes]]) -> None:
    """Write several files so that either all are written or none is: each to a temporary file beside its
    target first, then all renamed; on any failure before the renames every temporary file is removed."""
    staged: list[tuple[str, Path]] = []
    target = Path(".")
    try:
        for target, data in items:
            fd, tmp = temporary_beside(target)
            staged.append((tmp, target))
            with os.fdopen(fd, "wb") as handle:
                handle.write(data)
        for tmp, target in staged:
            publish(tmp, target)
    except OSError as exc:
        _unlink_all(staged)
        exc.filename = str(target)  # the report's name, not its temporary file's
        raise
    except BaseException:
        _unlink_all(staged)
        raise


def _unlink_all(staged: list[tuple[str, Path]]) -> None:
    for tmp, _target in staged:
        try:
            os.unlink(tmp)
        except OSError:
            pass


def publish(tmp: str, target: str | Path) -> None:
    """Give a finished temporary file ordinary permissions and rename it onto its target (atomic)."""
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(tmp, 0o666 & ~umask)  # mkstemp makes the file private; a report is an ordinary file
    os.replace(tmp, target)


# No file rulecheck reads may be larger than this, whatever a configuration says (config.py caps max_bytes here).
READ_CAP = 16 * 1_048_576


class ReadRefused(OSError):
    """A file rulecheck will not read: not a regular file, or larger than the limit."""


def _kind(mode: int) -> str:
    for test, name in ((stat.S_ISDIR, "a folder"), (stat.S_ISCHR, "a character device"),
                       (stat.S_ISBLK, "a block device"), (stat.S_ISFIFO, "a named pipe"),
                       (stat.S_ISSOCK, "a socket")):
        if test(mode):
            return name
    return "not a regular file"


def read_head(path: str | os.PathLike[str], max_bytes: int, *, pipes: bool = False) -> bytes:
    """Return the bytes of ``path``, at most ``max_bytes + 1`` of them (one more than the limit tells the
    caller the file is too large without reading it all).

    Only regular files are read (and pipes, when ``pipes``: a spec piped on the command line): a device such
    as /dev/zero would never end, a FIFO nobody writes to would hang the run. Opening does not wait for a
    pipe's writer. Raises :class:`ReadRefused` (an ``OSError``) for anything else."""
    max_bytes = min(max_bytes, READ_CAP)
    fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_BINARY", 0))
    try:
        info = os.fstat(fd)
        pipe = stat.S_ISFIFO(info.st_mode)
        if not (stat.S_ISREG(info.st_mode) or (pipes and pipe)):
            raise ReadRefused(errno.EINVAL, f"is {_kind(info.st_mode)}, not a regular file")
        if pipe:
            os.set_blocking(fd, True)
        chunks: list[bytes] = []
        total = 0
        while total <= max_bytes:  # to the end, or one byte past the limit (a file may grow while read)
            chunk = os.read(fd, min(max_bytes + 1 - total, 1 << 20))
            if not chunk:
                break
            chunks.append(chunk)
            total += len(chunk)
        return b"".join(chunks)
    finally:
        os.close(fd)


def read_limited(path: str | os.PathLike[str], max_bytes: int, *, pipes: bool = False) -> bytes:
    """Return the whole of ``path``; raise :class:`ReadRefused` if it holds more than ``max_bytes``."""
    data = read_head(path, max_bytes, pipes=pipes)
    if len(data) > min(max_bytes, READ_CAP):
        raise ReadRefused(errno.EFBIG, f"holds more than the limit of {min(max_bytes, READ_CAP)} bytes")
    return data
