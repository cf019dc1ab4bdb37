"""rulecheck: design-rule checks for electric drive-train specifications."""

__version__ = "0.1.0"
