"""A result cache keyed by content, so an unchanged repository re-checks fast.

The key of a spec's result is a hash of everything the result depends on: the
spec's bytes (and those of a duty profile it names), its displayed path, the
rule set's digest, the configuration's content, the tool version, the date
(waivers expire) and the display units. Entries are appended to pack files,
one per writing process; a corrupt, truncated or foreign entry is ignored.
"""

from __future__ import annotations

import contextlib
import hashlib
import hmac
import json
import os
import re
import time
from functools import lru_cache
from pathlib import Path
from typing import Any

from rulecheck.files import READ_CAP, read_limited
from rulecheck.result import SpecTally, decode, encode

__all__ = ["CachedEntry", "CachedResult", "ResultCache", "charts_key", "code_digest", "default_cache_dir",
           "entry_of", "spec_key"]

_MAGIC = "rulecheck-cache-2"
_NEW_FILE = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0)
_PROFILE = re.compile(rb"^\s*duty_profile\s*:\s*['\"]?([A-Za-z0-9_./-]+\.csv)", re.MULTILINE)


@lru_cache(maxsize=1)
def code_digest() -> str:
    """Return a digest of rulecheck's own code and data files, so a changed tool never reuses old results."""
    root = Path(__file__).resolve().parent
    h = hashlib.sha256()
    for path in sorted(root.rglob("*")):
        if path.suffix in (".py", ".yaml", ".json", ".html", ".css") and "__pycache__" not in path.parts:
            try:
                h.update(str(path.relative_to(root)).encode() + b"\0" + path.read_bytes())
            except OSError:
                continue
    return h.hexdigest()


def spec_key(spec_bytes: bytes, spec_path: Path, display: str, context_key: str) -> str:
    """Return the cache key of one spec's result."""
    h = hashlib.sha256()
    h.update(_MAGIC.encode())
    h.update(context_key.encode())
    h.update(b"\0" + display.encode("utf-8", "surrogateescape") + b"\0")
    h.update(hashlib.sha256(spec_bytes).digest())
    for match in _PROFILE.finditer(spec_bytes):
        # a measured profile beside the spec is part of what the result depends on
        profile = spec_path.parent / match.group(1).decode("ascii", "replace")
        try:  # bounded, regular files only: a spec may name /dev/zero or a FIFO
            h.update(hashlib.sha256(read_limited(profile, READ_CAP)).digest())
        except OSError:
            h.update(b"missing")
    return h.hexdigest()


class CachedResult(dict):  # type: ignore[type-arg]
    """A result with the compact JSON (UTF-8 bytes) it was encoded as or read from (None once it is changed)."""

    def __init__(self, result: dict[str, Any], data: bytes | None) -> None:
        super().__init__(result)
        self.data = data


class CachedEntry:
    """A spec result left unparsed: its compact JSON (UTF-8 bytes) and its tally (:class:`SpecTally`).

    The bytes travel from a worker to the report file as they are: nothing decodes or encodes them again.
    """

    __slots__ = ("charts", "data", "tally", "where")

    def __init__(self, data: bytes | None, tally: SpecTally, where: tuple[str, int, int] | None = None,
                 charts: dict[str, Any] | None = None) -> None:
        self.data = data  # None while only ``where`` says where the bytes are (a worker's pack: path, offset, length)
        self.tally = tally
        self.where = where
        self.charts = charts  # the chart series beside the result, when the run draws charts (never in the JSON)

    def load(self) -> dict[str, Any]:
        """Return the result itself."""
        return CachedResult(decode(self.data), self.data)  # type: ignore[arg-type]


def entry_of(result: dict[str, Any]) -> CachedEntry:
    """Return a spec result as its compact JSON and tally."""
    return CachedEntry(encode(result), SpecTally.of(result))


def charts_key(key: str) -> str:
    """Return the key of the chart series kept beside the result stored under ``key``: a run that draws
    charts and one that does not share the result's entry."""
    return hashlib.sha256(f"charts {key}".encode()).hexdigest()


def default_cache_dir() -> Path:
    """Return the user's cache folder for rulecheck (outside any repository, so a pull request cannot plant entries)."""
    env = os.environ.get("RULECHECK_CACHE_DIR")
    if env:
        return Path(env)
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "rulecheck"


def key_path() -> Path:
    """Return where this user's key for signing cache entries is kept: in the user's state folder
    (``XDG_STATE_HOME``, else ``~/.local/state``), never in a cache folder. A cache folder may lie inside a
    checkout (CI caching setups point ``RULECHECK_CACHE_DIR`` or ``XDG_CACHE_HOME`` there), where a pull
    request could plant a key of its own beside entries signed with it."""
    base = os.environ.get("XDG_STATE_HOME") or os.path.join(os.path.expanduser("~"), ".local", "state")
    return Path(base) / "rulecheck" / "cache-key"


