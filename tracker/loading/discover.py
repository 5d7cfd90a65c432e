"""The first stage of loading: which site folders and which site files an estate holds.

A path is an estate folder of site folders, or one site folder. A site folder holds
`site.yaml` and optionally more `*.yaml` files. Hidden names are skipped, and a link that leads
out of the estate is not followed (a warning says so). `check`, `report`, the watcher and the
UI all find files here, so they all see the same estate.
"""
from __future__ import annotations

import errno
import os
import stat
from pathlib import Path

from tracker.loading.errors import InputError, LoadWarning

SITE_FILE = "site.yaml"
STATE_DIR = ".izwatch"


class EstateError(Exception):
    """The path itself is unusable (missing, not a folder, holds no site)."""


def inside(root: Path, path: Path) -> bool:
    """True when `path`, links resolved, lies under `root`."""
    try:
        path.resolve().relative_to(root.resolve())
    except (ValueError, OSError):
        return False
    return True


def relative(path: Path, root: Path) -> str:
    """`path` as the user's path names it (posix separators)."""
    try:
        return path.relative_to(root).as_posix()
    except ValueError:
        return path.as_posix()


def not_a_file(path: Path) -> str | None:
    """What a site file's name holds if it is not a regular file (links followed): "a folder",
    "a FIFO (named pipe)", "a link to nothing"...; None for a regular file or one that cannot be
    looked at (reading it says why). Nothing here opens the file: a FIFO would block."""
    try:
        st = os.stat(path)
    except FileNotFoundError:
        return "a link to nothing (its target is missing)" if os.path.islink(path) else None
    except OSError:
        return None
    if stat.S_ISREG(st.st_mode):
        return None
    if stat.S_ISDIR(st.st_mode):
        return "a folder"
    if stat.S_ISFIFO(st.st_mode):
        return "a FIFO (named pipe)"
    if stat.S_ISSOCK(st.st_mode):
        return "a socket"
    return "a device"


def read_regular(path: Path) -> bytes:
    """The bytes of the regular file at `path` (links followed). Opened without waiting, so a
    FIFO put under the name since it was looked at never blocks the reader: anything but a
    regular file raises OSError ("not a regular file"), as does a file that cannot be read."""
    fd = os.open(path, os.O_RDONLY | os.O_NONBLOCK | getattr(os, "O_CLOEXEC", 0))
    try:
        if not stat.S_ISREG(os.fstat(fd).st_mode):
            raise OSError(errno.EINVAL, "not a regular file", str(path))
        os.set_blocking(fd, True)
        with os.fdopen(fd, "rb") as f:
            fd = -1
            return f.read()
    finally:
        if fd >= 0:
            os.close(fd)


def is_site_folder(folder: Path) -> bool:
    """Whether `folder` is a site folder: a name `site.yaml` is taken there (by a file or
    anything else, or it cannot be looked at — loading it then says what is wrong)."""
    return _there(folder / SITE_FILE)


def _there(path: Path) -> bool:
    """Whether a name is taken at `path` (a file, a folder, a FIFO, a dangling link), or cannot be
    looked at: either way the folder is a site whose loading says what is wrong."""
    try:
        os.lstat(path)
    except FileNotFoundError:
        return False
    except OSError:
        return True
    return True


def site_folders(root: Path) -> tuple[bool, list[tuple[Path, str]], list[LoadWarning | InputError]]:
    """(single_site, [(folder, rel)], problems) for the path the user gave.

    A folder whose `site.yaml` is there but is not a regular file (a folder, a FIFO, a dangling
    link), or that cannot be read, is still a site: loading it names the path and what is wrong.
    Site folders are read one level below the estate. A site folder nested deeper is not read,
    and that is an input error naming it (`problems` holds it beside the warnings: tell them apart
    with :func:`split_problems`), so that no part of an estate is left out with exit 0."""
    if not root.exists():
        raise EstateError(f"{root}: no such folder")
    if not root.is_dir():
        raise EstateError(f"{root}: not a folder (give the estate folder or a site folder)")
    try:
        entries = sorted(os.scandir(root), key=lambda e: e.name)
    except OSError as exc:
        raise EstateError(f"{root}: cannot be read ({exc.strerror})") from None
    if _there(root / SITE_FILE):
        return True, [(root, "")], []
    found, problems = [], []
    for entry in entries:
        try:
            is_dir = entry.is_dir()
        except OSError:
            is_dir = False
        if entry.name.startswith(".") or not is_dir:
            continue
        path = Path(entry.path)
        if entry.is_symlink() and not inside(root, path):
            problems.append(LoadWarning(f"{entry.name}/", 1, 1, "not followed: the link points outside the estate"))
            continue
        if _there(path / SITE_FILE):
            found.append((path, entry.name))
        elif any(path.glob("*.yaml")):
            first = sorted(path.glob("*.yaml"))[0].name
            problems.append(LoadWarning(f"{entry.name}/{first}", 1, 1,
                                        f"not read: folder {entry.name}/ has no {SITE_FILE}, so it is not a site"))
        else:
            problems += [nested_site_error(entry.name, rel) for rel in _nested_sites(path, entry.name)]
    if not found and not any(not isinstance(p, LoadWarning) for p in problems):
        raise EstateError(f"{root}: no {SITE_FILE} here or in the folders below it")
    return False, found, problems


