"""Who made a change: `--by`, else the git author of the file's last commit where the estate is
in a git checkout, else the OS user."""
from __future__ import annotations

import getpass
import os
import subprocess
from pathlib import Path


def os_user() -> str:
    try:
        return getpass.getuser()
    except (KeyError, OSError):
        return os.environ.get("USER") or os.environ.get("USERNAME") or "unknown"


class Attribution(str):
    """A name, with how the git commit it comes from was signed (tracking/signatures.py):
    `signature` is None where the change did not arrive as a commit."""
    signature: str | None = None
    signer: str | None = None

    @classmethod
    def signed(cls, name: str, mark: tuple[str, str | None] | None) -> str:
        if mark is None:
            return name
        out = cls(name)
        out.signature, out.signer = mark
        return out


class Authors:
    def __init__(self, root: Path, by: str | None = None):
        self.root = Path(root)
        self.by = by
        self._git: bool | None = None
        self._map: dict[str, str] | None = None
        self._signatures = None

    def _in_git(self) -> bool:
        if self._git is None:
            try:
                out = subprocess.run(["git", "-C", str(self.root), "rev-parse", "--is-inside-work-tree"],
                                     capture_output=True, text=True, timeout=10)
                self._git = out.returncode == 0 and out.stdout.strip() == "true"
            except (OSError, subprocess.SubprocessError):
                self._git = False
        return self._git

    def __call__(self, rel: str) -> str:
        """Who made the change to `rel`; where it arrived as a git commit, an Attribution that
        also says how the commit was signed."""
        name = self._name(rel)
        if self.by or not self._in_git():
            return name
        if self._signatures is None:
            from tracker.tracking.signatures import Signatures
            self._signatures = Signatures(self.root)
        return Attribution.signed(name, self._signatures(rel))

    def _name(self, rel: str) -> str:
        if self.by:
            return self.by
        if self._in_git():
            if self._map is not None and rel in self._map:
                return self._map[rel]
            try:
                out = subprocess.run(["git", "-C", str(self.root), "log", "-1", "--format=%an", "--", rel],
                                     capture_output=True, text=True, timeout=10)
                name = out.stdout.strip()
                if out.returncode == 0 and name:
                    return name
            except (OSError, subprocess.SubprocessError):
                pass
        return os_user()

    def preload(self) -> None:
        """One `git log` for every file at once (for a first record of many files)."""
        if self.by or not self._in_git():
            return
        from tracker.tracking.signatures import Signatures
        self._signatures = Signatures(self.root)
        self._signatures.preload()
        try:
            out = subprocess.run(["git", "-C", str(self.root), "log", "--format=%x00%an", "--name-only",
                                  "--relative", "--", "."], capture_output=True, text=True, timeout=120)
        except (OSError, subprocess.SubprocessError):
            return
        mapping: dict[str, str] = {}
        author = None
        for line in out.stdout.splitlines():
            if line.startswith("\x00"):
                author = line[1:]
            elif line and author and line not in mapping:
                mapping[line] = author
        self._map = mapping
