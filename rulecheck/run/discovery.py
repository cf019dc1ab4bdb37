"""Which spec files a run checks, and under which configuration each is checked."""

from __future__ import annotations

import hashlib
import os
import re
import subprocess
from collections.abc import Callable
from pathlib import Path

from rulecheck.check import display_path
from rulecheck.config import CONFIG_NAME, Config, ConfigError, discover, read_config
from rulecheck.engine.ruleset import shipped_rules_dir
from rulecheck.files import READ_CAP, read_head
from rulecheck.run.options import UsageError

__all__ = ["Configs", "changed_files", "collect_specs", "config_digest", "filter_changed", "has_specs",
           "is_column_mapping", "read_piped", "repository_root", "rule_folders", "shown_paths"]

SPEC_SUFFIXES = (".yaml", ".yml")


def collect_specs(paths: list[str], notes: list[str] | None = None) -> list[Path]:
    """Return the spec files named or found under ``paths`` (recursive, stable order, no duplicates).

    Folders are searched for ``*.yaml``/``*.yml`` (any case); hidden folders and files and configuration
    files are skipped there. A link to a file inside the searched folder is taken; a link that leads out of
    it, or to a folder, is skipped and said in ``notes`` (a file named directly is always taken).
    """
    found: list[Path] = []
    seen: set[str] = set()
    for raw in paths:
        path = Path(raw)
        if path.is_dir():
            candidates = _walk(str(path), os.path.realpath(path), os.path.realpath(path), notes)
        elif path.exists():
            candidates = [(str(path), os.path.realpath(path))]
        else:
            raise UsageError(f"{raw}: no such file or directory")
        for shown, real in candidates:
            if real not in seen:
                seen.add(real)
                found.append(Path(shown))
    return found


def has_specs(path: str) -> bool:
    """Return whether ``path`` is a spec file, or a folder with a spec file somewhere below it (the files
    :func:`collect_specs` would take); stops at the first one found."""
    if not os.path.isdir(path):
        return os.path.exists(path)
    pending = [path]
    while pending:
        folder = pending.pop()
        try:
            with os.scandir(folder) as found:
                entries = list(found)
        except OSError:
            continue
        for entry in entries:
            try:
                if entry.name.startswith(".") or entry.is_symlink():
                    continue
                if entry.is_dir(follow_symlinks=False):
                    pending.append(entry.path)
                elif entry.name.lower().endswith(SPEC_SUFFIXES) and entry.name != CONFIG_NAME and \
                        not is_column_mapping(entry.path):
                    return True
            except OSError:
                continue
    return False


_MAPPING_HEAD = re.compile(rb"^columns[ \t]*:", re.MULTILINE)
_SPEC_HEAD = re.compile(rb"^format[ \t]*:", re.MULTILINE)


def is_column_mapping(path: str) -> bool:
    """Return whether a YAML file found in a folder is a motor list's column mapping (``rulecheck import
    --map``), not a spec: a top-level ``columns:`` key and no top-level ``format:`` key in its first 64 KiB.
    A file without ``format:`` that is not a mapping is still taken: the check reports what it lacks."""
    try:
        with open(path, "rb") as handle:
            head = handle.read(65536)
    except OSError:
        return False
    return bool(_MAPPING_HEAD.search(head)) and not _SPEC_HEAD.search(head)


def read_piped(paths: list[str], folder: Path, stdin: Callable[[], bytes]) -> tuple[list[str], dict[str, str]]:
    """Return ``paths`` with standard input (``-``) and every pipe or device named (``/dev/stdin``, a FIFO) read
    once into a regular file in ``folder``, and a map from each such file's path to the name it was given as.

    A spec is read more than once (for its cache key, then to check it): a pipe would be empty the second time.
    ``stdin`` reads standard input (once, however often ``-`` is given).
    """
    out: list[str] = []
    names: dict[str, str] = {}
    done: dict[str, str] = {}
    for raw in paths:
        if raw != "-" and (not os.path.exists(raw) or os.path.isdir(raw) or os.path.isfile(raw)):
            out.append(raw)
            continue
        key = "-" if raw == "-" else os.path.realpath(raw)
        if key not in done:
            try:
                data = stdin() if raw == "-" else read_head(raw, READ_CAP, pipes=True)
            except OSError as exc:
                raise UsageError(f"{raw}: cannot read: {exc.strerror or exc}") from None
            if len(data) > READ_CAP:
                raise UsageError(f"{raw}: more than {READ_CAP} bytes: not a drive spec")
            stem = "stdin" if raw == "-" else (Path(raw).stem or "spec")
            target = folder / f"{len(done)}" / f"{stem}.yaml"
            target.parent.mkdir()
            target.write_bytes(data)
            done[key] = str(target)
            names[str(target)] = "<stdin>" if raw == "-" else raw
        out.append(done[key])
    return out, names


