"""The command line: ``rulecheck check | baseline | mail | rules | schema | completion | new | import``.

Exit codes: 0 nothing at or above the fail level (findings a baseline knows do not count); 1 findings at or
above it (including specs that do not load); 2 usage errors (bad options, missing paths, a PATH without spec
files unless --allow-empty, an unknown git revision or no repository for --changed-since, unusable
configuration or rule files, and any other fault, with its reason); 130 interrupted; 143 terminated
(SIGTERM); 141 the reader of standard output went away (a pipe into ``head``), as other command-line tools do.

Under GitHub Actions (GITHUB_ACTIONS=true) ``check`` writes annotation lines to standard output (unless a
format or output file is given), a one-line summary to standard error and a Markdown summary appended to
$GITHUB_STEP_SUMMARY. Machine-readable reports and baselines name specs relative to the repository root.
"""

from __future__ import annotations

import argparse
import datetime as _dt
import difflib
import os
import signal
import sys
import tempfile
import threading
from collections.abc import Iterator, Mapping, Sequence
from contextlib import contextmanager
from pathlib import Path
from typing import Any, NoReturn

from rulecheck import __version__, authoring
from rulecheck.files import READ_CAP, publish, temporary_beside, write_all, write_atomic
from rulecheck.result import with_charts

FORMATS = ("text", "json", "sarif", "junit", "markdown", "html", "annotations", "pdf")

__all__ = ["main"]


class _Parser(argparse.ArgumentParser):
    """argparse with suggestions for mistyped options and commands."""

    def error(self, message: str) -> NoReturn:
        hint = ""
        if "unrecognized arguments:" in message or "invalid choice:" in message:
            words = message.split(":", 1)[1].replace("'", " ").replace("(", " ").split()
            options = [o for a in self._actions for o in a.option_strings]
            choices = [c for a in self._actions if isinstance(a.choices, dict) for c in a.choices]
            for action in self._actions:  # the options of every command, for a mistyped one after the command
                if isinstance(action.choices, dict):
                    for sub in action.choices.values():
                        options += [o for a in sub._actions for o in a.option_strings]
            for word in words:
                pool = options if word.startswith("-") else choices
                close = difflib.get_close_matches(word.split("=")[0], pool, n=1)
                if close:
                    hint = f"\ndid you mean '{close[0]}'?"
                    break
        self.print_usage(sys.stderr)
        self.exit(2, f"{self.prog}: error: {message}{hint}\n")


FAIL_ON = ("error", "warning", "info")
_FORMAT_HELP = "one of " + ", ".join(FORMATS)


def _parser() -> _Parser:
    parser = _Parser(prog="rulecheck", description="Design-rule checks for electric drive-train specifications.",
                     epilog="A screening aid: local codes and the authority having jurisdiction govern; "
                            "safety-relevant designs need licensed review.")
    parser.add_argument("--version", action="version", version=f"rulecheck {__version__}")
    sub = parser.add_subparsers(dest="command", parser_class=_Parser, metavar="COMMAND")
    _check_command(sub)
    _baseline_command(sub)
    _mail_command(sub)
    _rules_command(sub)
    schema = sub.add_parser("schema", help="print a JSON Schema",
                            description="Print a JSON Schema: the spec format (the file shipped as "
                                        "rulecheck/schemas/spec.schema.json, for editors), the JSON result or a "
                                        "rule file.")
    schema.add_argument("which", nargs="?", choices=("spec", "result", "rule"), default="spec",
                        help="which schema (default: spec)")
    schema.add_argument("--markdown", action="store_true", help="the spec format as a Markdown reference")
    completion = sub.add_parser("completion", help="print a shell completion script",
                                description="Print a completion script for a shell, e.g. "
                                            "'rulecheck completion bash > ~/.local/share/bash-completion/"
                                            "completions/rulecheck'.")
    completion.add_argument("shell", choices=("bash", "zsh", "tcsh"), help="the shell: bash, zsh or tcsh")
    authoring.add_commands(sub)  # new, import
    return parser


def _run_options(parser: argparse.ArgumentParser, *, fail_on: bool = True) -> None:
    """Add the options every command that checks specs shares: configuration, rules, date, speed."""
    parser.add_argument("paths", nargs="+", metavar="PATH",
                        help="spec files or folders (folders are searched for *.yaml, *.yml); '-' reads one spec "
                             "from standard input")
    parser.add_argument("--config", metavar="FILE", help="configuration file (default: found by walking up)")
    parser.add_argument("--rules", dest="rule_paths", action="append", default=[], metavar="DIR",
                        help="an extra folder of rule files (may be repeated)")
    parser.add_argument("--today", metavar="YYYY-MM-DD", help="date for waiver expiry (default: today)")
    if fail_on:
        parser.add_argument("--fail-on", choices=FAIL_ON, default=None, metavar="LEVEL",
                            help="lowest severity that makes the exit code 1: error, warning or info "
                                 "(default: error, or the configuration's)")
    parser.add_argument("--allow-empty", action="store_true",
                        help="a PATH without spec files is not an error (exit 0 with nothing checked)")
    parser.add_argument("--root", metavar="DIR",
                        help="the folder paths in machine-readable reports are relative to (default: the git "
                             "top level, else the current folder)")
    parser.add_argument("--quiet", "-q", action="store_true",
                        help="print findings and errors only (no summary or progress lines)")
    _speed_options(parser)


