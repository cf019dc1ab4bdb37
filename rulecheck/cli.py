"""The command line: ``rulecheck check | rules | schema | mail | new | import``.

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
from collections.abc import Sequence
from pathlib import Path
from typing import Any, NoReturn

from rulecheck import __version__, authoring
from rulecheck.files import publish, write_atomic
from rulecheck.result import with_charts

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
    check.add_argument("--report", action="append", default=[], metavar="FORMAT=FILE",
                       help="also write a report in FORMAT to FILE (may be repeated), e.g. sarif=out.sarif")
    check.add_argument("--baseline", metavar="FILE", help="findings recorded in FILE do not fail the run")
    check.add_argument("--changed-since", metavar="REV",
                       help="check only specs changed since git revision REV (all, if rules or configuration changed)")
    _speed_options(check)

    baseline = sub.add_parser("baseline", help="record the current findings in a baseline file",
                              description="Write the current findings of specs to a baseline file.")
    baseline.add_argument("paths", nargs="+", metavar="PATH")
    baseline.add_argument("--output", "-o", metavar="FILE", default=".rulecheck-baseline.json",
                          help="baseline file to write (default: .rulecheck-baseline.json)")
    baseline.add_argument("--config", metavar="FILE")
    baseline.add_argument("--rules", dest="rule_paths", action="append", default=[], metavar="DIR")
    baseline.add_argument("--today", metavar="YYYY-MM-DD")
    _speed_options(baseline)

    mail = sub.add_parser("mail", help="write or send the findings report as an e-mail",
                          description="Write the findings report as an e-mail (.eml) or send it over SMTP. "
                                      "SMTP settings come from RULECHECK_SMTP_HOST, RULECHECK_SMTP_PORT, "
                                      "RULECHECK_SMTP_SECURITY (starttls|tls|none), RULECHECK_SMTP_USER and "
                                      "RULECHECK_SMTP_PASSWORD, never from a spec file.")
    mail.add_argument("paths", nargs="+", metavar="PATH")
    mail.add_argument("--to", action="append", required=True, metavar="ADDRESS", help="recipient (may be repeated)")
    mail.add_argument("--from", dest="sender", default=os.environ.get("RULECHECK_MAIL_FROM", "rulecheck@localhost"),
                      metavar="ADDRESS", help="sender (default: RULECHECK_MAIL_FROM or rulecheck@localhost)")
    mail.add_argument("--subject", help="subject line (default: a summary of the verdicts)")
    mail.add_argument("--eml", metavar="FILE", help="write the message to FILE")
    mail.add_argument("--html", metavar="FILE", help="also write the HTML report to FILE (before anything is sent)")
    mail.add_argument("--send", action="store_true", help="send the message over SMTP")
    mail.add_argument("--dry-run", action="store_true", help="show what would be sent, without connecting")
    mail.add_argument("--config", metavar="FILE")
    mail.add_argument("--rules", dest="rule_paths", action="append", default=[], metavar="DIR")
    mail.add_argument("--units", choices=("si", "customary"), default=None)
    mail.add_argument("--today", metavar="YYYY-MM-DD")
    mail.add_argument("--fail-on", choices=("error", "warning", "info"), default=None)
    _speed_options(mail)

    rules = sub.add_parser("rules", help="list, show or lint rules", description="List, show or lint rules.")
    rules.add_argument("action", nargs="?", choices=("list", "show", "lint"), default="list")
    rules.add_argument("target", nargs="?", help="rule id (show) or folder (lint)")
    rules.add_argument("--rules", dest="rule_paths", action="append", default=[], metavar="DIR",
                       help="an extra folder of rule files")

    schema = sub.add_parser("schema", help="print a JSON Schema", description="Print a JSON Schema.")
    schema.add_argument("which", nargs="?", choices=("spec", "result", "rule"), default="spec")
    schema.add_argument("--markdown", action="store_true", help="the spec format as a Markdown reference")
    authoring.add_commands(sub)  # new, import
    return parser


def _speed_options(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--jobs", "-j", type=int, default=0, metavar="N",
                        help="worker processes (default 0: all cores)")
    parser.add_argument("--cache-dir", default=None, metavar="DIR",
                        help="result cache folder (default: RULECHECK_CACHE_DIR, or rulecheck/ in the user's "
                             "cache folder, ~/.cache)")
    parser.add_argument("--no-cache", action="store_true", help="neither read nor write the result cache")
    parser.add_argument("--no-progress", action="store_true", help="never show a progress bar")


def _progress(args: argparse.Namespace) -> Any:
    """Return a progress callback for long runs on a terminal (never in CI logs or when piped)."""
    if getattr(args, "no_progress", False) or not sys.stderr.isatty() or os.environ.get("CI"):
        return None
    state = {"shown": False}

    def show(done: int, total: int) -> None:
        if total < 50:
            return
        width = 30
        filled = width * done // total
        sys.stderr.write(f"\r[{'#' * filled}{'.' * (width - filled)}] {done}/{total} specs")
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


def _colour(args: argparse.Namespace) -> bool:
    return (not args.no_color and "NO_COLOR" not in os.environ and sys.stdout.isatty()
            and args.output in (None, "-"))


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
    if fmt == "html":
        from rulecheck.report import html

        draw = charts is not None and not getattr(args, "no_charts", False)
        return html.render(with_charts(result, charts) if draw else result, units=units, charts=draw)
    if fmt == "annotations":
        from rulecheck.report import annotations

        return annotations.render(result, min_severity="warning")
    from rulecheck.report import text

    return text.render(result, colour=_colour(args), verbose=args.verbose, show_derived=args.show_derived)


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


STREAMED = ("text", "json", "annotations")  # formats written spec by spec: memory stays flat on large repositories


class _Sink:
    """One report being written as the specs arrive; a file is written to a temporary name, then renamed."""

    def __init__(self, fmt: str, file: str | None, args: argparse.Namespace, header: dict[str, Any]) -> None:
        self.fmt, self.file, self.tmp = fmt, file, None
        self.to_stdout = file in (None, "-")
        target = Path(file) if file and not self.to_stdout else None
        if target is not None and target.exists() and not target.is_file():
            self.handle: Any = open(target, "w", encoding="utf-8")  # a device or pipe: write straight to it
        elif target is not None:
            fd, self.tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp",
                                            dir=target.parent if str(target.parent) else ".")
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
                                   show_derived=args.show_derived, units=header["settings"]["units"])

    def _bytes_writer(self) -> Any:
        """Return a function writing UTF-8 bytes to the handle (its binary buffer when it has one)."""
        buffer = getattr(self.handle, "buffer", None)
        if buffer is not None:
            self.handle.flush()  # nothing written as text may come after bytes written past it
            return buffer.write
        return lambda data: self.handle.write(data.decode("utf-8"))

    def spec(self, spec: dict[str, Any]) -> None:
        if self.fmt == "json":
            self.json.spec(spec)
        elif self.fmt == "text":
            self.handle.write(self.text.spec(spec))
        else:
            from rulecheck.report import annotations

            self.handle.write(annotations.render({"specs": [spec]}, min_severity="warning"))

    def finish(self, summary: dict[str, Any]) -> None:
        if self.fmt == "json":
            self.json.end(summary)
        elif self.fmt == "text":
            self.handle.write(self.text.footer(summary))
        self.handle.flush()
        if not self.to_stdout:
            self.handle.close()
        if self.tmp:
            publish(self.tmp, self.file)
            self.tmp = None

    def abort(self) -> None:
        if not self.to_stdout:
            self.handle.close()
        if self.tmp:
            try:
                os.unlink(self.tmp)
            except OSError:
                pass


def _stream_check(args: argparse.Namespace, outputs: list[tuple[str, str | None]], known: Any) -> dict[str, Any]:
    """Check and write the streamed formats spec by spec; return the summary."""
    from rulecheck import baseline
    from rulecheck.result import Tally
    from rulecheck.run import UsageError, run_stream

    options = _options(args, args.paths)
    # a JSON report copies cached results as they are: they need not be parsed
    options.lazy_cached = known is None and all(fmt == "json" for fmt, _file in outputs)
    try:
        stream = run_stream(options, progress=_progress(args))
    except UsageError as exc:
        raise _Usage(str(exc)) from None
    matcher = baseline.Matcher(known, args.baseline) if known is not None else None
    tally = Tally(stream.header["settings"]["fail_on"])
    sinks: list[_Sink] = []
    try:
        for fmt, file in outputs:
            sinks.append(_Sink(fmt, file, args, stream.header))
        for spec in stream.specs:
            if matcher is not None:
                spec = matcher.mark(spec)
            tally.add(spec)
            for sink in sinks:
                sink.spec(spec)
        summary = tally.result()
        if matcher is not None:
            summary["baseline"] = matcher.summary()
        stream.add_cache_counts(summary)
        for sink in sinks:
            sink.finish(summary)
    except BrokenPipeError:
        for sink in sinks:
            sink.abort()
        raise
    except OSError as exc:
        for sink in sinks:
            sink.abort()
        raise _Usage(f"cannot write a report: {exc.strerror or exc}") from None
    except BaseException:
        for sink in sinks:
            sink.abort()
        raise
    return summary


def _cmd_check(args: argparse.Namespace) -> int:
    reports: list[tuple[str, str]] = []
    for entry in args.report:
        fmt, sep, file = entry.partition("=")
        if not sep or fmt not in FORMATS or not file:
            raise _Usage(f"--report {entry!r}: write FORMAT=FILE with FORMAT one of {', '.join(FORMATS)}")
        reports.append((fmt, file))
    fmt = args.format
    if fmt is None:
        from rulecheck.report.annotations import detect_ci_annotations

        fmt = "annotations" if detect_ci_annotations(os.environ) and not args.output else "text"
    outputs: list[tuple[str, str | None]] = [(fmt, args.output), *reports]
    # chart series are computed beside the results only for a report that draws them
    args._charts = any(f == "html" for f, _file in outputs) and not args.no_charts
    known = None
    if args.baseline:
        from rulecheck import baseline

        try:
            known = baseline.load(Path(args.baseline).read_text(encoding="utf-8"), args.baseline)
        except OSError as exc:
            raise _Usage(f"--baseline {args.baseline}: {exc.strerror or exc}") from None
        except baseline.BaselineError as exc:
            raise _Usage(str(exc)) from None
    if all(f in STREAMED for f, _file in outputs):
        summary = _stream_check(args, outputs, known)
    else:
        result, charts = _run(args, args.paths)
        if known is not None:
            from rulecheck import baseline

            baseline.apply(result, known, args.baseline)
        rendered = [(f, file, render(result, f, args, charts)) for f, file in outputs]
        for _f, file, text in rendered:  # every report is rendered before any is written: no partial set
            try:
                _write(file, text)
            except OSError as exc:
                raise _Usage(f"cannot write {file}: {exc.strerror or exc}") from None
        summary = result["summary"]
    written = [file for _f, file in outputs if file not in (None, "-")]
    if written and (fmt != "text" or reports):
        print(f"rulecheck: {summary['specs']} spec{'s' if summary['specs'] != 1 else ''}, "
              f"{summary['fail']['error']} errors, {summary['fail']['warning']} warnings, "
              f"{summary['not-checked']} not checked; wrote " + ", ".join(written), file=sys.stderr)
    if args.baseline:
        b = summary["baseline"]
        print(f"rulecheck: baseline {args.baseline}: {b['matched']} known, {b['new']} new, "
              f"{len(b['fixed'])} fixed", file=sys.stderr)
    return int(summary["exit_code"])


def _cmd_baseline(args: argparse.Namespace) -> int:
    from rulecheck import baseline

    args._charts = False
    result, _charts = _run(args, args.paths)
    text = baseline.render(result)
    try:
        _write(args.output, text)
    except OSError as exc:
        raise _Usage(f"cannot write {args.output}: {exc.strerror or exc}") from None
    count = text.count('"rule":')
    print(f"rulecheck: wrote {args.output} with {count} findings of {result['summary']['specs']} specs",
          file=sys.stderr)
    return 0


def _cmd_mail(args: argparse.Namespace) -> int:
    from rulecheck.report import mail

    result, charts = _run(args, args.paths)
    try:
        drawn = with_charts(result, charts if charts is not None else [None] * len(result["specs"]))
        message = mail.build_message(drawn, sender=args.sender, recipients=args.to, subject=args.subject,
                                     units=result["settings"]["units"])
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

    if args.markdown:
        from rulecheck.docs import spec_format_markdown

        sys.stdout.write(spec_format_markdown())
        return 0
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
    commands = {"check": _cmd_check, "baseline": _cmd_baseline, "mail": _cmd_mail, "rules": _cmd_rules,
                "schema": _cmd_schema, **authoring.COMMANDS}
    try:
        return commands[args.command](args)
    except _Usage as exc:
        print(f"rulecheck: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("rulecheck: interrupted", file=sys.stderr)
        sys.stderr.flush()
        from rulecheck.run.pool import workers_running

        if workers_running():
            # end any worker still alive (it would hold our output pipes open), then leave at once
            # rather than wait in the pool's exit handler
            import multiprocessing

            for child in multiprocessing.active_children():
                child.terminate()
            for child in multiprocessing.active_children():
                child.join(timeout=2)
            os._exit(130)
        return 130
    except BrokenPipeError:
        # the reader (head, less) has gone: stop quietly, as command-line tools do
        try:
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
        except OSError:
            pass
        return 141


def entry() -> None:
    """Console-script entry point."""
    sys.exit(main())


if __name__ == "__main__":  # pragma: no cover
    entry()
