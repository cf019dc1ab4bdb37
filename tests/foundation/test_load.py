"""The loader: positions for every key path, duplicate keys, limits, encodings, unsafe tags."""

from __future__ import annotations

import time

import pytest

from rulecheck.load import Limits, LoadError, load_text

SPEC = """\
format: 1
tag: P-101
motor:
  kind: induction
  rated_speed: 1455 r/min
load:
  model: conveyor
  duty:
    - {duration: 2 s, speed_to: 61 r/min}
    - duration: 40 s
      speed_to: 61 r/min
    - {duration: 2 s, speed_to: 0 r/min}
"""


def test_positions_of_key_paths() -> None:
    doc = load_text(SPEC, "p101.yaml")
    assert doc.data["motor"]["rated_speed"] == "1455 r/min"
    pos = doc.positions["motor.rated_speed"]
    assert (pos.line, pos.column) == (5, 16)
    assert (doc.key_positions["motor.rated_speed"].line, doc.key_positions["motor.rated_speed"].column) == (5, 3)
    assert doc.positions["load.duty[1].duration"].line == 10
    assert doc.positions["load.duty[2].duration"].line == 12
    assert doc.position("load.duty[2].nothing").line == 12  # nearest parent that has a position


def test_duplicate_key_is_an_error_at_the_second_key() -> None:
    text = "format: 1\ntag: A\nmotor:\n  kind: induction\n  poles: 4\n  poles: 6\n"
    with pytest.raises(LoadError) as info:
        load_text(text)
    assert "duplicate key 'poles'" in info.value.message and "line 5" in info.value.message
    assert (info.value.line, info.value.column) == (6, 3)


@pytest.mark.parametrize(
    ("text", "words"),
    [
        (b"", "empty"),
        (b"   \n\n  # only a comment\n", "empty"),
        (b"- a\n- b\n", "list"),
        (b"just a scalar\n", "single value"),
        (b"\xff\xfeA\x00", "UTF-16"),
        (b"tag: a\x00b\n", "NUL"),
        (b"tag: caf\xe9\n", "UTF-8"),
        (b"motor:\n\tkind: dc\n", "tab"),
        (b"motor: [1, 2\n", "invalid YAML"),
        (b"a: !!python/object/apply:os.system ['echo hi']\n", "not allowed"),
        (b"a: !custom 3\n", "not allowed"),
        (b"a: &x {b: 1}\nc:\n  <<: *x\n", "merge keys"),
        (b"? [1, 2]\n: x\n", "plain word"),
    ],
)
def test_bad_files_give_clear_errors(text: bytes, words: str) -> None:
    with pytest.raises(LoadError) as info:
        load_text(text, "bad.yaml")
    full = info.value.message + " " + info.value.hint
    assert words in full, full


def test_bom_is_accepted() -> None:
    doc = load_text(b"\xef\xbb\xbfformat: 1\ntag: A\n")
    assert doc.data == {"format": 1, "tag": "A"}


def test_alias_bomb_is_stopped_quickly() -> None:
    lines = ['a0: &a0 ["x","x","x","x","x","x","x","x","x","x"]']
    for i in range(1, 10):
        lines.append(f"a{i}: &a{i} [" + ",".join([f"*a{i - 1}"] * 10) + "]")
    start = time.perf_counter()
    with pytest.raises(LoadError) as info:
        load_text("\n".join(lines) + "\n")
    assert "alias" in info.value.message
    assert time.perf_counter() - start < 10.0  # a hang guard against expansion, not a benchmark


def test_depth_and_size_limits() -> None:
    deep = "a: " + "[" * 50 + "]" * 50 + "\n"
    with pytest.raises(LoadError) as info:
        load_text(deep)
    assert "deeper" in info.value.message
    with pytest.raises(LoadError) as info:
        load_text("a: b\n" * 100, limits=Limits(max_bytes=100))
    assert "limit" in info.value.message


def test_yaml_11_scalars_keep_their_written_text() -> None:
    doc = load_text("format: 1\ntag: A\nx: no\ny: 1:30\nz: 2027-06-30\n")
    assert doc.data["x"] is False and doc.raw["x"] == ("no", "tag:yaml.org,2002:bool")
    assert doc.data["y"] == "1:30" and doc.raw["y"] == ("1:30", "tag:yaml.org,2002:int")  # base 60 stays text
    assert doc.data["z"] == "2027-06-30"  # dates stay text


def test_a_file_is_read_to_its_end_or_to_the_limit(tmp_path, monkeypatch) -> None:
    """The loader reads what a file holds (up to the size limit), even when the size it was told is wrong
    (a file that grows while it is read, a special file that reports no size)."""
    import os

    from rulecheck.load import load_file

    path = tmp_path / "p101.yaml"
    path.write_text(SPEC, encoding="utf-8")
    size = len(SPEC.encode())
    assert load_file(path, Limits(max_bytes=size)).data["motor"]["kind"] == "induction"  # exactly at the limit
    with pytest.raises(LoadError, match="more than the limit"):
        load_file(path, Limits(max_bytes=size - 1))
    real_fstat = os.fstat
    for told in (0, 7):  # a size smaller than what the file holds
        monkeypatch.setattr(os, "fstat", lambda fd, told=told: os.stat_result((*real_fstat(fd)[:6], told,
                                                                                  *real_fstat(fd)[7:])))
        assert load_file(path).data["load"]["duty"][2]["speed_to"] == "0 r/min"
        with pytest.raises(LoadError, match="more than the limit"):
            load_file(path, Limits(max_bytes=size - 1))