def _check_command(sub: Any) -> None:
    check = sub.add_parser("check", help="check spec files and folders", description="Check drive specifications.")
    _run_options(check)
    check.add_argument("--format", "-f", choices=FORMATS, default=None, metavar="FORMAT",
                       help=f"output format, {_FORMAT_HELP} (default: text; annotations under GitHub Actions)")
    check.add_argument("--output", "-o", metavar="FILE", help="write the report to FILE (written atomically)")
    check.add_argument("--units", choices=("si", "customary"), default=None, help="how values are shown")
    check.add_argument("--show-derived", action="store_true", help="list derived values with their provenance")
    check.add_argument("--verbose", "-v", action="store_true", help="also show passes, waivers and all not-checked")
    _colour_options(check)
    check.add_argument("--no-charts", action="store_true", help="leave charts out of the HTML report")
    check.add_argument("--report", action="append", default=[], metavar="FORMAT=FILE",
                       help="also write a report in FORMAT to FILE (may be repeated), e.g. sarif=out.sarif")
    check.add_argument("--baseline", metavar="FILE",
                       help="findings recorded in FILE are reported as known and do not fail the run")
    check.add_argument("--changed-since", metavar="REV",
                       help="check only specs changed since git revision REV (all, if rules or configuration changed)")
    _report_page_options(check)
    check.add_argument("--map", metavar="MAP",
                       help="check the rows of motor lists (PATH: a .csv or .xlsx file) as specs, through this mapping "
                            "of column headings to spec fields (as 'rulecheck import' reads it); findings name row "
                            "and column")
    check.add_argument("--set", dest="overrides", action="append", default=[], metavar="PATH=VALUE",
                       help="give a field another value for this run only, validated as in a spec (may be repeated), "
                            "e.g. --set motor.rated_power='55 kW'; the report lists the values overridden")


def _colour_options(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--color", "--colour", dest="color", choices=("auto", "always", "never"), default="auto",
                        metavar="WHEN",
                        help="colour the text report: auto (default: on a terminal, unless NO_COLOR is set or "
                             "TERM=dumb; FORCE_COLOR turns it on), always or never")
    parser.add_argument("--no-color", dest="color", action="store_const", const="never",
                        help="same as --color=never")


def _baseline_command(sub: Any) -> None:
    baseline = sub.add_parser("baseline", help="record the current findings in a baseline file",
                              description="Write the current findings of specs to a baseline file, or update or "
                                          "prune an existing one. A finding is known by its rule, file and spec "
                                          "key (not its line).")
    _run_options(baseline, fail_on=False)
    baseline.add_argument("--output", "-o", metavar="FILE", default=".rulecheck-baseline.json",
                          help="baseline file to write (default: .rulecheck-baseline.json)")
    mode = baseline.add_mutually_exclusive_group()
    mode.add_argument("--update", action="store_true",
                      help="rewrite FILE with the current findings of the specs checked; entries of specs not "
                           "checked now are kept")
    mode.add_argument("--prune", action="store_true",
                      help="remove from FILE the findings that no longer occur (fixed ones); add nothing new")


def _mail_command(sub: Any) -> None:
    mail = sub.add_parser("mail", help="write or send the findings report as an e-mail",
                          description="Write the findings report as an e-mail (.eml) or send it over SMTP. "
                                      "SMTP settings come from RULECHECK_SMTP_HOST, RULECHECK_SMTP_PORT, "
                                      "RULECHECK_SMTP_SECURITY (starttls|tls|none), RULECHECK_SMTP_USER and "
                                      "RULECHECK_SMTP_PASSWORD, never from a spec file.")
    _run_options(mail)
    mail.add_argument("--to", action="append", required=True, metavar="ADDRESS", help="recipient (may be repeated)")
    mail.add_argument("--from", dest="sender", default=os.environ.get("RULECHECK_MAIL_FROM", "rulecheck@localhost"),
                      metavar="ADDRESS", help="sender (default: RULECHECK_MAIL_FROM or rulecheck@localhost)")
    mail.add_argument("--subject", help="subject line (default: a summary of the verdicts)")
    mail.add_argument("--eml", metavar="FILE", help="write the message to FILE")
    mail.add_argument("--html", metavar="FILE", help="also write the HTML report to FILE (before anything is sent)")
    mail.add_argument("--send", action="store_true", help="send the message over SMTP")
    mail.add_argument("--dry-run", action="store_true", help="show what would be sent, without connecting")
    mail.add_argument("--units", choices=("si", "customary"), default=None, help="how values are shown")
    _report_page_options(mail)
    _mail_size_options(mail)


def _rules_command(sub: Any) -> None:
    rules = sub.add_parser("rules", help="list, show or lint rules",
                           description="List the rules (the default), show one, or lint a folder of rule files.")
    actions = rules.add_subparsers(dest="action", parser_class=_Parser, metavar="ACTION")
    extra_help = "an extra folder of rule files (may be repeated)"
    rules.add_argument("--rules", dest="rule_paths", action="append", default=[], metavar="DIR", help=extra_help)
    listing = actions.add_parser("list", help="list every rule with its topic and severity",
                                 description="List every rule: id, topic, severity, safety, title.")
    show = actions.add_parser("show", help="show what a rule checks, why, and its examples",
                              description="Show a rule: what it checks, its formula, parameters, basis and "
                                          "examples.")
    show.add_argument("rule", metavar="RULE", help="the rule id (or an alias)")
    # SUPPRESS: a subcommand's own --rules adds to those given before it (rulecheck rules --rules DIR show ID)
    for action in (listing, show):
        action.add_argument("--rules", dest="rule_paths", action="append", default=argparse.SUPPRESS, metavar="DIR",
                            help=extra_help)
    lint = actions.add_parser("lint", help="lint a folder of rule files",
                              description="Validate and dimension-check every rule file in a folder; problems are "
                                          "printed as file:line:column. Exit 1 when there are problems.")
    lint.add_argument("folder", metavar="DIR", help="the folder of rule files")
    lint.add_argument("--strict", action="store_true",
                      help="also reject a message, fix or pass message that can show a value the rule does not "
                           "need to reach it (it would print '(message needs …)')")


