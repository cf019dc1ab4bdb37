"""The command line: ``rulecheck check | rules | schema | mail``.

Exit codes: 0 nothing at or above the fail level; 1 findings at or above it
(including specs that do not load); 2 usage errors (bad options, missing paths,
unusable configuration or rule files); 130 interrupted.
"""

from __future__ import annotations

import argparse
import datetime as _dt
import difflib
import os
import sys
import tempfile
from pathlib import Path
from typing import Any, NoReturn, Sequence

from rulecheck import __version__

FORMATS = ("text", "json", "sarif", "junit", "markdown", "html", "annotations")

__all__ = ["main"]


class _Parser(argparse.ArgumentParser):
    """argparse with suggestions for mistyped options and commands."""

    def error(self, message: str) -> NoReturn:
        hint = ""
        if "unrecognized arguments:" in message or "invalid choice:" in message:
            words = message.split(":", 1)[1].replace("'", " ").replace("(", " ").split()
            options = [o for a in self._actions for o in a.option_strings]
            choices = [c for a in self._actions if isinstance(a.choices, dict) for c in a.choices]
            for word in words:
                pool = options if word.startswith("-") else choices
                close = difflib.get_close_matches(word.split("=")[0], pool, n=1)
                if close:
                    hint = f"\ndid you mean '{close[0]}'?"
                    break
        self.print_usage(sys.stderr)
        self.exit(2, f"{self.prog}: error: {message}{hint}\n")


def _parser() -> _Parser:
    parser = _Parser(prog="rulecheck", description="Design-rule checks for electric drive-train specifications.",
                     epilog="A screening aid: local codes and the authority having jurisdiction govern; "
                            "safety-relevant designs need licensed review.")
    parser.add_argument("--version", action="version", version=f"rulecheck {__version__}")
    sub = parser.add_subparsers(dest="command", parser_class=_Parser, metavar="COMMAND")

    check = sub.add_parser("check", help="check spec files and folders", description="Check drive specifications.")
    check.add_argument("paths", nargs="+", metavar="PATH", help="spec files or folders (searched for *.yaml, *.yml)")
    check.add_argument("--format", "-f", choices=FORMATS, default=None,
                       help="output format (default: text, or annotations when a CI runner is detected)")
    check.add_argument("--output", "-o", metavar="FILE", help="write the report to FILE (written atomically)")
    check.add_argument("--fail-on", choices=("error", "warning", "info"), default=None,
                       help="lowest severity that makes the exit code 1 (default: error)")
    check.add_argument("--config", metavar="FILE", help="configuration file (default: found by walking up)")
    check.add_argument("--rules", dest="rule_paths", action="append", default=[], metavar="DIR",
                       help="an extra folder of rule files (may be repeated)")
    check.add_argument("--units", choices=("si", "customary"), default=None, help="how values are shown")
    check.add_argument("--show-derived", action="store_true", help="list derived values with their provenance")
    check.add_argument("--verbose", "-v", action="store_true", help="also show passes, waivers and all not-checked")
    check.add_argument("--no-color", action="store_true", help="never colour the output")
    check.add_argument("--no-charts", action="store_true", help="leave charts out of the HTML report")
    check.add_argument("--today", metavar="YYYY-MM-DD", help="date for waiver expiry (default: today)")

    rules = sub.add_parser("rules", help="list, show or lint rules", description="List, show or lint rules.")
    rules.add_argument("action", nargs="?", choices=("list", "show", "lint"), default="list")
    rules.add_argument("target", nargs="?", help="rule id (show) or folder (lint)")
    rules.add_argument("--rules", dest="rule_paths", action="append", default=[], metavar="DIR",
                       help="an extra folder of rule files")

    schema = sub.add_parser("schema", help="print a JSON Schema", description="Print a JSON Schema.")
    schema.add_argument("which", nargs="?", choices=("spec", "result", "rule"), default="spec")
    return parser


def _write(path: str | None, text: str | bytes) -> None:
    """Write a report to ``path`` atomically (temporary file, then rename), or to standard output."""
    if path is None or path == "-":
        if isinstance(text, bytes):
            sys.stdout.buffer.write(text)
        else:
            sys.stdout.write(text)
        sys.stdout.flush()
        return
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    data = text.encode("utf-8") if isinstance(text, str) else text
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


def _colour(args: argparse.Namespace) -> bool:
    return (not args.no_color and "NO_COLOR" not in os.environ and sys.stdout.isatty()
            and args.output in (None, "-"))


