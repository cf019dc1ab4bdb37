"""Hostile rule files: a valid base rule, and variants that try to escape the sandbox, exhaust the machine or
slip a dimensional mistake past review. Each variant is (name, rule-file text, words its error must contain)."""

from __future__ import annotations

BASE = """\
id: {id}
title: Rated power, torque and speed agree
topic: data-integrity
severity: error
description: The nameplate's rated power must equal rated torque times rated angular speed.
basis:
  - {{source: "P = T·ω", status: P}}
parameters:
  deviation_error: {{default: "5 %", kind: fraction, description: "Deviation above which it fails"}}
applies_when: "motor.rated_torque is defined and motor.rated_power is defined and motor.rated_speed is defined"
values:
  from_power: {{expr: "motor.rated_power / motor.rated_speed", kind: torque}}
  deviation: {{expr: "{value}", kind: fraction}}
location: motor.rated_torque
checks:
  - when: "{when}"
    severity: error
message: "{message}"
fix: "check the nameplate: the torque is {{{{ from_power }}}}"
examples:
  - name: torque of another frame
    outcome: fail
    spec:
      motor: {{kind: induction, rated_power: 7.5 kW, rated_speed: 1455 r/min, rated_torque: 59.07 N*m}}
  - name: consistent
    outcome: pass
    spec:
      motor: {{kind: induction, rated_power: 7.5 kW, rated_speed: 1455 r/min, rated_torque: 49.2 N*m}}
"""

GOOD_VALUE = "abs(motor.rated_power - motor.rated_torque * motor.rated_speed) / motor.rated_power"
GOOD_WHEN = "deviation > deviation_error"
GOOD_MESSAGE = "rated torque disagrees with P / n = {{ from_power }} (deviation {{ deviation }})"


def rule(rule_id: str = "hostile-rule", value: str = GOOD_VALUE, when: str = GOOD_WHEN,
         message: str = GOOD_MESSAGE) -> str:
    """Return the base rule's text with one expression or template replaced (YAML double-quoted strings)."""
    def q(text: str) -> str:
        return text.replace("\\", "\\\\").replace('"', '\\"')
    return BASE.format(id=rule_id, value=q(value), when=q(when), message=q(message))


EXPRESSIONS = {
    "import": "__import__('os').system('echo pwned')",
    "mro": "motor.__class__.__mro__[1].__subclasses__()",
    "self": "self._TemplateReference__context",
    "lipsum": "lipsum.__globals__['os'].popen('id').read()",
    "lipsum-plain": "lipsum",
    "cycler": "cycler.__init__.__globals__.os",
    "cycler-plain": "cycler",
    "joiner": "joiner",
    "namespace": "namespace(a=1)",
    "range": "range(10**9) | length",
    "range-plain": "range(3)",
    "string-repeat": "'a' * 10**9",
    "list-repeat": "[0] * 10**9",
    "tuple-repeat": "(1,) * 999999999",
    "power-tower": "10 ** 10 ** 10",
    "big-power": "9 ** 999999",
    "string-format": "'{0.__class__}'.format(motor)",
    "percent-format": "'%s' % motor",
    "format-filter": "motor | string",
    "attr-filter": "motor | attr('_values')",
    "map-filter": "[motor] | map(attribute='_values') | list",
    "section-private": "motor._values",
    "section-getitem": "motor['_values']",
    "string-method": "'abc'.upper()",
    "string-attribute": "'abc'.__len__",
    "list-method": "[1, 2].pop()",
    "dict-literal": "{'a': 1}.items()",
    "method-attribute": "sqrt.__globals__",
    "recursion": "(" * 300 + "1" + ")" * 300,
    "long-expression": " + ".join(["motor.rated_power"] * 200),
    "concat": "'a' ~ 'b'",
    "torque-vs-speed": "motor.rated_torque > motor.rated_speed",
    "volt-plus-amp": "motor.rated_voltage + motor.rated_current",
    "misspelt-path": "motor.rated_torqe / motor.rated_torque",
    "unknown-section": "gearbox.ratio",
    "unknown-name": "os.system",
}


def growing_rule(join: str, levels: int = 24) -> str:
    """Return the base rule with values that each double the text of the one before (``join``: how two are
    joined, e.g. ``"{a} ~ {a}"``), and a message that shows the last: 2**levels times a 500-character text."""
    lines = ["  t0: {expr: \"'" + "x" * 500 + "'\", kind: flag}"]
    for n in range(1, levels + 1):
        lines.append(f"  t{n}: {{expr: \"" + join.format(a=f"t{n - 1}") + "\", kind: flag}")
    text = rule(message="{{ t" + str(levels) + " }} {{ from_power }}")
    return text.replace("values:\n", "values:\n" + "\n".join(lines) + "\n", 1)


GROWING = {
    "grow-concat": "{a} ~ {a}",
    "grow-plus": "{a} + {a}",
    "grow-join": "[{a}, {a}] | join",
    "grow-list": "[{a}] + [{a}]",
    "grow-format": "'%s%s' | format({a}, {a})",
    "grow-replace": "{a} | replace('x', 'xx')",
}