def _report_page_options(parser: argparse.ArgumentParser) -> None:
    """Options of the printed report (PDF, HTML print, e-mail): page header, paper, what the terminal shows."""
    group = parser.add_argument_group("report page")
    group.add_argument("--paper", choices=("a4", "letter"), default=None, help="paper size of the PDF (default a4)")
    group.add_argument("--project", metavar="TEXT", help="project named in the report's page header")
    group.add_argument("--revision", metavar="TEXT", help="revision named in the page header")
    group.add_argument("--reviewer", metavar="NAME", help="reviewer named in the page header and sign-off block")
    group.add_argument("--report-date", metavar="YYYY-MM-DD", help="date in the page header (default: generated)")
    if parser.prog.endswith("check"):
        group.add_argument("--requirements", action="store_true",
                           help="show each drive train's requirements (needed, rating, margin) in the terminal")


def _page_meta(args: argparse.Namespace) -> dict[str, Any]:
    """Return the printed report's page header and paper: the command line's, else the configuration's
    ``report:`` section (the configuration named with --config, or found from the first path)."""
    given = {k: getattr(args, k, None) for k in ("paper", "project", "revision", "reviewer")}
    defaults = _report_config(args) if None in given.values() else {}
    return {**{k: v if v is not None else defaults.get(k) for k, v in given.items()},
            "date": getattr(args, "report_date", None)}


def _report_config(args: argparse.Namespace) -> dict[str, str]:
    from rulecheck.config import ConfigError, discover, read_config

    paths = [p for p in (getattr(args, "paths", None) or []) if p != "-"]
    named = getattr(args, "config", None)
    try:
        found = Path(named) if named else discover(Path(paths[0]) if paths else Path.cwd())
        return read_config(found, explicit=bool(named)).report if found else {}
    except (ConfigError, OSError):
        return {}  # the run has already reported a configuration it cannot read


def _mail_size_options(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--attach", choices=("pdf", "html"), default=None,
                        help="attach the full report as PDF or HTML (default: PDF when WeasyPrint is installed)")
    parser.add_argument("--max-size", type=float, default=10.0, metavar="MB",
                        help="refuse a message larger than MB megabytes (default 10; 0: no limit)")
    parser.add_argument("--no-details", action="store_true",
                        help="leave charts, chart data and derived values out of the attached report")


def _speed_options(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--jobs", "-j", type=int, default=0, metavar="N",
                        help="worker processes (default 0: all cores)")
    parser.add_argument("--cache-dir", default=None, metavar="DIR",
                        help="result cache folder (default: RULECHECK_CACHE_DIR, or rulecheck/ in the user's "
                             "cache folder, ~/.cache)")
    parser.add_argument("--no-cache", action="store_true", help="neither read nor write the result cache")
    parser.add_argument("--no-progress", action="store_true", help="never show a progress bar")


def _progress(args: argparse.Namespace, noun: str = "specs") -> Any:
    """Return a progress callback for long runs on a terminal (never in CI logs or when piped); ``noun`` names
    what is counted (specs checked, charts drawn)."""
    if (getattr(args, "no_progress", False) or getattr(args, "quiet", False) or not sys.stderr.isatty()
            or os.environ.get("CI")):
        return None
    state = {"shown": False}

    def show(done: int, total: int) -> None:
        if total < 50:
            return
        width = 30
        filled = width * done // total
        sys.stderr.write(f"\r[{'#' * filled}{'.' * (width - filled)}] {done}/{total} {noun}")
        state["shown"] = True
        if done == total:
            sys.stderr.write("\r" + " " * (width + 30) + "\r")
        sys.stderr.flush()

    return show


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
    data = text.encode("utf-8") if isinstance(text, str) else text
    if target.exists() and not target.is_file():
        # a device or pipe (/dev/null, a FIFO): write to it; never rename a temporary file over it
        with open(target, "wb") as handle:
            handle.write(data)
        return
    write_atomic(target, data)


def _write_reports(rendered: list[tuple[str | None, str | bytes]]) -> None:
    """Write reports: the files all or none (a failing second file leaves the first unwritten), then standard
    output, devices and pipes."""
    files, direct = [], []
    for path, text in rendered:
        target = Path(path) if path not in (None, "-") else None
        if target is None or (target.exists() and not target.is_file()):
            direct.append((path, text))
        else:
            files.append((target, text.encode("utf-8") if isinstance(text, str) else text))
    write_all(files)
    for path, text in direct:
        _write(path, text)


def colour_wanted(choice: str, environ: Mapping[str, str], isatty: bool) -> bool:
    """Return whether the text report is coloured.

    ``--color=always``/``never`` decide (the command line overrides the environment). ``auto``: NO_COLOR set to
    any non-empty value turns colour off (an empty NO_COLOR counts as unset, no-color.org); otherwise
    FORCE_COLOR set to any non-empty value turns it on (force-color.org); otherwise TERM=dumb turns it off and
    a terminal turns it on.
    """
    if choice in ("always", "never"):
        return choice == "always"
    if environ.get("NO_COLOR"):
        return False
    if environ.get("FORCE_COLOR"):
        return True
    if environ.get("TERM") == "dumb":
        return False
    return isatty


def _colour(args: argparse.Namespace) -> bool:
    return args.output in (None, "-") and colour_wanted(getattr(args, "color", "auto"), os.environ,
                                                        sys.stdout.isatty())


