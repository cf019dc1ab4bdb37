"""Safe YAML loading with a locator: every key path → file, line, column.

We compose the YAML into nodes (PyYAML's C composer when available) and build
plain Python values ourselves, so that

* no tag can construct a Python object (only the standard scalar, sequence
  and mapping tags are accepted; ``!!python/...`` and custom tags are errors);
* a key given twice is an error at the second key, not "last one wins";
* aliases are counted as they are expanded, so an alias bomb stops early;
* each value keeps the text it was written with, so a later stage can say
  "``no`` was read as false by YAML 1.1; quote it";
* dates stay the strings they were written as (the schema checks their form).

Limits (size, depth, nodes) are arguments with sane defaults.
"""

from __future__ import annotations

import hashlib
import math
import operator
import os
import re
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

import yaml

from rulecheck.files import read_head

try:  # the C composer is several times faster; both give the same nodes
    from yaml import CSafeLoader as _BaseLoader
except ImportError:  # pragma: no cover - depends on how PyYAML was built
    from yaml import SafeLoader as _BaseLoader  # type: ignore[assignment]

# The tag of a node depends only on its kind, text and implicit flags (the safe loader has no path
# resolvers), and the same texts come back spec after spec ("400 V", "induction", true). The composer
# calls ``resolve`` for every node: a C-level memo answers a text seen before without a Python frame.
_RESOLVER = yaml.resolver.Resolver()
_resolve_tag = lru_cache(maxsize=4096)(_RESOLVER.resolve)  # bounded: memory stays flat however many specs


class _Loader(_BaseLoader):  # type: ignore[misc,valid-type]
    resolve = staticmethod(_resolve_tag)
    # The composer tells the resolver of every node it enters and leaves, for path resolvers, which the safe
    # loader has none of (so the base methods return at once): C functions that take the same arguments and
    # do nothing answer without a Python frame.
    if not _BaseLoader.yaml_path_resolvers:
        descend_resolver = staticmethod(operator.is_)
        ascend_resolver = staticmethod(tuple)


__all__ = ["Document", "LoadError", "Limits", "Position", "load_file", "load_text", "path_text"]


@dataclass(frozen=True)
class Limits:
    """Bounds on one spec file; each stops a hostile or broken file early."""

    max_bytes: int = 1_048_576  # 1 MiB: a drive spec is a few kB
    max_depth: int = 32
    max_nodes: int = 100_000  # counts alias expansions too
    max_seconds: int = 60  # time to check one spec; a check is normally milliseconds


@dataclass(frozen=True)
class Position:
    """A 1-based line and column in a file."""

    line: int
    column: int


class LoadError(Exception):
    """A file that cannot be read as a spec document; carries a position when known."""

    def __init__(self, message: str, line: int | None = None, column: int | None = None, rule: str = "yaml-syntax",
                 hint: str = "") -> None:
        super().__init__(message)
        self.message = message
        self.line = line
        self.column = column
        self.rule = rule
        self.hint = hint