KEY_BYTES = 32
_KEY: list[bytes] = []  # this process's key, read once (forked workers inherit it)
KEY_PROBLEMS: list[str] = []  # why the key file was refused (the cache is then good for this run alone)


def _refusal(path: Path, info: os.stat_result) -> str | None:
    """Return why an existing key file cannot be trusted, or None."""
    import stat

    if not stat.S_ISREG(info.st_mode):
        return "is not a regular file"
    if hasattr(os, "geteuid") and info.st_uid != os.geteuid():
        return "belongs to another user"
    if info.st_mode & 0o077:
        return f"may be read or written by others (mode {stat.S_IMODE(info.st_mode):04o}; 0600 is required)"
    if info.st_size != KEY_BYTES:
        return f"holds {info.st_size} bytes, not {KEY_BYTES}"
    return None


def _read_key(path: Path) -> bytes | None:
    """Return the key kept at ``path`` if it can be trusted; None if there is none; record why it is refused."""
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NOFOLLOW", 0) | getattr(os, "O_NONBLOCK", 0))
    except FileNotFoundError:
        return None
    except OSError as exc:
        KEY_PROBLEMS.append(f"cache key {path} cannot be opened ({exc.strerror or exc})")
        return b""
    with os.fdopen(fd, "rb") as handle:
        why = _refusal(path, os.fstat(handle.fileno()))
        data = b"" if why else handle.read(KEY_BYTES + 1)
    if why or len(data) != KEY_BYTES:
        KEY_PROBLEMS.append(f"cache key {path} {why or 'changed while read'}: cached results are not reused; "
                            "remove the file and rulecheck makes a new one")
        return b""
    return data


def _inside(path: Path, folder: Path) -> bool:
    try:
        return path.resolve().is_relative_to(folder.resolve())
    except (OSError, RuntimeError, ValueError):
        return True  # a folder that cannot be resolved (a link loop) is not trusted either


def _secret() -> bytes:
    """Return this user's key for signing cache entries: read from :func:`key_path` when that file can be
    trusted (a regular file of this user, mode 0600, 32 bytes), created there on first use; otherwise a key
    kept in memory (entries written with it are good for this run alone, and nothing found on disk verifies)."""
    if _KEY:
        return _KEY[0]
    path = key_path()
    data = _read_key(path)
    if data is None:  # no key yet: make one
        data = os.urandom(KEY_BYTES)
        try:
            path.parent.mkdir(parents=True, exist_ok=True, mode=0o700)
            fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_NOFOLLOW", 0), 0o600)
            with os.fdopen(fd, "wb") as handle:
                handle.write(data)
        except FileExistsError:  # another process made it first
            data = _read_key(path) or os.urandom(KEY_BYTES)
        except OSError:
            pass  # kept in memory only
    elif not data:
        data = os.urandom(KEY_BYTES)
    _KEY.append(data)
    return data


# packs beyond these (oldest first) are removed when a cache is opened: it is a cache, not an archive
PACK_LIMIT_BYTES = 1 << 30
PACK_LIMIT_COUNT = 512
_RECORD = b"RCP"