class _Paths:
    """How a run shows spec paths: the terminal report as given (relative to the current folder), the
    machine-readable reports and baselines relative to the repository root; a spec read from standard input
    or a pipe under the name it was given as."""

    MACHINE = ("json", "sarif", "junit", "annotations", "markdown")

    def __init__(self, root: Path, piped: dict[str, str], rows: dict[str, Any] | None = None) -> None:
        from rulecheck.check import display_path

        self.cwd = os.getcwd()
        self.root = str(root)
        self.piped = {display_path(Path(k), Path(self.cwd)): v for k, v in piped.items()}
        # a motor list's row checked as a spec (check --map): where it came from
        self.rows = {display_path(Path(k), Path(self.cwd)): v for k, v in (rows or {}).items()}
        self.same = os.path.realpath(self.cwd) == self.root
        self.plain = self.same and not self.piped  # every path shows as the run gives it
        self._machine: dict[str, str] = {}

    def gone(self, file: str) -> bool:
        """Return whether a spec named from the repository root (a baseline entry) no longer exists."""
        return file != "<stdin>" and not os.path.exists(os.path.join(self.root, file))

    def machine(self, file: str) -> str:
        """Return a spec's path relative to the repository root (absolute when it lies outside)."""
        if file in self.piped:
            return self.piped[file]
        if self.same:
            return file
        shown = self._machine.get(file)
        if shown is None:
            absolute = os.path.normpath(os.path.join(self.cwd, file))
            rel = os.path.relpath(absolute, self.root)
            shown = absolute if rel == ".." or rel.startswith(".." + os.sep) else rel
            shown = self._machine[file] = shown.replace(os.sep, "/")
        return shown

    def terminal(self, file: str) -> str:
        return self.piped.get(file, file)

    def spec(self, spec: Any, fmt: str) -> Any:
        """Return a spec result with its path as the format ``fmt`` shows it."""
        if self.plain:
            return spec
        row = self.rows.get(spec["file"])
        if row is not None:
            from rulecheck.authoring.listcheck import place

            spec = place(spec, row)
            return {**spec, "file": self.machine(spec["file"])} if fmt in self.MACHINE else spec
        file = self.machine(spec["file"]) if fmt in self.MACHINE else self.terminal(spec["file"])
        return spec if file == spec["file"] else {**spec, "file": file}

    def result(self, result: dict[str, Any], fmt: str) -> dict[str, Any]:
        """Return a whole result with its spec paths as ``fmt`` shows them."""
        if self.plain:
            return result
        return {**result, "specs": [self.spec(s, fmt) for s in result["specs"]]}


def render(result: dict[str, Any], fmt: str, args: argparse.Namespace, charts: list[Any] | None = None) -> str:
    """Return the report of ``result`` in ``fmt`` (``charts``: each spec's chart series, for the HTML report)."""
    units = result["settings"]["units"]
    if fmt == "json":
        from rulecheck.report import jsonout

        return jsonout.render(result)
    if fmt == "sarif":
        from rulecheck.report import sarif

        return sarif.render(result)
    if fmt == "junit":
        from rulecheck.report import junit

        return junit.render(result)
    if fmt == "markdown":
        from rulecheck.report import markdown

        return markdown.render(result, units=units)
    if fmt in ("html", "pdf"):
        from rulecheck.report import html, pdf

        draw = charts is not None and not getattr(args, "no_charts", False)
        view = with_charts(result, charts) if draw else result
        if fmt == "pdf":
            try:
                return pdf.render(view, units=units, charts=draw, meta=_page_meta(args))  # type: ignore[return-value]
            except pdf.PdfUnavailable as exc:
                raise _Usage(str(exc)) from None
        return html.render(view, units=units, charts=draw, meta=_page_meta(args))
    if fmt == "annotations":
        from rulecheck.report import annotations

        return annotations.render(result, min_severity="warning")
    from rulecheck.report import text

    if getattr(args, "quiet", False):
        report = text.TextReport(colour=_colour(args), verbose=False, show_derived=args.show_derived, units=units,
                                 requirements=getattr(args, "requirements", False))
        return "".join(report.spec(spec) for spec in result["specs"])
    return text.render(result, colour=_colour(args), verbose=args.verbose, show_derived=args.show_derived,
                       requirements=getattr(args, "requirements", False))


def _today(args: argparse.Namespace) -> _dt.date | None:
    if not getattr(args, "today", None):
        return None
    try:
        return _dt.date.fromisoformat(args.today)
    except ValueError:
        raise _Usage(f"--today: '{args.today}' is not a date (YYYY-MM-DD)") from None


class _Usage(Exception):
    pass


def _options(args: argparse.Namespace, paths: list[str]) -> Any:
    from rulecheck.run import RunOptions

    if args.jobs < 0:
        raise _Usage("--jobs must be 0 (all cores) or more")
    return RunOptions(paths=paths, config=args.config, rule_paths=args.rule_paths,
                      fail_on=getattr(args, "fail_on", None), units=getattr(args, "units", None),
                      today=_today(args), jobs=args.jobs, cache_dir=None if args.no_cache else _cache_dir(args),
                      changed_since=getattr(args, "changed_since", None),
                      charts=getattr(args, "_charts", True), code_cache_dir=_code_cache_dir(args))


@contextmanager
def _inputs(args: argparse.Namespace) -> Iterator[tuple[list[str], _Paths]]:
    """Yield the paths a run checks and how it shows them: standard input (``-``) and pipes read once into a
    temporary folder (removed afterwards); every PATH must hold a spec file unless ``--allow-empty``."""
    from rulecheck.run import UsageError
    from rulecheck.run.discovery import has_specs, read_piped, repository_root

    if getattr(args, "quiet", False) and getattr(args, "verbose", False):
        raise _Usage("--quiet and --verbose exclude each other")
    with tempfile.TemporaryDirectory(prefix="rulecheck-stdin-") as folder:
        try:
            paths, piped = read_piped(args.paths, Path(folder), lambda: sys.stdin.buffer.read(READ_CAP + 1))
            root = repository_root(getattr(args, "root", None), Path.cwd())
        except UsageError as exc:
            raise _Usage(str(exc)) from None
        paths, rows = _lists(args, paths, Path(folder), piped)
        for given, path in zip(args.paths, paths, strict=True):
            if not os.path.exists(path):
                raise _Usage(f"{given}: no such file or directory")
            if not args.allow_empty and not has_specs(path):
                raise _Usage(f"{given}: no spec files found (*.yaml, *.yml; hidden folders and links are "
                             "skipped); name spec files or folders that hold them, or give --allow-empty")
        yield paths, _Paths(root, piped, rows)