class Document:
    """A loaded spec: its data, where each key path sits, and the raw text of scalars.

    Positions are looked up in the composed YAML nodes when a finding needs one, not recorded for
    every value while loading: most values of a spec never need a line number.
    """

    def __init__(self, file: str, data: Any, sha256: str, root: Any = None) -> None:
        self.file = file
        self.data = data
        self.sha256 = sha256
        self.root = root
        self._maps: tuple[dict[str, Position], dict[str, Position], dict[str, tuple[str, str]]] | None = None
        self._memo: dict[str, Position | None] = {}
        self.aliases = False  # whether the text may hold aliases (set by the loader)
        # whether a plain number is non-finite or beyond 1e15 (set by the loader; None: not known)
        self.odd_numbers: bool | None = None

    def with_data(self, data: Any) -> Document:
        """Return the same document with other data (positions and raw text are shared)."""
        other = Document(self.file, data, self.sha256, self.root)
        other._maps, other._memo = self._maps, self._memo
        other.odd_numbers = self.odd_numbers  # data taken from this document holds no odd number this one lacks
        return other

    def _all(self) -> tuple[dict[str, Position], dict[str, Position], dict[str, tuple[str, str]]]:
        if self._maps is None:
            positions: dict[str, Position] = {}
            keys: dict[str, Position] = {}
            raw: dict[str, tuple[str, str]] = {}
            if self.root is not None:
                _index(self.root, (), positions, keys, raw, 0)
            self._maps = (positions, keys, raw)
        return self._maps

    @property
    def positions(self) -> dict[str, Position]:
        """Key path → position of the value (every path; built on first use)."""
        return self._all()[0]

    @property
    def key_positions(self) -> dict[str, Position]:
        """Key path → position of the key (built on first use)."""
        return self._all()[1]

    @property
    def raw(self) -> dict[str, tuple[str, str]]:
        """Key path → (plain scalar text, resolved tag) (built on first use)."""
        return self._all()[2]

    def _node(self, parts: list[Any]) -> Any:
        node = self.root
        for part in parts:
            if isinstance(node, yaml.MappingNode) and isinstance(part, str):
                node = next((v for k, v in node.value if isinstance(k, yaml.ScalarNode) and k.value == part), None)
            elif isinstance(node, yaml.SequenceNode) and isinstance(part, int) and 0 <= part < len(node.value):
                node = node.value[part]
            else:
                return None
            if node is None:
                return None
        return node

    def position(self, path: str) -> Position | None:
        """Return the position of ``path``, or of its nearest parent that has one."""
        if path in self._memo:
            return self._memo[path]
        found = None
        probe = path
        while found is None:
            node = self._node(_split(probe)) if self.root is not None else None
            if node is not None:
                found = Position(node.start_mark.line + 1, node.start_mark.column + 1)
            elif not probe:
                break
            else:
                cut = max(probe.rfind("."), probe.rfind("["))
                probe = probe[:cut] if cut > 0 else ""
        self._memo[path] = found
        return found


def _split(path: str) -> list[Any]:
    """Return the keys and indices of a key path: ``load.duty[2].duration`` → ['load', 'duty', 2, 'duration']."""
    parts: list[Any] = []
    for piece in path.split(".") if path else []:
        while "[" in piece and piece.endswith("]"):
            head, _, rest = piece.partition("[")
            if head:
                parts.append(head)
            index = rest.split("]", 1)[0]
            parts.append(int(index) if index.isdigit() else index)
            piece = rest.split("]", 1)[1] if "]" in rest else ""
            piece = piece.lstrip(".")
        if piece:
            parts.append(piece)
    return parts


def _index(node: Any, parts: tuple[Any, ...], positions: dict[str, Position], keys: dict[str, Position],
           raw: dict[str, tuple[str, str]], depth: int) -> None:
    if depth > 200:
        return
    path = path_text(parts)
    positions.setdefault(path, Position(node.start_mark.line + 1, node.start_mark.column + 1))
    if isinstance(node, yaml.MappingNode):
        for key_node, value_node in node.value:
            if isinstance(key_node, yaml.ScalarNode):
                child = (*parts, key_node.value)
                keys.setdefault(path_text(child), Position(key_node.start_mark.line + 1,
                                                           key_node.start_mark.column + 1))
                _index(value_node, child, positions, keys, raw, depth + 1)
    elif isinstance(node, yaml.SequenceNode):
        for i, item in enumerate(node.value):
            _index(item, (*parts, i), positions, keys, raw, depth + 1)
    elif isinstance(node, yaml.ScalarNode):
        raw.setdefault(path, (node.value, node.tag))


def path_text(parts: tuple[Any, ...] | list[Any]) -> str:
    """Return the dotted key path for a sequence of keys and indices: ``load.duty[2].duration``."""
    out = ""
    for part in parts:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            out += ("." if out else "") + str(part)
    return out


