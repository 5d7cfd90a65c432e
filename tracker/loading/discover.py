"""The first stage of loading: which site folders and which site files an estate holds.

A path is an estate folder of site folders, or one site folder. A site folder holds
`site.yaml` and optionally more `*.yaml` files. Hidden names are skipped, and a link that leads
out of the estate is not followed (a warning says so). `check`, `report`, the watcher and the
UI all find files here, so they all see the same estate.
"""
from __future__ import annotations

import os
from pathlib import Path

from tracker.loading.errors import LoadWarning

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


def site_folders(root: Path) -> tuple[bool, list[tuple[Path, str]], list[LoadWarning]]:
    """(single_site, [(folder, rel)], warnings) for the path the user gave."""
    if not root.exists():
        raise EstateError(f"{root}: no such folder")
    if not root.is_dir():
        raise EstateError(f"{root}: not a folder (give the estate folder or a site folder)")
    if (root / SITE_FILE).is_file():
        return True, [(root, "")], []
    found, warnings = [], []
    try:
        entries = sorted(os.scandir(root), key=lambda e: e.name)
    except OSError as exc:
        raise EstateError(f"{root}: cannot be read ({exc.strerror})") from None
    for entry in entries:
        if entry.name.startswith(".") or not entry.is_dir():
            continue
        path = Path(entry.path)
        if entry.is_symlink() and not inside(root, path):
            warnings.append(LoadWarning(f"{entry.name}/", 1, 1, "not followed: the link points outside the estate"))
            continue
        if (path / SITE_FILE).is_file():
            found.append((path, entry.name))
        elif any(path.glob("*.yaml")):
            first = sorted(path.glob("*.yaml"))[0].name
            warnings.append(LoadWarning(f"{entry.name}/{first}", 1, 1,
                                        f"not read: folder {entry.name}/ has no {SITE_FILE}, so it is not a site"))
    if not found:
        raise EstateError(f"{root}: no {SITE_FILE} here or in the folders below it")
    return False, found, warnings


def site_files(folder: Path, root: Path) -> tuple[list[Path], list[LoadWarning]]:
    """The site's *.yaml files, site.yaml first, links out of the estate left out."""
    files, warnings = [], []
    for path in sorted(folder.glob("*.yaml")):
        if path.name.startswith(".") or not path.is_file():
            continue
        if path.is_symlink() and not inside(root, path):
            warnings.append(LoadWarning(relative(path, root), 1, 1, "not followed: the link points outside the estate"))
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
        for path in site_files(folder, root)[0]:
            out[path.relative_to(root).as_posix()] = path
    return out