def _lists(args: argparse.Namespace, paths: list[str], folder: Path,
           piped: dict[str, str]) -> tuple[list[str], dict[str, Any]]:
    """Return the paths with each motor list (``check --map``) replaced by its rows' specs, and their origins."""
    from rulecheck.authoring.listcheck import expand_lists, is_list

    mapping = getattr(args, "map", None)
    if mapping is None:
        listed = next((p for p in paths if is_list(p)), None)
        if listed is not None:
            raise _Usage(f"{listed}: a motor list is checked through a mapping of its columns: give --map MAP")
        return paths, {}
    from rulecheck.authoring.importer import ImportError_

    if not any(is_list(p) for p in paths):
        raise _Usage("--map: name a motor list (.csv or .xlsx) to check")
    try:
        paths, names, rows = expand_lists(paths, folder / "lists", mapping)
    except ImportError_ as exc:
        raise _Usage(str(exc)) from None
    piped.update(names)
    return paths, rows


def _refuse_spec_outputs(files: list[str | None], paths: list[str]) -> None:
    """Refuse a report file that is one of the specs being checked (it would be overwritten by the report)."""
    from rulecheck.run.discovery import collect_specs

    targets = {os.path.realpath(f): f for f in files if f not in (None, "-") and os.path.isfile(f)}
    if not targets:
        return
    for spec in collect_specs(paths):
        given = targets.get(os.path.realpath(spec))
        if given is not None:
            raise _Usage(f"{given}: this report file is one of the specs being checked; write the report elsewhere")


def _run(args: argparse.Namespace, paths: list[str]) -> tuple[dict[str, Any], list[Any] | None]:
    """Return the result of a run and each spec's chart series (when ``args._charts`` asks for them)."""
    from rulecheck.run import UsageError, run_with_charts

    try:
        return run_with_charts(_options(args, paths), progress=_progress(args))
    except UsageError as exc:
        raise _Usage(str(exc)) from None


def _code_cache_dir(args: argparse.Namespace) -> str | None:
    """Return where compiled rules are kept: the cache folder, unless RULECHECK_NO_CODE_CACHE is set."""
    from rulecheck.cache import default_cache_dir

    if os.environ.get("RULECHECK_NO_CODE_CACHE"):
        return None
    return str(Path(args.cache_dir) / "code") if args.cache_dir else str(default_cache_dir() / "code")


def _cache_dir(args: argparse.Namespace) -> str:
    from rulecheck.cache import default_cache_dir

    return args.cache_dir or str(default_cache_dir() / "results")


# formats written spec by spec: memory stays flat on large repositories (the HTML report keeps each spec's section
# in a scratch file and a summary row in memory, and writes the page once every verdict is in)
STREAMED = ("text", "json", "annotations", "html")


class _Sink:
    """One report being written as the specs arrive; a file is written to a temporary name, then renamed."""

    def __init__(self, fmt: str, file: str | None, args: argparse.Namespace, header: dict[str, Any],
                 paths: _Paths) -> None:
        self.fmt, self.file, self.tmp, self.paths = fmt, file, None, paths
        self.quiet = bool(getattr(args, "quiet", False))
        self.to_stdout = file in (None, "-")
        target = Path(file) if file and not self.to_stdout else None
        if fmt == "html":
            self.html = self._html(args, header, target)
        if target is not None and target.exists() and not target.is_file():
            self.handle: Any = open(target, "w", encoding="utf-8")  # a device or pipe: write straight to it
        elif target is not None:
            try:
                fd, self.tmp = temporary_beside(target)
            except OSError as exc:
                exc.filename = file  # the report's name, not its temporary file's
                raise
            self.handle = os.fdopen(fd, "w", encoding="utf-8")
        else:
            self.handle = sys.stdout
        if fmt == "json":
            from rulecheck.report import jsonout

            self.json = jsonout.StreamWriter(self._bytes_writer())
            self.json.begin(header)
        elif fmt == "text":
            from rulecheck.report.text import TextReport

            self.text = TextReport(colour=_colour(args) and self.to_stdout, verbose=args.verbose,
                                   show_derived=args.show_derived, units=header["settings"]["units"],
                                   requirements=getattr(args, "requirements", False))

    def _html(self, args: argparse.Namespace, header: dict[str, Any], target: Path | None) -> Any:
        """Return the streamed HTML report; its scratch file goes beside the report (a device's or standard
        output's: in the system's temporary folder)."""
        from rulecheck.report import html

        charts = bool(getattr(args, "_charts", False))
        device = target is not None and target.exists() and not target.is_file()
        folder = str(target.absolute().parent) if target is not None and not device else None
        self.progress = _progress(args, "drive trains written")
        try:
            return html.StreamedReport(header, units=header["settings"]["units"], charts=charts,
                                       meta=_page_meta(args), folder=folder)
        except ValueError as exc:
            raise _Usage(str(exc)) from None

    def _bytes_writer(self) -> Any:
        """Return a function writing UTF-8 bytes to the handle (its binary buffer when it has one)."""
        buffer = getattr(self.handle, "buffer", None)
        if buffer is not None:
            self.handle.flush()  # nothing written as text may come after bytes written past it
            return buffer.write
        return lambda data: self.handle.write(data.decode("utf-8"))

    def spec(self, spec: dict[str, Any], series: Any = None, drawings: Any = None) -> None:
        """Write one spec's result (``series``, ``drawings``: its chart series and charts drawn, for HTML)."""
        spec = self.paths.spec(spec, self.fmt)
        if self.fmt == "html":
            self.html.add(spec, series, drawings)
        elif self.fmt == "json":
            self.json.spec(spec)
        elif self.fmt == "text":
            self.handle.write(self.text.spec(spec))
        else:
            from rulecheck.report import annotations

            self.handle.write(annotations.render({"specs": [spec]}, min_severity="warning"))

    def finish(self, summary: dict[str, Any]) -> None:
        if self.fmt == "json":
            self.json.end(summary)
        elif self.fmt == "text" and not self.quiet:
            self.handle.write(self.text.footer(summary))
        elif self.fmt == "html":
            self.html.write(self._bytes_writer(), self.progress)
            self.html.close()
        self.handle.flush()
        if not self.to_stdout:
            self.handle.close()

    def publish(self) -> None:
        """Rename the finished report into place."""
        if self.tmp:
            publish(self.tmp, self.file)
            self.tmp = None

    def abort(self) -> None:
        if self.fmt == "html":
            self.html.close()
        if not self.to_stdout:
            self.handle.close()
        if self.tmp:
            try:
                os.unlink(self.tmp)
            except OSError:
                pass