_SCALAR_TAGS = {
    "tag:yaml.org,2002:str",
    "tag:yaml.org,2002:int",
    "tag:yaml.org,2002:float",
    "tag:yaml.org,2002:bool",
    "tag:yaml.org,2002:null",
    "tag:yaml.org,2002:timestamp",
}
_NUMBER_TAGS = ("tag:yaml.org,2002:int", "tag:yaml.org,2002:float")
_MAP_TAG = "tag:yaml.org,2002:map"
_STR_TAG = "tag:yaml.org,2002:str"
_SEQ_TAG = "tag:yaml.org,2002:seq"


_CONSTRUCTORS = yaml.constructor.SafeConstructor.yaml_constructors
# Plain numbers in a spec are counts and ratios; beyond this they are a slip (or a hostile file), not a design.
ODD_NUMBER = 1e15


def is_odd_number(value: Any) -> bool:
    """Return whether a plain number is non-finite or beyond :data:`ODD_NUMBER` (not a flag, not text)."""
    if isinstance(value, bool):
        return False
    if isinstance(value, float):
        return not math.isfinite(value)
    return isinstance(value, int) and abs(value) > ODD_NUMBER


class _Builder:
    def __init__(self, doc: Document, limits: Limits) -> None:
        self.doc = doc
        self.limits = limits
        self.nodes = 0
        self.constructor = yaml.constructor.SafeConstructor()

    def build(self, node: yaml.Node, depth: int) -> Any:
        self.nodes += 1
        if self.nodes > self.limits.max_nodes:
            aliases = self.doc.aliases
            raise LoadError(
                f"the document {'expands' if aliases else 'holds'} to more than {self.limits.max_nodes} values"
                + (" through its aliases" if aliases else ""), *self._lc(node),
                hint=("remove repeated aliases; " if aliases else "") + "a drive spec needs no more than a few "
                     "hundred values")
        if depth > self.limits.max_depth:
            raise LoadError(f"nesting is deeper than {self.limits.max_depth} levels", *self._lc(node))
        if isinstance(node, yaml.MappingNode):
            return self._mapping(node, depth)
        if isinstance(node, yaml.SequenceNode):
            if node.tag != _SEQ_TAG:
                raise self._tag_error(node)
            return [self.build(item, depth + 1) for item in node.value]
        return self._scalar(node)

    def _mapping(self, node: yaml.MappingNode, depth: int) -> dict[str, Any]:
        if node.tag != _MAP_TAG:
            raise self._tag_error(node)
        result: dict[str, Any] = {}
        limits = self.limits
        for key_node, value_node in node.value:
            if not isinstance(key_node, yaml.ScalarNode) or key_node.tag not in _SCALAR_TAGS:
                raise self._key_error(key_node)
            key = key_node.value
            if key in result:
                raise self._duplicate_error(node, key_node)
            if value_node.tag == _STR_TAG and type(value_node) is yaml.ScalarNode and depth < limits.max_depth \
                    and self.nodes < limits.max_nodes:
                self.nodes += 1  # a text value: what build() would return for it, without the call
                result[key] = value_node.value
            else:
                result[key] = self.build(value_node, depth + 1)
        return result

    def _scalar(self, node: yaml.Node) -> Any:
        if node.tag not in _SCALAR_TAGS:
            raise self._tag_error(node)
        if node.tag == "tag:yaml.org,2002:str":
            return node.value
        if node.tag == "tag:yaml.org,2002:timestamp":
            return node.value  # dates stay text; the schema checks their form
        if ":" in node.value and node.tag in _NUMBER_TAGS:
            return node.value  # YAML 1.1 base 60 ('3:1' is 181, '1:00' is 60): text, which the schema refuses
        try:
            # the safe constructor's own function for the tag (what construct_object would pick)
            value = _CONSTRUCTORS[node.tag](self.constructor, node)
        except (ValueError, OverflowError, yaml.YAMLError) as exc:
            shown = node.value if len(node.value) <= 40 else node.value[:37] + "..."
            reason = str(exc) if len(str(exc)) <= 120 else type(exc).__name__
            raise LoadError(f"cannot read value {shown!r}: {reason}", *self._lc(node)) from None
        if is_odd_number(value):
            self.doc.odd_numbers = True
        return value

    def _key_error(self, key_node: yaml.Node) -> LoadError:
        if key_node.tag == "tag:yaml.org,2002:merge":
            return LoadError("merge keys ('<<') are not accepted in a spec", *self._lc(key_node),
                             hint="write the values out")
        return LoadError("a key must be a plain word", *self._lc(key_node))

    def _duplicate_error(self, node: yaml.MappingNode, key_node: yaml.ScalarNode) -> LoadError:
        key = key_node.value
        first_node = next(k for k, _v in node.value if isinstance(k, yaml.ScalarNode) and k.value == key)
        where = f" (first given at line {first_node.start_mark.line + 1})"
        return LoadError(
            f"duplicate key '{key}'{where}",
            *self._lc(key_node),
            hint="a key may appear once in a mapping; remove one of them",
        )

    def _lc(self, node: yaml.Node) -> tuple[int, int]:
        return node.start_mark.line + 1, node.start_mark.column + 1

    def _tag_error(self, node: yaml.Node) -> LoadError:
        return LoadError(
            f"tag '{node.tag}' is not allowed in a spec",
            *self._lc(node),
            hint="specs hold plain mappings, lists, strings and numbers; remove the tag",
        )