class ResultCache:
    """A folder of cached spec results, each entry signed with the user's key.

    Spec results are appended to pack files, one per writing process (``packs/*.pack``): creating a
    file per entry costs the file system far more than the entry's bytes. Each record is a header
    line ``RCP <key> <length>`` and the signed entry. A cache opened for reading scans the packs'
    headers once. The compiled rule sources and lint results are files of their own
    (:meth:`get_file`, :meth:`put_file`).

    A signature that does not match (an entry written elsewhere, edited, truncated or planted in a
    repository) makes the entry count as absent.
    """

    def __init__(self, folder: Path) -> None:
        self.folder = folder
        self.hits = 0
        self.misses = 0
        self.usable = True
        self._key = _secret()
        if _inside(key_path(), folder):  # a key among the entries proves nothing about them
            KEY_PROBLEMS.append(f"cache key {key_path()} lies inside the cache folder {folder}: cached results "
                                "are not reused; keep XDG_STATE_HOME outside the cache folder")
            self._key = os.urandom(KEY_BYTES)
        self._folders: set[Path] = set()  # subfolders known to exist
        self._index: dict[str, tuple[str, int, int]] | None = None  # key → (pack, offset, length)
        self._readers: dict[str, int] = {}  # pack → open descriptor
        self._pack: int | None = None  # this process's pack, opened on the first put
        self._pack_pid = 0
        self._pack_path = ""
        self._pack_size = 0

    def _mac(self, *parts: bytes) -> str:
        """Return the signature of the parts joined (signed as they are: none is copied to be joined)."""
        mac = hmac.new(self._key, digestmod="sha256")
        for part in parts:
            mac.update(part)
        return mac.hexdigest()

    # --- spec results, in packs ----------------------------------------------------------------------

    def _packs(self) -> Path:
        return self.folder / "packs"

    def _load_index(self) -> dict[str, tuple[str, int, int]]:
        if self._index is not None:
            return self._index
        index: dict[str, tuple[str, int, int]] = {}
        try:
            with os.scandir(self._packs()) as found:
                packs = sorted((e for e in found if e.name.endswith(".pack") and e.is_file()),
                               key=lambda e: e.stat().st_mtime, reverse=True)
        except OSError:
            packs = []
        total = 0
        for n, entry in enumerate(packs):
            total += entry.stat().st_size
            if total > PACK_LIMIT_BYTES or n >= PACK_LIMIT_COUNT:
                with contextlib.suppress(OSError):
                    os.unlink(entry.path)
                continue
            _scan_pack(entry.path, index)
        self._index = index
        return index

    def has_any(self) -> bool:
        """Return whether any spec result is stored."""
        return bool(self._load_index())

    def has(self, key: str) -> bool:
        """Return whether an entry exists for ``key`` (it is verified when read)."""
        return key in self._load_index()

    def _read_record(self, key: str) -> bytes:
        where = self._load_index().get(key)
        if where is None:
            raise FileNotFoundError(key)
        return self.read_span(where)

    def get(self, key: str, lazy: bool = False) -> Any:
        """Return the cached result for ``key``, or None (a bad entry counts as absent).

        With ``lazy`` the result is not parsed: a :class:`CachedEntry` carries its JSON and the counts
        a run summary needs (enough for a JSON report).

        A spec result comes back as a :class:`CachedResult`: a dict that also keeps the JSON it was read
        from, so a JSON report can copy it instead of encoding it again.
        """
        try:
            return self._open_entry(key, self._read_record(key), lazy)
        except (OSError, ValueError, UnicodeDecodeError):
            self.misses += 1
            return None

    def _open_entry(self, key: str, raw: bytes, lazy: bool) -> Any:
        mac, _sep, payload = raw.partition(b"\n")
        if not hmac.compare_digest(mac.decode("ascii", "replace"), self._mac(payload)):
            raise ValueError("signature")
        head, _sep, body = payload.partition(b"\n")
        if not head.startswith(f"{_MAGIC} {key} ".encode()):
            raise ValueError("foreign entry")
        if lazy:  # signed by this user, written by encode(): copied into a JSON report as it is
            tally = SpecTally.from_json(json.loads(head.split(b" ", 2)[2]))
            self.hits += 1
            return CachedEntry(body, tally)
        result = decode(body)
        if not isinstance(result, dict):
            raise ValueError("not a result")
        self.hits += 1
        return CachedResult(result, body)

    def _entry_parts(self, key: str, body: bytes, meta: dict[str, Any]) -> tuple[bytes, bytes]:
        """Return a signed entry in two parts, its signature and header (with ``meta``), then ``body``; the body
        is not copied to be signed or written."""
        head = f"{_MAGIC} {key} {json.dumps(meta, separators=(',', ':'))}\n".encode()
        return self._mac(head, body).encode("ascii") + b"\n" + head, body

    def put(self, key: str, result: Any) -> tuple[str, int, int] | None:
        """Store a spec result or a :class:`CachedEntry` at the end of this process's pack; return where its
        JSON now is (pack, offset, length: :meth:`read_span` reads it back), or None if it was not stored.

        A result that could not be read (an OS error) is not stored: it may read next time. Errors only
        disable the cache.
        """
        if not isinstance(result, CachedEntry):
            result = entry_of(result)
        if not self.usable or result.data is None or result.tally.status == "unreadable":
            return None  # a file that could not be read may read next time
        return self._append(key, result.data, result.tally.to_json())

    def put_charts(self, key: str, charts: dict[str, Any]) -> None:
        """Store the chart series of the result stored under ``key``."""
        if self.usable:
            self._append(charts_key(key), encode(charts), {"charts": True})

    def get_charts(self, key: str) -> dict[str, Any] | None:
        """Return the chart series kept beside the result stored under ``key``, or None (not counted as a miss:
        the result is what a run looks up)."""
        try:
            value = self._open_entry(charts_key(key), self._read_record(charts_key(key)), lazy=False)
        except (OSError, ValueError, UnicodeDecodeError):
            return None
        self.hits -= 1
        return value

    def _append(self, key: str, body: bytes, meta: dict[str, Any]) -> tuple[str, int, int] | None:
        """Append a signed record to this process's pack; return where its body is (None: not stored)."""
        signed, body = self._entry_parts(key, body, meta)
        try:
            if self._pack is None or self._pack_pid != os.getpid():  # a forked worker writes a pack of its own
                self._open_pack()
            header = b"%s %s %d\n" % (_RECORD, key.encode("ascii"), len(signed) + len(body))
            first = header + signed
            size = len(first) + len(body) + 1
            start = self._pack_size
            # one write of a whole record (a reader never sees half a header)
            written = os.writev(self._pack, [first, body, b"\n"]) if hasattr(os, "writev") else 0  # type: ignore[arg-type]
            if written < size:  # a short write (or no writev): the rest in plain writes
                view = memoryview(first + body + b"\n")[written:]
                while view:
                    view = view[os.write(self._pack, view):]  # type: ignore[arg-type]
            self._pack_size += size
        except OSError:
            self.usable = False
            return None
        return self._pack_path, start + len(first), len(body)

    def read_span(self, where: tuple[str, int, int]) -> bytes:
        """Return the bytes at (pack, offset, length): a record of the index, or the result JSON :meth:`put`
        reported (a worker's, read from its pack); ValueError when the pack is shorter."""
        pack, offset, length = where
        fd = self._readers.get(pack)
        if fd is None:
            fd = self._readers[pack] = os.open(pack, os.O_RDONLY | getattr(os, "O_BINARY", 0))
        data = os.pread(fd, length, offset)
        if len(data) != length:
            raise ValueError("truncated")
        return data

    def _open_pack(self) -> None:
        folder = self._packs()
        folder.mkdir(parents=True, exist_ok=True)
        self._ignore_file()
        name = f"{int(time.time() * 1000):013d}-{os.getpid()}-{os.urandom(4).hex()}.pack"
        self._pack_path = str(folder / name)
        self._pack = os.open(self._pack_path, _NEW_FILE | os.O_APPEND, 0o600)
        self._pack_pid = os.getpid()
        self._pack_size = 0  # a new file, written by this process only

    def _ignore_file(self) -> None:
        ignore = self.folder / ".gitignore"
        if not ignore.exists():
            ignore.write_text("# rulecheck's result cache\n*\n", encoding="utf-8")

    # --- single entries (compiled rule sources, lint results) ---------------------------------------

    def _path(self, key: str) -> Path:
        return self.folder / key[:2] / f"{key}.json"

    def has_file(self, key: str) -> bool:
        """Return whether a file is stored under ``key`` (it is verified when read)."""
        return self._path(key).is_file()

    def get_file(self, key: str) -> Any:
        """Return the value stored under ``key`` by :meth:`put_file`, or None."""
        try:
            return self._open_entry(key, self._path(key).read_bytes(), lazy=False)
        except (OSError, ValueError, UnicodeDecodeError):
            self.misses += 1
            return None

    def put_file(self, key: str, value: dict[str, Any]) -> None:
        """Store a value in a file of its own (atomically: a temporary file, then rename); it replaces any older."""
        if not self.usable:
            return
        data = b"".join(self._entry_parts(key, encode(value), {}))
        path = self._path(key)
        try:
            if path.parent not in self._folders:
                path.parent.mkdir(parents=True, exist_ok=True)
                self._ignore_file()
                self._folders.add(path.parent)
            # a name of this process's own (several processes may write the same entry), created exclusively
            tmp = path.parent / f".tmp-{os.getpid()}-{key[:16]}.json"
            try:
                fd = os.open(tmp, _NEW_FILE, 0o600)
            except FileExistsError:  # left by an earlier process of the same number that was killed
                os.unlink(tmp)
                fd = os.open(tmp, _NEW_FILE, 0o600)
            with open(fd, "wb") as handle:
                handle.write(data)
            os.replace(tmp, path)
        except OSError:
            self.usable = False


def _scan_pack(path: str, index: dict[str, tuple[str, int, int]]) -> None:
    """Add the records of one pack to ``index`` (the first of a key wins; a damaged tail ends the scan)."""
    try:
        with open(path, "rb") as handle:
            size = os.fstat(handle.fileno()).st_size
            offset = 0
            while offset < size:
                handle.seek(offset)
                head = handle.readline(128)
                parts = head.split()
                if not head.endswith(b"\n") or len(parts) != 3 or parts[0] != _RECORD or not parts[2].isdigit():
                    return
                length = int(parts[2])
                start = offset + len(head)
                if start + length + 1 > size:
                    return
                index.setdefault(parts[1].decode("ascii", "replace"), (path, start, length))
                offset = start + length + 1
    except OSError:
        return