def _charts_of(stream: Any, k: int) -> tuple[Any, Any]:
    """Return the chart series of the stream's spec ``k`` and the charts the checking drew of them (None where
    there are none), and let go of both: they are written with the spec, and memory stays flat."""
    return _take(stream.charts, k), _take(stream.drawings, k)


def _take(items: list[Any], k: int) -> Any:
    """Return ``items[k]`` (None past the end) and leave None in its place."""
    if k >= len(items):
        return None
    item, items[k] = items[k], None
    return item


def _write_streamed(stream: Any, sinks: list[_Sink], matcher: Any, shown: _Paths) -> dict[str, Any]:
    """Give each spec result to every report as it arrives; finish them all, then put them in place."""
    from rulecheck.result import Tally

    tally = Tally(stream.header["settings"]["fail_on"])
    for k, spec in enumerate(stream.specs):
        series, drawings = _charts_of(stream, k)
        if matcher is not None:
            spec = matcher.mark(spec, shown.machine(spec["file"]))
        tally.add(spec)
        for sink in sinks:
            sink.spec(spec, series, drawings)
    summary = tally.result()
    if matcher is not None:
        matcher.adjust(summary)
    stream.add_cache_counts(summary)
    for sink in sinks:  # every report complete before any is renamed into place: all or none
        sink.finish(summary)
    for sink in sinks:
        sink.publish()
    return summary


def _stream_check(args: argparse.Namespace, outputs: list[tuple[str, str | None]], known: Any,
                  paths: list[str], shown: _Paths) -> dict[str, Any]:
    """Check and write the streamed formats spec by spec; return the summary."""
    from rulecheck import baseline
    from rulecheck.run import UsageError, run_stream

    options = _options(args, paths)
    if options.charts and any(fmt == "html" for fmt, _file in outputs):
        from rulecheck.report.charts import draw_series

        options.draw = draw_series  # each spec's charts drawn where it is checked: Stream.drawings has them
    # a JSON report copies cached results as they are: they need not be parsed
    options.lazy_cached = known is None and shown.plain and all(fmt == "json" for fmt, _file in outputs)
    try:
        stream = run_stream(options, progress=_progress(args))
    except UsageError as exc:
        raise _Usage(str(exc)) from None
    for warning in stream.warnings:
        print(f"rulecheck: warning: {warning}", file=sys.stderr)
    matcher = baseline.Matcher(known, args.baseline, shown.gone) if known is not None else None
    sinks: list[_Sink] = []
    try:
        for fmt, file in outputs:
            sinks.append(_Sink(fmt, file, args, stream.header, shown))
        summary = _write_streamed(stream, sinks, matcher, shown)
    except BrokenPipeError:
        for sink in sinks:
            sink.abort()
        raise
    except OSError as exc:
        for sink in sinks:
            sink.abort()
        raise _Usage(f"cannot write {exc.filename or 'a report'}: {exc.strerror or exc}") from None
    except BaseException:
        for sink in sinks:
            sink.abort()
        raise
    return summary


def _whole_check(args: argparse.Namespace, outputs: list[tuple[str, str | None]], known: Any,
                 paths: list[str], shown: _Paths, step_summary: str | None) -> dict[str, Any]:
    """Check every spec, then render and write every report (and the CI step summary); return the summary."""
    result, charts = _run(args, paths)
    if known is not None:
        from rulecheck import baseline

        baseline.apply(result, known, args.baseline, shown.machine, shown.gone)
    rendered = [(file, render(shown.result(result, f), f, args, charts)) for f, file in outputs]
    markdown = render(shown.result(result, "markdown"), "markdown", args) if step_summary else None
    try:  # every report is rendered before any is written, and the files are written all or none
        _write_reports(rendered)
    except OSError as exc:
        raise _Usage(f"cannot write {exc.filename or 'a report'}: {exc.strerror or exc}") from None
    if step_summary and markdown is not None:
        markdown = _fit_step_summary(markdown)
        try:
            with open(step_summary, "a", encoding="utf-8") as handle:  # the runner's file: append, never replace
                handle.write(markdown + "\n")
        except OSError as exc:
            raise _Usage(f"cannot write the step summary {step_summary}: {exc.strerror or exc}") from None
    return result["summary"]


STEP_SUMMARY_BYTES = 1_000_000  # a job step's summary is refused above 1 MiB: stay below it


def _fit_step_summary(markdown: str) -> str:
    """Return the Markdown report cut at a line so that it fits a step summary, saying so when cut."""
    data = markdown.encode("utf-8")
    if len(data) <= STEP_SUMMARY_BYTES:
        return markdown
    cut = data[:STEP_SUMMARY_BYTES - 200].decode("utf-8", "ignore").rsplit("\n", 1)[0]
    return cut + "\n\n*(The report is cut here to fit the step summary; write the whole report with " \
                 "`--report markdown=FILE`.)*\n"


def ci_runner(environ: Mapping[str, str]) -> bool:
    """Return whether the run is under a CI runner that reads annotation lines (GitHub Actions)."""
    from rulecheck.report.annotations import detect_ci_annotations

    return detect_ci_annotations(environ)


def summary_line(summary: dict[str, Any]) -> str:
    """Return the one-line summary of a run: specs, findings that fail it, known ones, exit code."""
    n = summary["specs"]
    fail = summary["fail"]
    text = (f"rulecheck: {n} spec{'s' if n != 1 else ''}, {fail['error']} error{'s' if fail['error'] != 1 else ''}, "
            f"{fail['warning']} warning{'s' if fail['warning'] != 1 else ''}, {summary['not-checked']} not checked")
    if "baseline" in summary:
        b = summary["baseline"]
        text += f"; baseline {b['file']}: {b['matched']} known, {b['new']} new, {len(b['fixed'])} fixed"
    verdict = "fails" if summary["exit_code"] else "passes"
    return text + f"; the run {verdict} at --fail-on {summary['fail_on']} (exit {summary['exit_code']})"


