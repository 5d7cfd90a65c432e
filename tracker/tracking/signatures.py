"""Signed authorship: for a change that arrives as a git commit, how that commit was signed, as
git itself verifies it.

git checks a signature against its own configuration: for SSH signatures the allowed-signers
file (`gpg.ssh.allowedSignersFile`, lines of `principal key`), for OpenPGP the keyring. izwatch
adds no trust of its own; it records git's answer:

- ``verified`` — a good signature by a key git trusts (`%G?` = G); the signer is git's principal
  for the key (`%GS`), kept as a person outside the hash chain like any name;
- ``bad`` — the signature does not match the commit (B);
- ``unverified`` — signed, but git cannot vouch for it (unknown or untrusted key, expired or
  revoked key, no allowed-signers file: U, X, Y, R, E, or N for a commit that carries a signature);
- ``unsigned`` — the commit carries no signature.

A file whose bytes differ from the last commit that touched it (an edit not committed yet, or a
file git does not track) did not arrive as a commit: no mark at all.
"""
from __future__ import annotations

import subprocess
from pathlib import Path

VERIFIED, UNVERIFIED, BAD, UNSIGNED = "verified", "unverified", "bad", "unsigned"


def _git(root: Path, *args: str, timeout: float = 30) -> str | None:
    try:
        out = subprocess.run(["git", "-C", str(root), *args], capture_output=True, timeout=timeout)
    except (OSError, subprocess.SubprocessError):
        return None
    return out.stdout.decode("utf-8", "replace") if out.returncode == 0 else None


class Signatures:
    """(mark, signer) of a file's change, per file; answers for each commit are kept."""

    def __init__(self, root: Path):
        self.root = Path(root)
        self._by_commit: dict[str, tuple[str, str | None]] = {}
        self._last: dict[str, str] | None = None      # file -> its last commit (preload)
        self._dirty: set[str] | None = None           # files that differ from it (preload)

    def preload(self) -> None:
        """Two git runs for every file at once (a first record of many files), not four per file."""
        status = _git(self.root, "status", "--porcelain", "-z", "--untracked-files=all", "--", ".", timeout=120)
        log = _git(self.root, "log", "--format=%x00%H", "--name-only", "--relative", "--", ".", timeout=120)
        prefix = _git(self.root, "rev-parse", "--show-prefix")
        if status is None or log is None or prefix is None:
            return
        prefix = prefix.strip()     # porcelain paths are from the repository's top, not from the estate
        self._dirty = {entry[3:][len(prefix):] for entry in status.split("\0")
                       if len(entry) > 3 and entry[3:].startswith(prefix)}
        last: dict[str, str] = {}
        commit = None
        for line in log.splitlines():
            if line.startswith("\x00"):
                commit = line[1:]
            elif line and commit and line not in last:
                last[line] = commit
        self._last = last

    def __call__(self, rel: str) -> tuple[str, str | None] | None:
        if self._last is not None and self._dirty is not None:
            if rel in self._dirty or rel not in self._last:
                return None
            commit = self._last[rel]
        else:
            if _git(self.root, "status", "--porcelain", "--untracked-files=all", "--", rel) != "":
                return None     # changed since its last commit, untracked, or no git here at all
            commit = (_git(self.root, "log", "-1", "--format=%H", "--", rel) or "").strip()
        if not commit:
            return None
        if commit not in self._by_commit:
            self._by_commit[commit] = self._verify(commit)
        return self._by_commit[commit]

    def _verify(self, commit: str) -> tuple[str, str | None]:
        raw = _git(self.root, "cat-file", "commit", commit) or ""
        header = raw.split("\n\n", 1)[0]
        signed = any(line.startswith("gpgsig") for line in header.splitlines())
        if not signed:
            return UNSIGNED, None
        answer = (_git(self.root, "log", "-1", "--format=%G?%x00%GS", commit, timeout=60) or "").strip()
        code, _, signer = answer.partition("\x00")
        if code == "G" and signer.strip():
            return VERIFIED, signer.strip()
        if code == "B":
            return BAD, None
        return UNVERIFIED, None
