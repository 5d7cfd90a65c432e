"""Who made a change.

`--by` when given. Otherwise, where the estate is a git checkout, a change that arrives as a
commit (the file's content is the one in HEAD: a pull, a checkout, a merge) is credited to the
author of the last commit of that file; a change that is not committed (an edit saved in place)
is credited to the person editing — git's `user.name`, else the OS user — and marked
"(uncommitted)". Outside git: the OS user. A change that arrives as a commit also carries git's verdict on the
commit's signature (tracking/signatures.py) as an `Attribution`.
"""
from __future__ import annotations

import getpass
import hashlib
import os
import subprocess
from pathlib import Path

UNCOMMITTED = " (uncommitted)"


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


def os_user() -> str:
    try:
        return getpass.getuser()
    except (KeyError, OSError):
        return os.environ.get("USER") or os.environ.get("USERNAME") or "unknown"


def git_blob_id(content: bytes) -> str:
    """The object id git gives this content as a file (SHA-1 of "blob <size>\\0" and the bytes)."""
    return hashlib.sha1(b"blob %d\x00" % len(content) + content).hexdigest()


class Authors:
    def __init__(self, root: Path, by: str | None = None):
        self.root = Path(root)
        self.by = by
        self._git: bool | None = None
        self._map: dict[str, str] | None = None          # rel -> author of its last commit
        self._head: dict[str, str] | None = None         # rel -> blob id in HEAD
        self._editor: str | None = None
        self._signatures = None

    def _run(self, *args: str, timeout: float = 10) -> subprocess.CompletedProcess | None:
        try:
            return subprocess.run(["git", "-C", str(self.root), *args], capture_output=True, text=True,
                                  timeout=timeout)
        except (OSError, subprocess.SubprocessError):
            return None

    def _in_git(self) -> bool:
        if self._git is None:
            out = self._run("rev-parse", "--is-inside-work-tree")
            self._git = out is not None and out.returncode == 0 and out.stdout.strip() == "true"
        return self._git

    def editor(self) -> str:
        """The person editing here: git's user.name, else the OS user."""
        if self._editor is None:
            out = self._run("config", "user.name") if self._in_git() else None
            name = out.stdout.strip() if out is not None and out.returncode == 0 else ""
            self._editor = name or os_user()
        return self._editor

    def _head_blob(self, rel: str) -> str | None:
        if self._head is not None:
            return self._head.get(rel)
        out = self._run("rev-parse", "--verify", "-q", f"HEAD:./{rel}")
        return out.stdout.strip() if out is not None and out.returncode == 0 else None

    def committed(self, rel: str, content: bytes | None) -> bool:
        """Whether this content of the file (None: deleted) is what HEAD holds."""
        head = self._head_blob(rel)
        if content is None:
            return head is None
        return head is not None and head == git_blob_id(content)

    def _last_author(self, rel: str) -> str | None:
        if self._map is not None and rel in self._map:
            return self._map[rel]
        out = self._run("log", "-1", "--format=%an", "--", rel)
        name = out.stdout.strip() if out is not None and out.returncode == 0 else ""
        return name or None

    def __call__(self, rel: str, content: bytes | None = None) -> str:
        """Who to credit with `rel` now holding `content` (None: deleted). Without `content` the
        file is read from disk."""
        if self.by:
            return self.by
        if not self._in_git():
            return os_user()
        if content is None and (self.root / rel).is_file():
            try:
                content = (self.root / rel).read_bytes()
            except OSError:
                content = None
        if self.committed(rel, content):
            if self._signatures is None:
                from tracker.tracking.signatures import Signatures
                self._signatures = Signatures(self.root)
            return Attribution.signed(self._last_author(rel) or self.editor(), self._signatures(rel))
        return self.editor() + UNCOMMITTED

    def preload(self) -> None:
        """One `git log` and one `git ls-tree` for every file at once (a first record of many files)."""
        if self.by or not self._in_git():
            return
        from tracker.tracking.signatures import Signatures
        self._signatures = Signatures(self.root)
        self._signatures.preload()
        out = self._run("log", "--format=%x00%an", "--name-only", "--relative", "--", ".", timeout=120)
        if out is None:
            return
        mapping: dict[str, str] = {}
        author = None
        for line in out.stdout.splitlines():
            if line.startswith("\x00"):
                author = line[1:]
            elif line and author and line not in mapping:
                mapping[line] = author
        self._map = mapping
        tree = self._run("ls-tree", "-r", "-z", "HEAD", "--", ".", timeout=120)
        if tree is not None and tree.returncode == 0:
            head: dict[str, str] = {}
            for entry in tree.stdout.split("\x00"):
                meta, _, path = entry.partition("\t")
                parts = meta.split()
                if len(parts) == 3 and parts[1] == "blob":
                    head[path] = parts[2]
            self._head = head
