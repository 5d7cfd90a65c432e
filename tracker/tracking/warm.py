"""What a watcher's next start may take as it is, without reading a site through.

For each site folder whose files all loaded, a brief: its files' content hashes, the site's id,
how many circuits it has and how many of them fail, and the warnings its files gave. A brief is a
function of the files' content and of the rules that read and check them, nothing else: it is
kept beside the history (`<history file>.warm.json`) with a fingerprint of those rules (every
file of the `tracker` package and of the site schema), and trusted at a start only when the
fingerprint is the same and every file of the folder has the content the brief names and the
history's latest revision of it records. Anything else — no brief, another fingerprint, a file
changed, a brief that does not read — and the folder is read and checked as before.

The brief is not part of the history (no revision reads it; `verify` does not look at it):
deleting it costs one slower start. A site taken from its brief is read through (from its
recorded content) on its first need: an edit, or a reader asking for its model or results.
"""
from __future__ import annotations

import dataclasses
import datetime
import hashlib
import json
import os
import tempfile
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

from tracker.inspection.due import OVERDUE, DueItem, site_items, status_on
from tracker.loading.errors import LoadWarning

FORMAT = "izwatch-warm-start/1"


@dataclass(frozen=True, slots=True)
class SiteBrief:
    """One clean site folder as it was last read: enough to count it and to read it again."""

    site_id: str
    hashes: tuple[tuple[str, str], ...]     # (file, sha256 of its content), files in order
    circuits: int
    failing: int                            # circuits whose status is fail
    warnings: tuple[LoadWarning, ...] = ()
    # Every deadline item of the site on the day `due_from` (tracker.inspection.due.site_items);
    # the set of items and their dates stay the same until `due_until`, the first later date
    # written in the site's inspections (an inspection, work done or confirmed on that day is
    # then counted), so on any day in between only their status is to be worked out again.
    due: tuple[DueItem, ...] = ()
    due_from: datetime.date | None = None      # None: not known (the site is read for its deadlines)
    due_until: datetime.date | None = None     # None: no later date in the site's inspections

    def files(self) -> dict[str, str]:
        return dict(self.hashes)

    def overdue_on(self, day: datetime.date) -> list[DueItem] | None:
        """The site's items overdue on `day` (as tracker.inspection.events.overdue_items gives
        them); None where the brief cannot tell: a day before it was made, or on or after a date
        of the site's inspections that lay ahead then."""
        if self.due_from is None or day < self.due_from or (self.due_until is not None and day >= self.due_until):
            return None
        # (whether an item is overdue does not depend on its due-soon days: none are passed)
        return [dataclasses.replace(i, status=OVERDUE) for i in self.due
                if status_on(i.due, day, 0, i.done_on) == OVERDUE]


def _dates_in(value, out: list) -> None:
    if isinstance(value, datetime.date):
        out.append(value)
    elif dataclasses.is_dataclass(value) and not isinstance(value, type):
        for f in dataclasses.fields(value):
            _dates_in(getattr(value, f.name), out)
    elif isinstance(value, (list, tuple)):
        for v in value:
            _dates_in(v, out)


def deadline_brief(site, origin, day: datetime.date) -> dict:
    """The `due`, `due_from` and `due_until` of a site's brief made on `day` (`origin`: the site's
    network-operator outcome, SiteResult.notification)."""
    dates: list = []
    _dates_in(site.inspections, dates)
    later = [d for d in dates if d > day]
    return {"due": tuple(site_items(site, day, origin)), "due_from": day, "due_until": min(later) if later else None}


def _date(text):
    return None if text is None else datetime.date.fromisoformat(text)


def _item(site_id: str, row) -> DueItem:
    what, due, source, ref, done_on, duty, about = row
    return DueItem(site_id, str(what), _date(due), "", str(source), str(ref), _date(done_on), str(duty),
                   tuple(about))


def _item_row(i: DueItem) -> list:
    return [i.what, i.due.isoformat(), i.source, i.ref, i.done_on.isoformat() if i.done_on else None, i.duty,
            list(i.about)]


@lru_cache(maxsize=1)
def rules_fingerprint() -> str:
    """SHA-256 over every file of the `tracker` package and of the site schema (names and bytes):
    any change to the code or data that reads or checks a site gives another fingerprint (so
    does a change elsewhere in the package: when in doubt, a site is read again)."""
    from tracker.schemas_access import schema_dir

    here = Path(__file__).resolve().parent.parent
    h = hashlib.sha256()
    for base in (here, schema_dir()):
        for path in sorted(base.rglob("*")):
            if not path.is_file() or "__pycache__" in path.parts or path.suffix in (".pyc", ".pyo"):
                continue
            h.update(path.relative_to(base).as_posix().encode("utf-8") + b"\0")
            h.update(hashlib.sha256(path.read_bytes()).digest())
    return h.hexdigest()


def record_path(history_path: Path | None) -> Path | None:
    """Where the briefs of a history's estate are kept (None: a history not in a file)."""
    if history_path is None:
        return None
    history_path = Path(history_path)
    return history_path.with_name(history_path.name + ".warm.json")


def _warning(row) -> LoadWarning:
    file, line, col, message, path = row
    return LoadWarning(str(file), int(line), int(col), str(message), tuple(path))


def load(path: Path | None) -> dict[str, SiteBrief]:
    """folder -> brief, from a record written with today's rules; {} when there is none that
    can be trusted (missing, unreadable, another fingerprint or format)."""
    if path is None:
        return {}
    try:
        doc = json.loads(path.read_bytes())
        if doc.get("format") != FORMAT or doc.get("rules") != rules_fingerprint():
            return {}
        out = {}
        for folder, b in doc["sites"].items():
            site_id = str(b["id"])
            out[str(folder)] = SiteBrief(site_id, tuple((str(f), str(s)) for f, s in b["files"]),
                                         int(b["circuits"]), int(b["failing"]),
                                         tuple(_warning(w) for w in b.get("warnings", ())),
                                         tuple(_item(site_id, row) for row in b.get("due", ())),
                                         _date(b.get("due_from")), _date(b.get("due_until")))
        return out
    except (OSError, ValueError, KeyError, TypeError, AttributeError):   # (a bad date is a ValueError)
        return {}


def save(path: Path | None, briefs: dict[str, SiteBrief]) -> None:
    """Write the record in place of the last (atomically; a failure to write only costs the next
    start its speed, so it is not an error)."""
    if path is None:
        return
    doc = {"format": FORMAT, "rules": rules_fingerprint(), "sites": {
        folder: {"id": b.site_id, "files": [list(x) for x in b.hashes], "circuits": b.circuits,
                 "failing": b.failing,
                 "warnings": [[w.file, w.line, w.col, w.message, list(w.path)] for w in b.warnings],
                 "due": [_item_row(i) for i in b.due],
                 "due_from": b.due_from.isoformat() if b.due_from else None,
                 "due_until": b.due_until.isoformat() if b.due_until else None}
        for folder, b in sorted(briefs.items())}}
    tmp = None
    try:
        fd, tmp = tempfile.mkstemp(prefix=".warm-", dir=path.parent)
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            json.dump(doc, fh, separators=(",", ":"), ensure_ascii=False)
        os.replace(tmp, path)
        tmp = None
    except OSError:
        pass
    finally:
        if tmp is not None:
            try:
                os.unlink(tmp)
            except OSError:
                pass
