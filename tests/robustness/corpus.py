"""The bad-input corpus: named spec files that a careless editor, a spreadsheet export or a hostile pull request
could produce, each with words its finding must contain. Large cases are built here at test time, never committed.
"""

from __future__ import annotations

import random
from collections.abc import Iterator
from dataclasses import dataclass

from tests.robustness.specs import CONVEYOR, PUMP


@dataclass(frozen=True)
class Case:
    """One bad file: its name, bytes, and what its first error must say (words, rule, line if known)."""

    name: str
    data: bytes
    words: tuple[str, ...]  # each must appear (case-insensitive) in the message or fix of that error
    rule: str | None = None  # the rule id of that error, when one is expected
    line: int | None = None  # the line of that error, when it is known


def _sub(old: str, new: str, text: str = CONVEYOR) -> bytes:
    assert old in text, old
    return text.replace(old, new, 1).encode("utf-8")


def _line_of(text: str, needle: str) -> int:
    return text[: text.index(needle)].count("\n") + 1


def _enum_misspellings() -> Iterator[Case]:
    """Every enum of the spec schema at a reachable key, misspelt by doubling its first letter."""
    import yaml

    from rulecheck.schema import spec_schema, walk_fields  # noqa: F401 - walk_fields proves the path exists

    schema = spec_schema()

    def resolve(node: dict) -> dict:
        while "$ref" in node:
            target = schema
            for part in node["$ref"].lstrip("#/").split("/"):
                target = target[part]
            node = {**target, **{k: v for k, v in node.items() if k != "$ref"}}
        return node

    def walk(node: dict, parts: tuple[str, ...]) -> Iterator[tuple[tuple[str, ...], list]]:
        node = resolve(node)
        if "enum" in node:
            yield parts, node["enum"]
        for key, sub in node.get("properties", {}).items():
            yield from walk(sub, (*parts, key))

    for parts, options in walk(schema, ()):
        good = options[0]
        if not isinstance(good, str) or len(parts) > 3:
            continue
        base = yaml.safe_load(CONVEYOR)
        node = base
        for part in parts[:-1]:
            nxt = node.get(part)
            if not isinstance(nxt, dict):
                nxt = node[part] = {}
            node = nxt
        node[parts[-1]] = good[0] + good
        text = yaml.safe_dump(base, sort_keys=False)
        yield Case("enum-" + "-".join(parts) + ".yaml", text.encode(), (f"'{good[0] + good}' is not a known value",),
                   "spec-schema")