def _load_baseline(args: argparse.Namespace) -> Any:
    if not args.baseline:
        return None
    from rulecheck import baseline

    try:
        return baseline.load(_read_text(args.baseline, "baseline"), args.baseline)
    except OSError as exc:
        raise _Usage(f"--baseline {args.baseline}: {exc.strerror or exc}") from None
    except baseline.BaselineError as exc:
        raise _Usage(str(exc)) from None
    except RecursionError:
        raise _Usage(f"--baseline {args.baseline}: nested too deeply to be a baseline") from None


def _outputs(args: argparse.Namespace, ci: bool) -> list[tuple[str, str | None]]:
    reports: list[tuple[str, str | None]] = []
    for entry in args.report:
        fmt, sep, file = entry.partition("=")
        if not sep or fmt not in FORMATS or not file:
            raise _Usage(f"--report {entry!r}: write FORMAT=FILE with FORMAT one of {', '.join(FORMATS)}")
        reports.append((fmt, file))
    fmt = args.format or ("annotations" if ci and not args.output else "text")
    return [(fmt, args.output), *reports]


def _cmd_check(args: argparse.Namespace) -> int:
    if args.overrides:
        _set_overrides(args)
    ci = ci_runner(os.environ)
    outputs = _outputs(args, ci)
    # chart series are computed beside the results only for a report that draws them
    args._charts = any(f in ("html", "pdf") for f, _file in outputs) and not args.no_charts
    known = _load_baseline(args)
    step_summary = os.environ.get("GITHUB_STEP_SUMMARY") if ci else None
    with _inputs(args) as (paths, shown):
        _refuse_spec_outputs([file for _f, file in outputs], paths)
        if all(f in STREAMED for f, _file in outputs) and not step_summary:
            summary = _stream_check(args, outputs, known, paths, shown)
        else:
            summary = _whole_check(args, outputs, known, paths, shown, step_summary)
    written = [file for _f, file in outputs if file not in (None, "-")]
    if not args.quiet and (ci or args.baseline or written and (outputs[0][0] != "text" or len(outputs) > 1)):
        print(summary_line(summary) + ("; wrote " + ", ".join(written) if written else ""), file=sys.stderr)
    return int(summary["exit_code"])


def _set_overrides(args: argparse.Namespace) -> None:
    """Take the run's ``--set`` values (a usage error names a bad one); results with them are not cached."""
    from rulecheck.authoring.overrides import OverrideError, parse_overrides
    from rulecheck.check import set_overrides

    try:
        set_overrides(parse_overrides(args.overrides))
    except OverrideError as exc:
        raise _Usage(str(exc)) from None
    args.no_cache = True


def _cmd_baseline(args: argparse.Namespace) -> int:
    from rulecheck import baseline

    args._charts = False
    old: list[dict[str, Any]] = []
    if args.update or args.prune:
        try:
            old = baseline.load_entries(_read_text(args.output, "baseline"), args.output)
        except FileNotFoundError:
            if args.prune:
                raise _Usage(f"--prune: {args.output} does not exist (write one with 'rulecheck baseline')") from None
        except OSError as exc:
            raise _Usage(f"{args.output}: {exc.strerror or exc}") from None
        except baseline.BaselineError as exc:
            raise _Usage(str(exc)) from None
    with _inputs(args) as (paths, shown):
        result, _charts = _run(args, paths)
    if args.update or args.prune:
        entries, change = baseline.merge(old, result, prune=args.prune, file_of=shown.machine, gone=shown.gone)
        text = baseline.render_entries(entries, result["tool"]["version"])
        what = f"{change['added']} added, {change['removed']} removed, {change['kept']} of specs not checked kept"
    else:
        text = baseline.render(result, shown.machine)
        what = "written"
    try:
        _write(args.output, text)
    except OSError as exc:
        raise _Usage(f"cannot write {args.output}: {exc.strerror or exc}") from None
    if not args.quiet:
        count = text.count('"rule":')
        print(f"rulecheck: {args.output}: {count} findings ({what}); {result['summary']['specs']} specs checked",
              file=sys.stderr)
    return 0


def _cmd_mail(args: argparse.Namespace) -> int:
    from rulecheck.report import mail

    args._charts = not args.no_details
    with _inputs(args) as (paths, shown):
        result, charts = _run(args, paths)
    result = shown.result(result, "text")
    try:
        drawn = with_charts(result, charts if charts is not None else [None] * len(result["specs"]))
        message = mail.build_message(drawn, sender=args.sender, recipients=args.to, subject=args.subject,
                                     units=result["settings"]["units"], attach=args.attach,
                                     details=not args.no_details, meta=_page_meta(args),
                                     max_bytes=int(args.max_size * 2**20) if args.max_size > 0 else None)
    except (ValueError, mail.MailError) as exc:
        raise _Usage(str(exc)) from None
    for file, data in ((args.html, lambda: render(result, "html", args, charts)),
                       (args.eml, lambda: mail.as_bytes(message))):
        if file:
            try:
                _write(file, data())
            except OSError as exc:
                raise _Usage(f"cannot write {file}: {exc.strerror or exc}") from None
            print(f"rulecheck: wrote {file}", file=sys.stderr)
    if args.dry_run or not (args.send or args.eml):
        print(mail.describe(message))
    if args.send and not args.dry_run:
        host = os.environ.get("RULECHECK_SMTP_HOST")
        if not host:
            raise _Usage("--send needs RULECHECK_SMTP_HOST (and RULECHECK_SMTP_PORT, RULECHECK_SMTP_SECURITY, "
                         "RULECHECK_SMTP_USER, RULECHECK_SMTP_PASSWORD as needed)")
        security = os.environ.get("RULECHECK_SMTP_SECURITY", "starttls")
        try:
            port = int(os.environ.get("RULECHECK_SMTP_PORT", "465" if security == "tls" else "587"))
        except ValueError:
            raise _Usage("RULECHECK_SMTP_PORT must be a port number") from None
        try:
            mail.send(message, host=host, port=port, security=security,
                      username=os.environ.get("RULECHECK_SMTP_USER"),
                      password=os.environ.get("RULECHECK_SMTP_PASSWORD"))
        except mail.MailError as exc:
            print(f"rulecheck: {exc}", file=sys.stderr)
            return 2
        print(f"rulecheck: sent to {', '.join(args.to)} via {host}:{port}", file=sys.stderr)
    return int(result["summary"]["exit_code"])


