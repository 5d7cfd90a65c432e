"""The hash chain: each revision's hash covers its own fields, its child rows and the hash of
the revision before it, in one canonical serialisation (sorted keys, no spaces, UTF-8)."""
from __future__ import annotations

import hashlib
import json

GENESIS = "0" * 64

REVISION_FIELDS = ("id", "at", "source", "file", "site", "content_hash", "valid", "file_prev_id",
                   "author", "note", "tool_version", "prev_hash")


# Fields added later (migration 2: signed authorship): hashed only where set, so that every
# revision recorded before keeps its hash.
OPTIONAL_FIELDS = ("signature", "signer")


def canonical(revision: dict, changes: list, results: list, events: list, acks: list) -> bytes:
    fields = {k: revision[k] for k in REVISION_FIELDS}
    fields.update((k, revision[k]) for k in OPTIONAL_FIELDS if revision.get(k) is not None)
    payload = {
        "revision": fields,
        "changes": [list(r) for r in changes],
        "results": [list(r) for r in results],
        "events": [list(r) for r in events],
        "acks": [list(r) for r in acks],
    }
    return json.dumps(payload, sort_keys=True, separators=(",", ":"), ensure_ascii=False).encode("utf-8")


def revision_hash(revision: dict, changes: list, results: list, events: list, acks: list) -> str:
    return hashlib.sha256(canonical(revision, changes, results, events, acks)).hexdigest()