def repository_root(root: str | None, cwd: Path) -> Path:
    """Return the folder paths in machine-readable reports are relative to: ``root`` when given, else the git
    top level of ``cwd``, else ``cwd`` (no git, or not in a repository)."""
    if root:
        folder = Path(root)
        if not folder.is_dir():
            raise UsageError(f"--root {root}: not a folder")
        return Path(os.path.realpath(folder))
    try:
        proc = subprocess.run(["git", "rev-parse", "--show-toplevel"], cwd=cwd, capture_output=True, text=True,
                              timeout=60)
    except (OSError, subprocess.SubprocessError):
        return Path(os.path.realpath(cwd))
    top = proc.stdout.strip()
    return Path(os.path.realpath(top)) if proc.returncode == 0 and top else Path(os.path.realpath(cwd))


def _walk(folder: str, real: str, root: str, notes: list[str] | None) -> list[tuple[str, str]]:
    """Return (path, resolved path) of the spec files below ``folder``: its own files in name order, then
    each subfolder's in name order; hidden names are skipped, and links but to a spec file inside ``root``
    (said in ``notes``: a link is never followed out of the folder searched, nor into a folder)."""
    try:
        with os.scandir(folder) as found:
            entries = sorted(found, key=lambda e: e.name)
    except OSError:
        return []
    files: list[tuple[str, str]] = []
    subfolders: list[tuple[str, str]] = []
    for entry in entries:
        name = entry.name
        try:
            if name.startswith("."):
                continue
            spec_name = name.lower().endswith(SPEC_SUFFIXES) and name != CONFIG_NAME
            if entry.is_symlink():
                if spec_name or entry.is_dir():
                    _linked(entry, root, files, notes)
            elif entry.is_dir(follow_symlinks=False):
                subfolders.append((entry.path, os.path.join(real, name)))
            elif spec_name and entry.is_file(follow_symlinks=False) and not is_column_mapping(entry.path):
                files.append((entry.path, os.path.join(real, name)))
        except OSError:
            continue
    for sub, sub_real in subfolders:
        files.extend(_walk(sub, sub_real, root, notes))
    return files


def _linked(entry: os.DirEntry[str], root: str, files: list[tuple[str, str]], notes: list[str] | None) -> None:
    """Take a link to a spec file inside ``root``; say why any other link is skipped."""
    target = os.path.realpath(entry.path)
    if entry.is_dir():
        why = "is a link to a folder"
    elif not (target == root or target.startswith(root.rstrip(os.sep) + os.sep)):
        why = "is a link that leads out of the folder searched"
    elif not os.path.isfile(target):
        why = "is a link to something that is not a file"
    else:
        files.append((entry.path, target))
        return
    if notes is not None:
        notes.append(f"{entry.path}: skipped: {why}; name it on the command line to check it")


def rule_folders(cfg: Config, extra: list[Path]) -> list[Path]:
    """Return the rule folders of a run: the shipped rules, then the configuration's, then the command line's."""
    return [shipped_rules_dir(), *cfg.rule_paths, *extra]


class Configs:
    """Configurations by file, discovered per spec folder and read once."""

    def __init__(self, explicit: Config | None) -> None:
        self.explicit = explicit
        self.by_file: dict[str | None, Config] = {}
        self.by_folder: dict[Path, str | None] = {}
        self.resolved: dict[Path, Path] = {}  # a spec's folder as given → resolved

    def for_spec(self, spec: Path) -> Config:
        """Return the configuration a spec is checked under (the explicit one, else the nearest found)."""
        if self.explicit is not None:
            return self.explicit
        folder = self.resolved.get(spec.parent)
        if folder is None:
            folder = self.resolved[spec.parent] = spec.parent.resolve()
        if folder not in self.by_folder:
            found = discover(folder)
            self.by_folder[folder] = str(found) if found else None
        key = self.by_folder[folder]
        if key not in self.by_file:
            try:
                self.by_file[key] = read_config(Path(key)) if key else Config()
            except ConfigError as exc:
                raise UsageError(str(exc)) from None
        return self.by_file[key]


def config_digest(cfg: Config) -> str:
    """Return a digest of a configuration file's content ("none" without one)."""
    if not cfg.file:
        return "none"
    try:
        return hashlib.sha256(Path(cfg.file).read_bytes()).hexdigest()
    except OSError:
        return "unreadable"