def nested_site_error(top: str, rel: str) -> InputError:
    """The error of a site folder `rel` found inside the estate's folder `top`, deeper than site
    folders are read."""
    return InputError(f"{rel}/{SITE_FILE}", 1, 1,
                      f"not read: {rel}/ is a site folder {rel.count('/') + 1} levels below the estate, and "
                      f"site folders are read one level down; check {top}/ as an estate of its own, move "
                      f"{rel}/ up beside the other sites, or hide it (a folder name starting with '.')")


NESTED_DEPTH = 4      # how deep a folder that is not a site is searched for site folders left out


def _nested_sites(folder: Path, rel: str, depth: int = 1) -> list[str]:
    """Site folders inside `folder` (relative names), down to NESTED_DEPTH levels; links not
    followed, hidden names skipped, a site folder's own sub-folders not searched."""
    try:
        subs = sorted(e.name for e in os.scandir(folder)
                      if not e.name.startswith(".") and e.is_dir(follow_symlinks=False))
    except OSError:
        return []
    out = []
    for name in subs:
        if _there(folder / name / SITE_FILE):
            out.append(f"{rel}/{name}")
        elif depth < NESTED_DEPTH:
            out += _nested_sites(folder / name, f"{rel}/{name}", depth + 1)
    return out


def split_problems(problems) -> tuple[list[InputError], list[LoadWarning]]:
    """(errors, warnings) of what :func:`site_folders` found."""
    return ([p for p in problems if not isinstance(p, LoadWarning)],
            [p for p in problems if isinstance(p, LoadWarning)])


def site_files(folder: Path, root: Path, regular_only: bool = False) -> tuple[list[Path], list[LoadWarning]]:
    """The site's *.yaml files, site.yaml first, links out of the estate left out.

    A *.yaml name that is not a regular file (a folder, a FIFO, a dangling link) is listed too, so
    that loading it is an error naming it — unless `regular_only` (the watcher's reading of every
    file, which must never open a FIFO). A folder that cannot be listed gives its site.yaml, whose
    reading then says why."""
    files, warnings = [], []
    try:
        names = sorted(e.name for e in os.scandir(folder) if e.name.endswith(".yaml"))
    except OSError:
        return ([] if regular_only else [folder / SITE_FILE]), warnings
    for name in names:
        path = folder / name
        if name.startswith("."):
            continue
        if path.is_symlink() and not inside(root, path):
            warnings.append(LoadWarning(relative(path, root), 1, 1, "not followed: the link points outside the estate"))
            continue
        if regular_only and not_a_file(path) is not None:
            continue
        files.append(path)
    files.sort(key=lambda p: (p.name != SITE_FILE, p.name))
    return files, warnings


def estate_files(root: Path) -> dict[str, Path]:
    """Every site file under `root` now (rel -> path), by the rules above; {} when the path
    itself is unusable."""
    out: dict[str, Path] = {}
    try:
        _, folders, _ = site_folders(root)
    except EstateError:
        return out
    for folder, _rel in folders:
        for path in site_files(folder, root, regular_only=True)[0]:
            out[path.relative_to(root).as_posix()] = path
    return out


def estate_problems(root: Path) -> list[InputError]:
    """What leaves a part of the estate unread, as input errors naming it: site folders nested
    too deep, site folders that cannot be read, site files' names that hold no regular file (a
    folder, a FIFO, a dangling link) or a file that cannot be read. The watcher's start records
    and shows them (check and report meet them as they load)."""
    out = []
    try:
        _, folders, problems = site_folders(root)
    except EstateError:
        return out
    out += split_problems(problems)[0]
    for folder, rel in folders:
        try:
            os.scandir(folder).close()
        except OSError as exc:
            where = f"{rel}/{SITE_FILE}" if rel else SITE_FILE
            out.append(InputError(where, 1, 1, f"the site folder cannot be read ({exc.strerror})"))
            continue
        for path in site_files(folder, root)[0]:
            rel = relative(path, root)
            what = not_a_file(path)
            if what is not None:
                out.append(InputError(rel, 1, 1, f"is {what}, not a site file"))
            elif not os.access(path, os.R_OK) and os.path.lexists(path):
                out.append(InputError(rel, 1, 1, "cannot be read (Permission denied)"))
    return out