def static_cases() -> list[Case]:
    """Return the corpus of small bad files (each a few kB at most)."""
    rng = random.Random(20240611)  # fixed seed: the same corpus every run
    deep = "motor:\n" + "".join("  " * (i + 1) + f"k{i}:\n" for i in range(60)) + "  " * 61 + "v: 1\n"
    laughs = "a0: &a0 [x, x, x, x, x, x, x, x, x, x]\n" + "".join(
        f"a{i}: &a{i} [*a{i-1}, *a{i-1}, *a{i-1}, *a{i-1}, *a{i-1}, *a{i-1}, *a{i-1}, *a{i-1}, *a{i-1}, *a{i-1}]\n"
        for i in range(1, 10))
    cases = [
        Case("empty.yaml", b"", ("empty",), "yaml-syntax", 1),
        Case("whitespace.yaml", b"   \n\n   \n", ("empty",), "yaml-syntax", 1),
        Case("comment-only.yaml", b"# nothing yet\n   # still nothing\n", ("empty",), "yaml-syntax", 1),
        Case("binary-nul.yaml", bytes(rng.randrange(256) for _ in range(4096)) + b"\x00", ("binary",), "yaml-syntax"),
        Case("binary-high.yaml", bytes(rng.randrange(128, 256) for _ in range(4096)), ("utf-8",), "yaml-syntax", 1),
        Case("utf16-le-bom.yaml", b"\xff\xfe" + CONVEYOR.encode("utf-16-le"), ("utf-16",), "yaml-syntax", 1),
        Case("utf16-be.yaml", CONVEYOR.encode("utf-16-be"), ("utf-16",), "yaml-syntax", 1),
        Case("latin1.yaml", _sub("Grit conveyor 2", "Grit conveyor 2 \xb0C").decode().encode("latin-1"),
             ("utf-8",), "yaml-syntax", 3),
        Case("tabs.yaml", _sub("  kind: induction", "\tkind: induction"), ("tab",), "yaml-syntax",
             _line_of(CONVEYOR, "  kind: induction")),
        Case("top-list.yaml", b"- format: 1\n- tag: X\n", ("list",), "yaml-syntax", 1),
        Case("top-scalar.yaml", b"just some words\n", ("single value",), "yaml-syntax", 1),
        Case("top-number.yaml", b"42\n", ("single value",), "yaml-syntax", 1),
        Case("duplicate-top.yaml", (CONVEYOR + "tag: CV-211\n").encode(), ("duplicate key 'tag'",), "yaml-syntax",
             CONVEYOR.count("\n") + 1),
        Case("duplicate-nested.yaml", _sub("  poles: 4\n", "  poles: 4\n  poles: 6\n"), ("duplicate key 'poles'",),
             "yaml-syntax", _line_of(CONVEYOR, "  poles: 4") + 1),
        Case("deep-block.yaml", (CONVEYOR.replace("motor:", "x-old-motor:", 1) + deep).encode(), ("deeper",),
             "yaml-syntax"),
        Case("deep-flow.yaml", ("format: 1\ntag: D\nx-deep: " + "[" * 5000 + "]" * 5000 + "\n").encode(),
             ("nesting",), "yaml-syntax"),
        Case("deep-flow-unclosed.yaml", ("format: 1\ntag: D\nx-deep: " + "{a: " * 20000 + "\n").encode(), ("",),
             "yaml-syntax"),
        Case("alias-bomb.yaml", laughs.encode(), ("alias",), "yaml-syntax"),
        Case("control-del.yaml", _sub("title: Grit conveyor 2", "title: Grit\x7f conveyor 2"), ("U+007F",),
             "yaml-syntax", _line_of(CONVEYOR, "title: Grit")),
        Case("control-c0.yaml", _sub("title: Grit conveyor 2", "title: Grit\x01 conveyor 2"), ("U+0001",),
             "yaml-syntax", _line_of(CONVEYOR, "title: Grit")),
        Case("non-character.yaml", _sub("title: Grit conveyor 2", "title: Grit\ufffe conveyor 2"), ("U+FFFE",),
             "yaml-syntax", _line_of(CONVEYOR, "title: Grit")),
        Case("base-60-ratio.yaml", _sub("  ratio: 23.8", "  ratio: 3:1"), ("3:1",), "spec-schema",
             _line_of(CONVEYOR, "  ratio: 23.8")),
        Case("missing-section.yaml", b"format: 1\ntitle: no tag, no sections\n", ("tag",), "spec-schema", 1),
        Case("many-values-no-aliases.yaml", ("format: 1\ntag: M\nx-list:\n" + "- 1\n" * 120_000).encode(),
             ("holds more than",), "yaml-syntax", 100_001),  # the 100 001st line that starts a value
        Case("alias-bomb-in-spec.yaml", (CONVEYOR + "x-notes: &n [" + ", ".join(["n"] * 50) + "]\n" + "".join(
            f"x-n{i}: &n{i} [" + ", ".join([f"*n{i - 1}" if i else "*n"] * 50) + "]\n" for i in range(5))).encode(),
             ("alias",), "yaml-syntax"),
        Case("python-object.yaml", _sub("title: Grit conveyor 2, inlet works",
                                        "title: !!python/object/apply:os.system ['echo pwned']"),
             ("tag", "not allowed"), "yaml-syntax", 3),
        Case("python-name.yaml", _sub("ratio: 23.8", "ratio: !!python/name:os.system"), ("not allowed",),
             "yaml-syntax", _line_of(CONVEYOR, "ratio: 23.8")),
        Case("python-module.yaml", _sub("  model: conveyor", "  model: !!python/module:subprocess"),
             ("not allowed",), "yaml-syntax"),
        Case("custom-tag.yaml", _sub("poles: 4", "poles: !poles 4"), ("not allowed",), "yaml-syntax",
             _line_of(CONVEYOR, "poles: 4")),
        Case("binary-tag.yaml", _sub("title: Grit conveyor 2, inlet works", "title: !!binary aGVsbG8="),
             ("not allowed",), "yaml-syntax", 3),
        Case("set-tag.yaml", _sub("environment:\n", "environment: !!set\n"), ("not allowed",), "yaml-syntax"),
        Case("merge-key.yaml", (CONVEYOR + "x-base: &b {kind: dc}\nprotection:\n  <<: *b\n").encode(),
             ("merge",), "yaml-syntax"),
        Case("complex-key.yaml", (CONVEYOR + "? [a, b]\n: c\n").encode(), ("key",), "yaml-syntax"),
        Case("long-line.yaml", _sub("title: Grit conveyor 2, inlet works", "title: " + "W" * 900_000),
             ("title",), "spec-schema", 3),
        Case("long-key.yaml", (CONVEYOR + "k" * 200_000 + ": 1\n").encode(), ("yaml",), "yaml-syntax"),
        Case("long-quantity.yaml", _sub("rated_power: 7.5 kW", "rated_power: 7.5 " + "k" * 10_000 + "W"),
             ("longer",), "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("long-tag.yaml", _sub("tag: CV-210", "tag: CV-" + "9" * 50_000), ("expected form",), "spec-schema", 2),
        Case("float-overflow-quantity.yaml", _sub("rated_power: 7.5 kW", "rated_power: 1e400 kW"), ("rated_power",),
             "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("float-overflow-number.yaml", _sub("ratio: 23.8", "ratio: 1e400"), ("ratio",), None,
             _line_of(CONVEYOR, "ratio: 23.8")),
        Case("float-overflow-dotted.yaml", _sub("ratio: 23.8", "ratio: 1.0e+400"), ("not a finite number",),
             "spec-schema", _line_of(CONVEYOR, "ratio: 23.8")),
        Case("int-5000-digits.yaml", _sub("ratio: 23.8", "ratio: " + "3" * 5000), ("cannot read value",),
             "yaml-syntax", _line_of(CONVEYOR, "ratio: 23.8")),
        Case("huge-int-poles.yaml", _sub("poles: 4", "poles: " + "9" * 400), ("poles",), "spec-schema",
             _line_of(CONVEYOR, "poles: 4")),
        Case("huge-int-ratio.yaml", _sub("ratio: 23.8", "ratio: " + "7" * 400), ("ratio",), None,
             _line_of(CONVEYOR, "ratio: 23.8")),
        Case("huge-int-quantity.yaml", _sub("rated_power: 7.5 kW", "rated_power: " + "7" * 400 + " kW"),
             ("rated_power",), "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("nan-ratio.yaml", _sub("ratio: 23.8", "ratio: .nan"), ("ratio",), None, _line_of(CONVEYOR, "ratio: 23.8")),
        Case("inf-ratio.yaml", _sub("ratio: 23.8", "ratio: .inf"), ("ratio",), None, _line_of(CONVEYOR, "ratio: 23.8")),
        Case("nan-quantity.yaml", _sub("rated_power: 7.5 kW", "rated_power: nan kW"), ("rated_power",),
             "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("inf-quantity.yaml", _sub("rated_power: 7.5 kW", "rated_power: inf kW"), ("rated_power",),
             "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("nan-efficiency.yaml", _sub("efficiency: 89.6 %", "efficiency: .nan"), ("efficiency",),
             "units-and-dimensions", _line_of(CONVEYOR, "efficiency: 89.6 %")),
        Case("inf-efficiency.yaml", _sub("efficiency: 89.6 %", "efficiency: -.inf"), ("efficiency",),
             "units-and-dimensions", _line_of(CONVEYOR, "efficiency: 89.6 %")),
        Case("poles-zero.yaml", _sub("poles: 4", "poles: 0"), ("poles",), "spec-schema",
             _line_of(CONVEYOR, "poles: 4")),
        Case("poles-negative.yaml", _sub("poles: 4", "poles: -4"), ("poles",), "spec-schema",
             _line_of(CONVEYOR, "poles: 4")),
        Case("poles-float.yaml", _sub("poles: 4", "poles: 4.5"), ("poles",), "spec-schema",
             _line_of(CONVEYOR, "poles: 4")),
        Case("ratio-zero.yaml", _sub("ratio: 23.8", "ratio: 0"), ("ratio",), "spec-schema",
             _line_of(CONVEYOR, "ratio: 23.8")),
        Case("ratio-negative.yaml", _sub("ratio: 23.8", "ratio: -23.8"), ("ratio",), "spec-schema",
             _line_of(CONVEYOR, "ratio: 23.8")),
        Case("efficiency-over.yaml", _sub("efficiency: 89.6 %", "efficiency: 112 %"), ("100 %",), "spec-schema",
             _line_of(CONVEYOR, "efficiency: 89.6 %")),
        Case("efficiency-bare-percent.yaml", _sub("efficiency: 89.6 %", "efficiency: 89.6"), ("100 %",),
             "spec-schema", _line_of(CONVEYOR, "efficiency: 89.6 %")),
        Case("efficiency-zero.yaml", _sub("efficiency: 89.6 %", "efficiency: 0 %"), ("efficiency",), "spec-schema",
             _line_of(CONVEYOR, "efficiency: 89.6 %")),
        Case("power-factor-over.yaml", _sub("power_factor: 0.82", "power_factor: 1.4"), ("100 %",), "spec-schema",
             _line_of(CONVEYOR, "power_factor")),
        Case("power-negative.yaml", _sub("rated_power: 7.5 kW", "rated_power: -7.5 kW"), ("greater than zero",),
             "spec-schema", _line_of(CONVEYOR, "rated_power")),
        Case("power-zero.yaml", _sub("rated_power: 7.5 kW", "rated_power: 0 kW"), ("greater than zero",),
             "spec-schema", _line_of(CONVEYOR, "rated_power")),
        Case("speed-negative.yaml", _sub("rated_speed: 1455 r/min", "rated_speed: -1455 r/min"), ("greater than zero",),
             "spec-schema", _line_of(CONVEYOR, "rated_speed")),
        Case("unit-power-tower.yaml", _sub("rated_power: 7.5 kW", "rated_power: 9**9**9 kW"), ("rated_power",),
             "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("unit-exponent-chain.yaml", _sub("rated_power: 7.5 kW", "rated_power: 7.5 kW" + "**9" * 30),
             ("rated_power",), "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("unit-caret-chain.yaml", _sub("inertia: 0.029 kg*m^2", "inertia: 0.029 kg*m^2^2^2^2^2^2^2"),
             ("inertia",), "units-and-dimensions", _line_of(CONVEYOR, "inertia: 0.029")),
        Case("unit-parentheses.yaml", _sub("rated_torque: 49.2 N*m", "rated_torque: 49.2 " + "(" * 38 + "N*m" +
                                           ")" * 38), ("rated_torque",), "units-and-dimensions",
             _line_of(CONVEYOR, "rated_torque")),
        Case("unit-parentheses-unbalanced.yaml", _sub("rated_torque: 49.2 N*m", "rated_torque: 49.2 ((N*m)"),
             ("rated_torque",), "units-and-dimensions", _line_of(CONVEYOR, "rated_torque")),
        Case("unit-10k-chars.yaml", _sub("rated_torque: 49.2 N*m", "rated_torque: 49.2 " + "N*" * 5000 + "m"),
             ("rated_torque",), "units-and-dimensions", _line_of(CONVEYOR, "rated_torque")),
        Case("unit-10k-parentheses.yaml", _sub("rated_torque: 49.2 N*m", "rated_torque: '49.2 " + "(" * 5000 + "N*m" +
                                               ")" * 5000 + "'"), ("rated_torque",), "units-and-dimensions",
             _line_of(CONVEYOR, "rated_torque")),
        Case("unit-unknown.yaml", _sub("rated_power: 7.5 kW", "rated_power: 7.5 kWz"), ("unknown unit",),
             "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("unit-python-code.yaml", _sub("rated_power: 7.5 kW", "rated_power: \"7.5 __import__('os')\""),
             ("rated_power",), "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("unit-wrong-dimension.yaml", _sub("rated_power: 7.5 kW", "rated_power: 49 N*m"), ("power",),
             "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("speed-in-hertz.yaml", _sub("rated_speed: 1455 r/min", "rated_speed: 50 Hz"), ("shaft speed",),
             "units-and-dimensions", _line_of(CONVEYOR, "rated_speed")),
        Case("torque-in-joule.yaml", _sub("rated_torque: 49.2 N*m", "rated_torque: 49.2 J"), ("energy",),
             "units-and-dimensions", _line_of(CONVEYOR, "rated_torque")),
        Case("bare-number.yaml", _sub("rated_power: 7.5 kW", "rated_power: 7.5"), ("rated_power",),
             "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("decimal-comma.yaml", _sub("rated_power: 7.5 kW", "rated_power: 7,5 kW"), ("decimal comma",),
             "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        # issue 20 point 2: '7 5 kW' is neither SI digit groups (threes) nor a unit: refused, never read as 7 × 5 kW
        Case("digit-group-not-three.yaml", _sub("rated_power: 7.5 kW", "rated_power: 7 5 kW"),
             ("digit groups",), "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("digit-group-thin-space.yaml", _sub("rated_power: 7.5 kW", "rated_power: 1\u2009 10 kW"),
             ("digit groups",), "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("unit-scale-factor.yaml", _sub("rated_power: 7.5 kW", "rated_power: 7.5 (10 W)"),
             ("scale factor",), "units-and-dimensions", _line_of(CONVEYOR, "rated_power")),
        Case("yaml11-bool.yaml", _sub("status: for-review", "status: yes"), ("quotes",), "spec-schema", 4),
        Case("yaml11-norway.yaml", _sub("ingress_required: IP54", "ingress_required: NO"), ("ingress_required",),
             "spec-schema", _line_of(CONVEYOR, "ingress_required")),
        Case("yaml11-base60.yaml", _sub("rated_speed: 1455 r/min", "rated_speed: 24:15"), ("base-60",),
             "units-and-dimensions", _line_of(CONVEYOR, "rated_speed")),
        Case("yaml11-octal.yaml", _sub("tag: CV-210", "tag: 0210"), ("tag",), "spec-schema", 2),
        Case("yaml-null.yaml", _sub("rated_power: 7.5 kW", "rated_power: ~"), ("rated_power",), None,
             _line_of(CONVEYOR, "rated_power")),
        Case("section-is-list.yaml", _sub("environment:\n  ambient_max: 45 degC\n  altitude: 1800 m\n"
                                          "  ingress_required: IP54\n", "environment: [45 degC, 1800 m]\n"),
             ("environment",), "spec-schema"),
        Case("section-is-text.yaml", _sub("load:\n  model: quadratic\n  torque_at_speed_max: 44 N*m\n"
                                          "  speed_max: 2900 r/min\n", "load: a pump\n", PUMP),
             ("load",), "spec-schema"),
        Case("format-2.yaml", _sub("format: 1", "format: 2"), ("format",), "spec-schema", 1),
        Case("no-motor.yaml", PUMP.split("motor:")[0].encode(), ("motor",), "spec-schema"),
        Case("truncated-mid-flow.yaml", CONVEYOR[: CONVEYOR.index("speed_to: 61") + 5].encode(), ("yaml",),
             "yaml-syntax"),
    ]
    cases.extend(_enum_misspellings())
    return cases


def truncations(text: str = CONVEYOR, step: int = 7) -> Iterator[tuple[int, bytes]]:
    """Yield (offset, prefix) for the spec cut at every ``step``-th byte (UTF-8 bytes, so cuts may split a char)."""
    data = text.encode("utf-8")
    for cut in range(0, len(data), step):
        yield cut, data[:cut]


def huge_file(limit: int = 1_048_576) -> bytes:
    """Return a spec just over the size limit (a valid start, then note lines)."""
    lines = [CONVEYOR]
    size = len(CONVEYOR)
    i = 0
    while size <= limit:
        line = f"x-note-{i}: {'filler text ' * 6}\n"
        lines.append(line)
        size += len(line)
        i += 1
    return "".join(lines).encode()