def shown_paths(base_dir: Path) -> Callable[[Path], str]:
    """Return a function giving a spec's path as results show it (``check.display_path``), the path of each
    folder worked out once: a repository has thousands of specs in a few dozen folders."""
    folders: dict[str, str] = {}

    def shown(spec: Path) -> str:
        head, tail = os.path.split(str(spec))
        if not head or tail in ("", ".", ".."):
            return display_path(spec, base_dir)
        folder = folders.get(head)
        if folder is None:
            folder = folders[head] = display_path(Path(head), base_dir)
        return tail if folder == "." else f"{folder}/{tail}"

    return shown


# --- changed-only runs ---------------------------------------------------------------------------------


def changed_files(rev: str, cwd: Path) -> set[Path]:
    """Return the files changed since git revision ``rev`` (committed, staged, unstaged, untracked).

    Raises UsageError with git's own reason when git is missing, ``cwd`` is not in a repository or the
    revision is unknown.
    """
    def git(*args: str, what: str) -> str:
        try:
            proc = subprocess.run(["git", *args], cwd=cwd, capture_output=True, text=True, timeout=60)
        except FileNotFoundError:
            raise UsageError(f"--changed-since {rev}: needs git, which is not installed or not on PATH") from None
        except (OSError, subprocess.SubprocessError) as exc:
            raise UsageError(f"--changed-since {rev}: git could not run: {exc}") from None
        if proc.returncode != 0:
            reason = (proc.stderr.strip() or proc.stdout.strip() or f"exit code {proc.returncode}").splitlines()
            raise UsageError(f"--changed-since {rev}: {what} (git: {reason[0]})")
        return proc.stdout

    if not rev or rev.startswith("-"):
        raise UsageError(f"--changed-since: '{rev}' is not a revision")
    top = Path(git("rev-parse", "--show-toplevel", what=f"{cwd} is not in a git repository").strip())
    git("rev-parse", "--verify", "--end-of-options", f"{rev}^{{commit}}",
        what=f"unknown revision '{rev}' (give a commit, branch or tag that exists in this clone; a shallow CI "
             "checkout may need more history fetched)")
    names = git("diff", "--name-only", "-z", rev, "--", what="git diff failed").split("\0")
    names += git("ls-files", "--others", "--exclude-standard", "-z", what="git ls-files failed").split("\0")
    return {(top / n).resolve() for n in names if n}


def _rules_or_config_changed(specs: list[Path], changed: set[Path], configs: Configs, extra: list[Path]) -> bool:
    """Return whether a configuration or a rule file of the run changed (which can change any spec's outcome):
    the configuration a spec is checked under, or one added or deleted in a folder at or above a spec's."""
    config_folders = {p.parent for p in changed if p.name in (CONFIG_NAME, "pyproject.toml")}
    for spec in specs:
        cfg = configs.for_spec(spec)
        if cfg.file and Path(cfg.file).resolve() in changed:
            return True
        if config_folders and any(f in config_folders for f in (spec.parent.resolve(), *spec.parent.resolve().parents)):
            return True
        for folder in rule_folders(cfg, extra)[1:]:
            if any(str(p).startswith(str(folder.resolve()) + os.sep) for p in changed):
                return True
    return False


def _spec_changed(spec: Path, changed: set[Path]) -> bool:
    """Return whether a spec changed, or a duty profile (CSV) beside a spec that names one."""
    if spec.resolve() in changed:
        return True
    try:
        text = read_head(spec, READ_CAP)
    except OSError:
        text = b""
    return b"duty_profile" in text and any(p.parent == spec.parent.resolve() and p.suffix == ".csv" for p in changed)


def _git_top(folder: Path) -> Path | None:
    """Return the top of the git work tree that holds ``folder`` (the nearest folder with a ``.git``), or None."""
    for candidate in (folder, *folder.parents):
        if (candidate / ".git").exists():
            return candidate
    return None


def filter_changed(specs: list[Path], rev: str, configs: Configs, extra: list[Path]) -> list[Path]:
    """Return the specs a run since git revision ``rev`` checks (all, when rules or configuration changed). Each
    spec is compared in its own repository (the one holding it, wherever the run starts from)."""
    tops = {_git_top(folder) for folder in {spec.parent.resolve() for spec in specs}} - {None}
    if not tops:  # no spec in a repository (or none at all): git, run here, says why or checks the revision
        changed = changed_files(rev, Path.cwd())
    else:
        changed = set().union(*(changed_files(rev, top) for top in sorted(tops)))  # type: ignore[type-var]
    if not specs or _rules_or_config_changed(specs, changed, configs, extra):
        return specs
    return [spec for spec in specs if _spec_changed(spec, changed)]