def _cmd_rules(args: argparse.Namespace) -> int:
    from rulecheck.rules_cmd import lint_folder, list_rules, show_rule

    if args.action == "show":
        return show_rule(args.rule, args.rule_paths)
    if args.action == "lint":
        return lint_folder(args.folder, strict=args.strict)
    return list_rules(args.rule_paths)


def _cmd_schema(args: argparse.Namespace) -> int:
    import json
    from importlib import resources

    if args.markdown:
        from rulecheck.docs import spec_format_markdown

        sys.stdout.write(spec_format_markdown())
        return 0
    if args.which == "spec":  # the shipped file itself: what an editor's modeline points at
        sys.stdout.write(resources.files("rulecheck").joinpath("schemas/spec.schema.json").read_text(encoding="utf-8"))
    elif args.which == "result":
        from rulecheck.report import jsonout

        sys.stdout.write(json.dumps(jsonout.schema(), indent=2, ensure_ascii=False) + "\n")
    else:
        import yaml

        text = resources.files("rulecheck").joinpath("schemas/rule.schema.yaml").read_text(encoding="utf-8")
        sys.stdout.write(json.dumps(yaml.safe_load(text), indent=2, ensure_ascii=False) + "\n")
    return 0


def _cmd_completion(args: argparse.Namespace) -> int:
    """Print the shell completion script, generated from the parser itself (shtab)."""
    import shtab

    sys.stdout.write(shtab.complete(_parser(), shell=args.shell))
    return 0


def _read_text(name: str, what: str) -> str:
    """Return a UTF-8 text file the user named (a baseline), read within the size bound; a usage error if not."""
    from rulecheck.files import read_limited

    try:
        return read_limited(name, READ_CAP).decode("utf-8")
    except UnicodeDecodeError as exc:
        raise _Usage(f"{name}: the {what} is not UTF-8 text (byte {exc.start})") from None
    except OSError as exc:
        raise _Usage(f"{name}: cannot read the {what}: {exc.strerror or exc}") from None


def _fault(exc: BaseException) -> str:
    """Return the message for an exception no command turned into one (the one place faults become messages)."""
    if isinstance(exc, OSError):
        where = f"{exc.filename}: " if getattr(exc, "filename", None) else ""
        return f"{where}{exc.strerror or exc}"
    if isinstance(exc, RecursionError):
        return "an input nests too deeply to be read"
    if isinstance(exc, UnicodeError):
        return f"text that cannot be read or written in this encoding ({exc})"
    return (f"unexpected {type(exc).__name__}: {str(exc)[:300]} — a fault in rulecheck; run again with "
            "RULECHECK_DEBUG=1 for the details and report it")


def _tolerant_streams() -> None:
    """Let standard output and error show what their encoding cannot (a Windows pipe in cp1252) as '?' rather
    than fail on the first 'Δ' or 'N·m'."""
    for stream in (sys.stdout, sys.stderr):
        reconfigure = getattr(stream, "reconfigure", None)
        if reconfigure is not None and (getattr(stream, "encoding", "") or "").lower().replace("-", "") != "utf8":
            try:
                reconfigure(errors="replace")
            except (ValueError, OSError):
                pass


def _stopped(what: str, code: int) -> int:
    """Say the run was stopped; end any worker still alive (it would hold our output pipes open) and leave at once
    rather than wait in the pool's exit handler. The reports' temporary files are already removed."""
    print(f"rulecheck: {what}", file=sys.stderr)
    sys.stderr.flush()
    from rulecheck.run.pool import workers_running

    if workers_running():
        import multiprocessing

        for child in multiprocessing.active_children():
            child.terminate()
        for child in multiprocessing.active_children():
            child.join(timeout=2)
        os._exit(code)
    return code


class _Terminated(BaseException):
    """SIGTERM (a CI job cancelled, a container stopped): ends the run as Ctrl-C does, temporary files removed."""


def _on_sigterm(_signum: int, _frame: Any) -> None:
    raise _Terminated


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit code."""
    _tolerant_streams()
    if threading.current_thread() is threading.main_thread():
        signal.signal(signal.SIGTERM, _on_sigterm)
    parser = _parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return 2
    commands = {"check": _cmd_check, "baseline": _cmd_baseline, "mail": _cmd_mail, "rules": _cmd_rules,
                "schema": _cmd_schema, "completion": _cmd_completion, **authoring.COMMANDS}
    try:
        return commands[args.command](args)
    except _Usage as exc:
        print(f"rulecheck: {exc}", file=sys.stderr)
        return 2
    except _Terminated:
        return _stopped("terminated", 143)
    except KeyboardInterrupt:
        return _stopped("interrupted", 130)
    except BrokenPipeError:
        # the reader (head, less) has gone: stop quietly, as command-line tools do
        try:
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
        except OSError:
            pass
        return 141
    except Exception as exc:  # noqa: BLE001 - every fault ends as a message and exit 2, never a traceback
        if os.environ.get("RULECHECK_DEBUG"):
            raise
        print(f"rulecheck: {_fault(exc)}", file=sys.stderr)
        return 2


def entry() -> None:
    """Console-script entry point."""
    sys.exit(main())


if __name__ == "__main__":  # pragma: no cover
    entry()
