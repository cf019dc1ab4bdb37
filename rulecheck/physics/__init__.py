"""Pure engineering methods on SI floats, one module per topic.

Importing this package registers every method in :data:`METHODS`.
"""

from rulecheck.physics._method import METHODS, MethodInfo, call_with_quantities, method

__all__ = ["METHODS", "MethodInfo", "call_with_quantities", "method"]