def _rule_metadata(result: dict[str, Any]) -> list[dict[str, Any]]:
    from rulecheck.check import BUILTIN_RULES
    from rulecheck.engine.ruleset import load_rules, shipped_rules_dir

    ruleset, _errors = load_rules([shipped_rules_dir()])
    meta = [{"id": k, **v} for k, v in BUILTIN_RULES.items()]
    meta += [r.metadata() for r in ruleset.rules.values()]
    return meta


def render(result: dict[str, Any], fmt: str, args: argparse.Namespace) -> str:
    """Return the report of ``result`` in ``fmt``."""
    units = result["settings"]["units"]
    if fmt == "json":
        from rulecheck.report import jsonout

        return jsonout.render(result)
    if fmt == "sarif":
        from rulecheck.report import sarif

        return sarif.render(result, rules=_rule_metadata(result))
    if fmt == "junit":
        from rulecheck.report import junit

        return junit.render(result)
    if fmt == "markdown":
        from rulecheck.report import markdown

        return markdown.render(result, units=units)
    if fmt == "html":
        from rulecheck.report import html

        return html.render(result, units=units, charts=not getattr(args, "no_charts", False))
    if fmt == "annotations":
        from rulecheck.report import annotations

        return annotations.render(result, min_severity="warning")
    from rulecheck.report import text

    return text.render(result, colour=_colour(args), verbose=args.verbose, show_derived=args.show_derived)


def _cmd_check(args: argparse.Namespace) -> int:
    from rulecheck.runner import RunOptions, UsageError, run

    today = None
    if args.today:
        try:
            today = _dt.date.fromisoformat(args.today)
        except ValueError:
            print(f"rulecheck: --today: '{args.today}' is not a date (YYYY-MM-DD)", file=sys.stderr)
            return 2
    fmt = args.format
    if fmt is None:
        from rulecheck.report.annotations import detect_ci_annotations

        fmt = "annotations" if detect_ci_annotations(os.environ) and not args.output else "text"
    options = RunOptions(paths=args.paths, config=args.config, rule_paths=args.rule_paths, fail_on=args.fail_on,
                         units=args.units, today=today)
    try:
        result = run(options)
    except UsageError as exc:
        print(f"rulecheck: {exc}", file=sys.stderr)
        return 2
    output = render(result, fmt, args)
    try:
        _write(args.output, output)
    except OSError as exc:
        print(f"rulecheck: cannot write {args.output}: {exc.strerror or exc}", file=sys.stderr)
        return 2
    if args.output and fmt != "text":
        # a file report still leaves a one-line summary on the terminal
        s = result["summary"]
        print(f"rulecheck: wrote {args.output}: {s['specs']} specs, {s['fail']['error']} errors, "
              f"{s['fail']['warning']} warnings, {s['not-checked']} not checked", file=sys.stderr)
    return int(result["summary"]["exit_code"])


def _cmd_rules(args: argparse.Namespace) -> int:
    from rulecheck.rules_cmd import lint_folder, list_rules, show_rule

    if args.action == "list":
        return list_rules(args.rule_paths)
    if args.action == "show":
        if not args.target:
            print("rulecheck: rules show needs a rule id", file=sys.stderr)
            return 2
        return show_rule(args.target, args.rule_paths)
    if not args.target:
        print("rulecheck: rules lint needs a folder", file=sys.stderr)
        return 2
    return lint_folder(args.target)


def _cmd_schema(args: argparse.Namespace) -> int:
    import json

    if args.which == "spec":
        from rulecheck.schema import schema_json

        sys.stdout.write(schema_json())
    elif args.which == "result":
        from rulecheck.report import jsonout

        sys.stdout.write(json.dumps(jsonout.schema(), indent=2, ensure_ascii=False) + "\n")
    else:
        from importlib import resources

        import yaml

        text = resources.files("rulecheck").joinpath("schemas/rule.schema.yaml").read_text(encoding="utf-8")
        sys.stdout.write(json.dumps(yaml.safe_load(text), indent=2, ensure_ascii=False) + "\n")
    return 0


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit code."""
    parser = _parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return 2
    try:
        if args.command == "check":
            return _cmd_check(args)
        if args.command == "rules":
            return _cmd_rules(args)
        return _cmd_schema(args)
    except KeyboardInterrupt:
        print("rulecheck: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return 1


def entry() -> None:
    """Console-script entry point."""
    sys.exit(main())


if __name__ == "__main__":  # pragma: no cover
    entry()
