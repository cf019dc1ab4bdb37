"""The pre-commit hook: check the drive specifications a commit touches, and only those.

pre-commit passes every staged ``*.yaml``, ``*.yml`` and ``*.csv`` file. A YAML file is a spec when
its first few KiB hold the top-level ``format:`` header line (``format: 1``), or when it lies below a
folder named with ``--specs DIR`` (then a spec whose header is broken is still checked, and reported).
Workflows, compose files and other YAML are left alone. A CSV is a measured duty profile: every spec
in the repository whose ``duty_profile:`` names it is checked again, since its result may have changed.

The chosen specs go to ``rulecheck check --no-progress``; its exit code is the hook's.
"""

from __future__ import annotations

import argparse
import os
import re
import stat
import subprocess
import sys
from collections.abc import Iterable, Sequence
from pathlib import Path

__all__ = ["HEADER_BYTES", "find_specs", "is_spec", "main", "specs_naming"]

HEADER_BYTES = 8192  # how far into a YAML file the `format:` header line is looked for
PROFILE_BYTES = 1 << 20  # a spec is read up to this size to find its duty profile (the default spec size limit)
_YAML = (".yaml", ".yml")
# a top-level key at the start of a line: `format: 1`, `format: "1"`, `format: 1  # comment`
_HEADER = re.compile(rb"^format[ \t]*:[ \t]*(['\"]?)[0-9]+\1[ \t]*(?:#[^\n]*)?\r?$", re.MULTILINE)
# the profile a spec names, in block (`duty_profile: x.csv`) or flow style (`{duty_profile: x.csv}`)
_PROFILE = re.compile(rb"(?:^|[\s{,])duty_profile[ \t]*:[ \t]*['\"]?([A-Za-z0-9_./-]+\.csv)\b")


def _read_head(path: Path, limit: int) -> bytes | None:
    """Return at most ``limit`` bytes of a regular file; None for anything else (a link, a pipe, a device)."""
    flags = os.O_RDONLY | getattr(os, "O_NOFOLLOW", 0) | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_BINARY", 0)
    try:
        fd = os.open(path, flags)
    except OSError:
        return None
    try:
        if not stat.S_ISREG(os.fstat(fd).st_mode):
            return None
        chunks, left = [], limit
        while left > 0:
            chunk = os.read(fd, min(left, 65536))
            if not chunk:
                break
            chunks.append(chunk)
            left -= len(chunk)
        return b"".join(chunks)
    except OSError:
        return None
    finally:
        os.close(fd)


def _below(path: Path, folders: Sequence[Path]) -> bool:
    resolved = Path(os.path.abspath(path))
    return any(resolved == f or f in resolved.parents for f in folders)


def is_spec(path: Path, folders: Sequence[Path] = ()) -> bool:
    """Whether ``path`` is a drive specification: a YAML file with the header, or one below a spec folder."""
    if path.suffix.lower() not in _YAML:
        return False
    head = _read_head(path, HEADER_BYTES)
    if head is None:
        return False
    if folders and _below(path, folders) and not path.name.startswith("."):
        return True  # dot files (.rulecheck.yaml, .pre-commit-config.yaml) are configuration, not specs
    return _HEADER.search(head.removeprefix(b"\xef\xbb\xbf")) is not None


def _repository_yaml(root: Path) -> list[Path]:
    """Every YAML file of the repository (git's index and untracked files; a folder walk outside git)."""
    try:
        out = subprocess.run(
            ["git", "ls-files", "-z", "--cached", "--others", "--exclude-standard", "--", "*.yaml", "*.yml"],
            cwd=root, capture_output=True, check=True, timeout=60,
        ).stdout
        return sorted({root / os.fsdecode(n) for n in out.split(b"\0") if n})
    except (OSError, subprocess.SubprocessError):
        found = []
        for folder, dirs, files in os.walk(root):
            dirs[:] = sorted(d for d in dirs if not d.startswith("."))
            found += [Path(folder) / f for f in sorted(files) if f.endswith(_YAML)]
        return found


def _key(path: Path) -> str:
    return os.path.normcase(os.path.abspath(path))


def specs_naming(profiles: Iterable[Path], candidates: Iterable[Path], folders: Sequence[Path] = ()) -> list[Path]:
    """The specs among ``candidates`` whose ``duty_profile:`` names one of ``profiles`` (from the spec's folder)."""
    wanted = {_key(p) for p in profiles}
    if not wanted:
        return []
    found = []
    for spec in candidates:
        if not is_spec(spec, folders):
            continue
        text = _read_head(spec, PROFILE_BYTES) or b""
        if b"duty_profile" not in text:
            continue
        names = (os.fsdecode(m.group(1)) for m in _PROFILE.finditer(text))
        if any(_key(spec.parent / name) in wanted for name in names):
            found.append(spec)
    return found


def find_specs(files: Sequence[str], folders: Sequence[Path] = (), root: Path | None = None) -> list[Path]:
    """The specs to check for a commit that changes ``files``: the specs among them, then those naming its CSVs."""
    paths = [Path(f) for f in files]
    chosen = [p for p in paths if is_spec(p, folders)]
    profiles = [p for p in paths if p.suffix.lower() == ".csv"]
    if profiles:
        here = root or Path.cwd()
        relative = [Path(os.path.relpath(s, here)) for s in specs_naming(profiles, _repository_yaml(here), folders)]
        chosen += relative
    unique: dict[str, Path] = {}
    for p in chosen:
        unique.setdefault(_key(p), p)
    return list(unique.values())


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="rulecheck-pre-commit",
        description="Check the drive specifications among FILES, and the specs whose duty-profile CSVs are among them.",
    )
    parser.add_argument("files", nargs="*", metavar="FILES", help="changed files, as pre-commit passes them")
    parser.add_argument("--specs", action="append", default=[], metavar="DIR",
                        help="a folder whose YAML files are all specs, header or not (repeatable)")
    parser.add_argument("--dry-run", action="store_true", help="print the specs that would be checked, check none")
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run the hook; return rulecheck's exit code (0 when no spec is concerned)."""
    args = _parser().parse_args(argv)
    folders = [Path(os.path.abspath(d)) for d in args.specs]
    specs = find_specs(args.files, folders)
    if args.dry_run:
        for spec in specs:
            print(spec)
        return 0
    if not specs:
        return 0
    from rulecheck import cli

    return cli.main(["check", "--no-progress", "--", *(str(s) for s in specs)])


def entry() -> None:
    """Console-script entry point (``rulecheck-pre-commit``)."""
    sys.exit(main())


if __name__ == "__main__":  # pragma: no cover
    entry()
