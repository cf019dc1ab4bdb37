"""Pure engineering methods on SI floats, one module per topic.

Importing this package registers every method in :data:`METHODS`.
"""

from rulecheck.physics import dynamics, loads, machines, power_electronics, supply, transmission
from rulecheck.physics._method import METHODS, MethodInfo, call_with_quantities, method

__all__ = [
    "METHODS",
    "MethodInfo",
    "call_with_quantities",
    "dynamics",
    "loads",
    "machines",
    "method",
    "power_electronics",
    "supply",
    "transmission",
]
