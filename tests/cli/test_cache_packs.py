"""The result cache's pack files: records written by one process read back, damage is a miss, not a fault."""

from __future__ import annotations

import hashlib
import os
from pathlib import Path

from rulecheck import cache as cache_mod
from rulecheck.cache import CachedEntry, ResultCache, entry_of


def _result(n: int) -> dict:
    return {"file": f"s{n}.yaml", "status": "checked", "verdict": "pass", "counts": {},
            "outcomes": [{"rule": "r", "outcome": "pass", "severity": "info", "message": f"ok {n} · 5 N·m"}]}


def _key(n: int) -> str:
    return hashlib.sha256(str(n).encode()).hexdigest()


def _fill(folder: Path, count: int) -> None:
    writer = ResultCache(folder)
    for n in range(count):
        writer.put(_key(n), entry_of(_result(n)))


def test_records_read_back_in_a_new_process_view(tmp_path: Path) -> None:
    _fill(tmp_path, 20)
    reader = ResultCache(tmp_path)
    assert all(reader.has(_key(n)) for n in range(20)) and not reader.has(_key(99))
    assert reader.get(_key(7)) == _result(7)
    lazy = reader.get(_key(3), lazy=True)
    assert isinstance(lazy, CachedEntry) and lazy.load() == _result(3)
    assert (reader.hits, reader.misses) == (2, 0)
    assert len(list((tmp_path / "packs").glob("*.pack"))) == 1  # one pack per writing process


def test_a_damaged_record_is_a_miss_and_the_others_still_read(tmp_path: Path) -> None:
    _fill(tmp_path, 5)
    pack = next((tmp_path / "packs").glob("*.pack"))
    data = bytearray(pack.read_bytes())
    at = data.index(b"ok 2")
    data[at:at + 4] = b"OK 2"  # same length: the record stays in place, its signature no longer matches
    pack.write_bytes(bytes(data))
    reader = ResultCache(tmp_path)
    assert reader.get(_key(2)) is None and reader.misses == 1
    assert reader.get(_key(1)) == _result(1) and reader.get(_key(3)) == _result(3)


def test_a_truncated_pack_keeps_its_whole_records(tmp_path: Path) -> None:
    _fill(tmp_path, 4)
    pack = next((tmp_path / "packs").glob("*.pack"))
    size = pack.stat().st_size
    with open(pack, "r+b") as handle:
        handle.truncate(size - 10)  # the last record is cut short, as by a killed writer
    reader = ResultCache(tmp_path)
    assert [reader.has(_key(n)) for n in range(4)] == [True, True, True, False]
    assert reader.get(_key(2)) == _result(2)


def test_packs_of_other_processes_are_read_and_the_oldest_go_past_the_limit(tmp_path: Path, monkeypatch) -> None:
    for n in range(3):
        writer = ResultCache(tmp_path)
        writer.put(_key(n), entry_of(_result(n)))
        os.close(writer._pack)  # type: ignore[arg-type]
        pack = max((tmp_path / "packs").glob("*.pack"), key=lambda p: p.stat().st_mtime_ns)
        os.utime(pack, (1_000_000 + n, 1_000_000 + n))  # ages: the first written is the oldest
    assert all(ResultCache(tmp_path).has(_key(n)) for n in range(3))
    monkeypatch.setattr(cache_mod, "PACK_LIMIT_COUNT", 2)
    trimmed = ResultCache(tmp_path)
    assert [trimmed.has(_key(n)) for n in range(3)] == [False, True, True]
    assert len(list((tmp_path / "packs").glob("*.pack"))) == 2


def test_a_foreign_pack_signed_with_another_key_is_ignored(tmp_path: Path, monkeypatch) -> None:
    monkeypatch.setattr(cache_mod, "_secret", lambda: b"k" * 32)
    _fill(tmp_path, 2)  # written with a key that is not this user's
    monkeypatch.setattr(cache_mod, "_secret", lambda: b"u" * 32)
    reader = ResultCache(tmp_path)
    assert reader.has(_key(0)) and reader.get(_key(0)) is None and reader.misses == 1


def test_a_stored_result_is_read_back_from_where_put_says_it_is(tmp_path: Path) -> None:
    # a worker reports where its result's JSON went instead of sending the bytes; the parent reads them there
    writer = ResultCache(tmp_path)
    spans = [writer.put(_key(n), entry_of(_result(n))) for n in range(12)]
    reader = ResultCache(tmp_path)
    for n, where in enumerate(spans):
        assert where is not None
        assert reader.read_span(where) == entry_of(_result(n)).data
    unreadable = dict(_result(1), status="unreadable")
    assert writer.put(_key(50), entry_of(unreadable)) is None  # not stored: it may read next time
    pack, offset, length = spans[-1]
    os.truncate(pack, offset + length - 1)
    try:
        reader.read_span(spans[-1])
    except ValueError:
        pass
    else:
        raise AssertionError("a short read must be refused")
