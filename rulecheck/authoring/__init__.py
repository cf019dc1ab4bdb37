"""Writing specs: ``rulecheck new`` (a template per motor kind, starter and load) and ``rulecheck import``
(a plant motor list to spec files).

The command line only calls :func:`add_commands` and dispatches through :data:`COMMANDS`; everything
else lives here. Exit codes follow the command line's: 0 done, 2 usage errors and bad input (a bad
option, an unusable mapping or list, a row that could not be imported).
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import Any

__all__ = ["COMMANDS", "add_commands"]

from rulecheck.authoring.words import LOADS, MOTORS, STARTERS
from rulecheck.files import write_atomic


def _loads() -> tuple[str, ...]:
    return tuple(LOADS)


def add_commands(sub: Any) -> None:
    """Add the ``new`` and ``import`` subcommands to the command line's subparsers."""
    new = sub.add_parser("new", help="write a spec template for a motor kind, starter and load",
                         description="Write a commented spec for one drive train with every field the rules read "
                                     "for it, each with its unit and an example value as a placeholder. A spec that "
                                     "still holds a placeholder does not pass validation: replace each one.")
    new.add_argument("--motor", required=True, choices=tuple(MOTORS),
                     help="motor kind: induction, pm (permanent-magnet synchronous) or dc")
    new.add_argument("--starter", required=True, choices=tuple(STARTERS),
                     help="what feeds the motor: inverter, dol (direct on line), soft-starter or dc-converter")
    new.add_argument("--load", required=True, choices=_loads(), metavar="LOAD",
                     help="the driven machine: " + ", ".join(_loads()))
    new.add_argument("--output", "-o", metavar="FILE", help="write the template to FILE (default: standard output)")
    new.add_argument("--force", action="store_true", help="overwrite FILE if it exists")

    imp = sub.add_parser("import", help="turn a motor list (CSV or XLSX) into spec files",
                         description="Turn each row of a motor list into a spec file named after its tag. A mapping "
                                     "file says which column feeds which spec field and in which unit. A row with a "
                                     "bad cell writes nothing; the other rows are still written.")
    imp.add_argument("list", metavar="LIST", help="the motor list: a .csv or .xlsx file, one row per drive")
    imp.add_argument("--map", required=True, metavar="MAP.yaml",
                     help="mapping file: column headings to spec fields and units, defaults per field")
    imp.add_argument("--output", "-o", required=True, metavar="DIR", help="folder to write the spec files to")
    imp.add_argument("--force", action="store_true", help="overwrite spec files that exist")
    imp.add_argument("--dry-run", action="store_true", help="check every row and report, but write nothing")


def _write_text(path: str, text: str, force: bool) -> None:
    target = Path(path)
    if target.exists() and not force:
        raise OSError(f"{path} exists; use --force to overwrite it")
    write_atomic(target, text.encode("utf-8"))


def cmd_new(args: argparse.Namespace) -> int:
    """``rulecheck new``: write a template."""
    from rulecheck.authoring.fields import Choice
    from rulecheck.authoring.templates import write_template

    problem = Choice(args.motor, args.starter, args.load).problem()
    if problem:
        print(f"rulecheck: --motor {args.motor} --starter {args.starter}: {problem}", file=sys.stderr)
        return 2
    template = write_template(args.motor, args.starter, args.load)
    if not args.output or args.output == "-":
        sys.stdout.write(template.text)
        return 0
    try:
        _write_text(args.output, template.text, args.force)
    except OSError as exc:
        print(f"rulecheck: cannot write {args.output}: {exc.strerror or exc}", file=sys.stderr)
        return 2
    print(f"rulecheck: wrote {args.output}: {len(template.placeholders)} values to fill in "
          f"({len(template.optional)} more optional ones are commented out)", file=sys.stderr)
    return 0


def cmd_import(args: argparse.Namespace) -> int:
    """``rulecheck import``: write one spec per row of a motor list."""
    from rulecheck.authoring.importer import ImportError_, import_rows, read_mapping, write_rows

    try:
        mapping = read_mapping(args.map)
        results = import_rows(args.list, mapping)
        written = [] if args.dry_run else write_rows(results, args.output, args.force)
    except ImportError_ as exc:
        print(f"rulecheck: {exc}", file=sys.stderr)
        return 2
    failed = [r for r in results if r.errors]
    for result in failed:
        for error in result.errors:
            print(f"rulecheck: {error}", file=sys.stderr)
    valid = sum(1 for r in results if r.text is not None)
    what = (f"{len(written)} spec file{'s' if len(written) != 1 else ''} written to {args.output}"
            if not args.dry_run else f"{valid} rows valid")
    print(f"rulecheck: {len(results)} rows: {what}, {len(failed)} rows not imported", file=sys.stderr)
    return 2 if failed else 0


COMMANDS = {"new": cmd_new, "import": cmd_import}
