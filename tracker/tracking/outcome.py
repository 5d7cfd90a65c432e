"""What one change of one file did, and the history's revision that records it."""
from __future__ import annotations

from dataclasses import dataclass, field

from tracker.history import NewRevision
from tracker.loading.errors import InputError
from tracker.tracking.diff import Change
from tracker.tracking.warnings import warnings_note


@dataclass
class FileOutcome:
    """What one change of one file did."""

    file: str
    folder: str
    site_id: str | None
    content: bytes | None          # None: the file was deleted
    content_hash: str | None
    valid: bool
    errors: list[InputError] = field(default_factory=list)
    changes: list[Change] = field(default_factory=list)
    events: list[dict] = field(default_factory=list)
    results: list[tuple] = field(default_factory=list)
    rechecked: int = 0             # circuits whose checks were re-run
    first_record: bool = False     # the first record of the file (nothing before it to compare with)
    warnings: list = field(default_factory=list)     # the file's warnings as it loads now (LoadWarning)
    new_warnings: list = field(default_factory=list)  # those this save brought
    misspelt: list[str] = field(default_factory=list)  # element changes that come only from an unknown key
    along: list["FileOutcome"] = field(default_factory=list)   # files saved with it: one change across files
    loads_again: bool = False      # the file had an input error and loads now


def to_revisions(outcome: FileOutcome, source: str, author_of, note: str | None = None) -> list[NewRevision]:
    """The revisions recording `outcome` and the files that changed with it, to be written in one
    transaction: each file saved alongside first (its content and its own element changes), then
    the saved file with the events and results of the whole change. `author_of(file, content)`."""
    revs = []
    for other in outcome.along:
        revs.append(to_revision(other, source, author_of(other.file, other.content),
                                _joined(note, f"one change with {outcome.file}")))
    with_files = ", ".join(o.file for o in outcome.along)
    revs.append(to_revision(outcome, source, author_of(outcome.file, outcome.content),
                            _joined(note, f"one change with {with_files}") if with_files else note))
    return revs


def _joined(note: str | None, more: str) -> str:
    return f"{note}; {more}" if note else more


def to_revision(outcome: FileOutcome, source: str, author: str, note: str | None = None) -> NewRevision:
    """The revision recording `outcome` (`source`: startup, watch, replace)."""
    return NewRevision(
        source=source, author=str(author), file=outcome.file, site=outcome.site_id, content=outcome.content,
        content_hash=outcome.content_hash, valid=outcome.valid, note=warnings_note(outcome, note),
        changes=[c.as_row() for c in outcome.changes], results=outcome.results, events=outcome.events,
        signature=getattr(author, "signature", None), signer=getattr(author, "signer", None),
    )