def _looks_utf16(data: bytes) -> bool:
    """Return True for UTF-16 text without a byte-order mark: every other byte zero (one NUL is binary, not text)."""
    pairs = [data[i:i + 2] for i in range(0, min(len(data), 64) - 1, 2)]
    if len(pairs) < 2:
        return False
    return all(a == 0 and b != 0 for a, b in pairs) or all(a != 0 and b == 0 for a, b in pairs)


def _decode(data: bytes) -> str:
    if data.startswith((b"\xff\xfe", b"\xfe\xff")) or _looks_utf16(data):
        raise LoadError("the file is UTF-16 encoded", 1, 1, hint="save the file as UTF-8")
    if b"\x00" in data:
        off = data.index(b"\x00")
        line = data.count(b"\n", 0, off) + 1
        raise LoadError("the file contains NUL bytes: it looks binary, not a YAML spec", line, 1)
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        column = exc.start - (data.rfind(b"\n", 0, exc.start) + 1) + 1
        raise LoadError(f"the file is not valid UTF-8 (byte 0x{data[exc.start]:02x})", line, column,
                        hint="save the file as UTF-8") from None


# A line that starts a value: a list item or a key. Each adds at least one value, so counting them bounds the
# number of values before the composer builds a node for each (some 400 bytes apiece).
_VALUE_LINE = re.compile(r"^[ \t]*(?:-(?:[ \t]|$)|[^#\s\-][^:\n]*:(?:[ \t]|$))", re.MULTILINE)


def _refuse_many_values(decoded: str, limits: Limits) -> None:
    """Raise LoadError when the text has more lines that start a value than the node limit allows."""
    if len(decoded) // 2 <= limits.max_nodes:  # too short to hold that many values: nothing to count
        return
    for count, match in enumerate(_VALUE_LINE.finditer(decoded), 1):
        if count > limits.max_nodes:
            line, column = _line_column(decoded, match.start())
            raise LoadError(f"the document holds more than {limits.max_nodes} values", line, column,
                            hint="a drive spec needs no more than a few hundred values")


def _line_column(decoded: str, offset: int) -> tuple[int, int]:
    """Return the 1-based line and column of a character offset in the text."""
    offset = max(0, min(offset, len(decoded)))
    start = decoded.rfind("\n", 0, offset) + 1
    return decoded.count("\n", 0, offset) + 1, offset - start + 1


def load_text(text: str | bytes, file: str = "<string>", limits: Limits | None = None) -> Document:
    """Return the :class:`Document` for spec text; raise :class:`LoadError` with a position."""
    limits = limits or Limits()
    data = text.encode("utf-8") if isinstance(text, str) else text
    if len(data) > limits.max_bytes:
        raise LoadError(f"the file is {len(data)} bytes, more than the limit of {limits.max_bytes}", 1, 1,
                        hint="a drive spec is a few kilobytes; raise limits.max_bytes in the configuration if needed")
    decoded = _decode(data)
    doc = Document(file=file, data=None, sha256=hashlib.sha256(data).hexdigest())
    if not decoded.strip() or all(
        not line.strip() or line.lstrip().startswith("#") for line in decoded.splitlines()
    ):
        raise LoadError("the file is empty", 1, 1, hint="a spec starts with 'format: 1' and 'tag: ...'")
    _refuse_many_values(decoded, limits)
    try:
        loader = _Loader(decoded)
        try:
            root = loader.get_single_node()
        finally:
            loader.dispose()
    except yaml.reader.ReaderError as exc:  # a character YAML does not allow: at its line and column
        line, column = _line_column(decoded, exc.position)
        raise LoadError(f"the file contains the character U+{exc.character:04X}, which YAML does not allow "
                        "(a control character or a non-character)", line, column,
                        hint="remove it (an editor may show it as a box or nothing at all)") from None
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        problem = exc.problem or exc.context or "invalid YAML"
        hint = ""
        if "\t" in decoded and ("tab" in problem or "found character" in problem):
            hint = "YAML does not allow tabs for indentation; indent with spaces"
        line, column = (mark.line + 1, mark.column + 1) if mark else (None, None)
        raise LoadError(f"invalid YAML: {problem}", line, column, hint=hint) from None
    except yaml.YAMLError as exc:
        raise LoadError(f"invalid YAML: {exc}") from None
    except RecursionError:
        raise LoadError(f"nesting is deeper than {limits.max_depth} levels") from None
    if root is None:
        raise LoadError("the file is empty", 1, 1, hint="a spec starts with 'format: 1' and 'tag: ...'")
    if not isinstance(root, yaml.MappingNode):
        kind = "a list" if isinstance(root, yaml.SequenceNode) else "a single value"
        raise LoadError(f"the top level is {kind}, not a mapping of sections", root.start_mark.line + 1,
                        root.start_mark.column + 1, hint="a spec is a mapping: 'format: 1', 'tag: ...', 'motor: ...'")
    doc.root = root
    doc.aliases = "*" in decoded and "&" in decoded  # may hold aliases (the message of the node limit says so)
    doc.odd_numbers = False  # the builder sets it on the first odd number it constructs
    try:
        doc.data = _Builder(doc, limits).build(root, 0)
    except RecursionError:
        raise LoadError(f"nesting is deeper than {limits.max_depth} levels") from None
    return doc


def load_file(path: str | os.PathLike[str], limits: Limits | None = None, display_name: str | None = None) -> Document:
    """Return the :class:`Document` for a spec file; raise :class:`LoadError` (rule ``unreadable`` for OS errors)."""
    limits = limits or Limits()
    name = display_name or os.fspath(path)
    try:
        # what the file holds, up to one byte past the limit; regular files (and a pipe named on the command
        # line) only: a device would never end
        data = read_head(path, limits.max_bytes, pipes=True)
    except OSError as exc:
        raise LoadError(f"cannot read the file: {exc.strerror or exc}", rule="unreadable") from None
    whole = len(data) <= limits.max_bytes  # a file past the limit was read only in part
    _LAST_READ["path"], _LAST_READ["data"] = (os.fspath(path), data) if whole else (None, None)
    return load_text(data, name, limits)


# The bytes of the file read last: the cache key of a spec is made from the very bytes that were checked.
_LAST_READ: dict[str, Any] = {"path": None, "data": None}


def last_read(path: str | os.PathLike[str]) -> bytes | None:
    """Return the bytes :func:`load_file` read last if they were read from ``path``, else None."""
    return _LAST_READ["data"] if _LAST_READ["path"] == os.fspath(path) else None
