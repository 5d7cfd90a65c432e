-- izwatch history, migration 1 (PRAGMA user_version = 1).
-- Append-only: rows are only ever inserted (the triggers below refuse UPDATE and DELETE).
-- Each revision carries the hash of the one before it over a canonical serialisation of its
-- content and its child rows (tracker/history/chain.py), so `izwatch verify` detects any row
-- changed or removed afterwards.

CREATE TABLE revisions (
    id            INTEGER PRIMARY KEY,      -- 1, 2, 3 ... in the order written
    at            TEXT NOT NULL,            -- ISO 8601, UTC, milliseconds ("2026-12-01T23:59:01.123Z")
    source        TEXT NOT NULL CHECK (source IN ('watch', 'replace', 'startup', 'ack')),
    file          TEXT,                     -- site file relative to the estate root; NULL for an acknowledgement
    site          TEXT,                     -- site id
    content_hash  TEXT,                     -- sha256 of the file's bytes; NULL when the file was deleted
    valid         INTEGER NOT NULL DEFAULT 1 CHECK (valid IN (0, 1)),  -- 0: the content did not load
    file_prev_id  INTEGER NOT NULL DEFAULT 0,  -- the previous revision of the same file (0: the first)
    author        TEXT NOT NULL,            -- --by, else the git author of the file's last commit, else the OS user
    note          TEXT,                     -- why (--note)
    tool_version  TEXT NOT NULL,
    prev_hash     TEXT NOT NULL,            -- hash of revision id - 1 (64 zeros for the first)
    hash          TEXT NOT NULL UNIQUE
);
-- One successor per state of a file: two processes can never both record the same change.
CREATE UNIQUE INDEX revisions_file_succession ON revisions (file, file_prev_id) WHERE file IS NOT NULL;
CREATE INDEX revisions_file ON revisions (file, id);
CREATE INDEX revisions_at ON revisions (at);

-- File contents, zlib-compressed, by content hash (so changes made while nothing watched can be
-- diffed against the last recorded state at the next start).
CREATE TABLE blobs (
    hash     TEXT PRIMARY KEY,
    size     INTEGER NOT NULL,
    content  BLOB NOT NULL
);

-- Element-level changes: 'flat-1/CU1/3/shower power_kw 7.5 -> 9.5'.
CREATE TABLE changes (
    revision_id  INTEGER NOT NULL REFERENCES revisions (id),
    seq          INTEGER NOT NULL,
    ref          TEXT NOT NULL,
    change       TEXT NOT NULL CHECK (change IN ('added', 'removed', 'modified')),
    field        TEXT,                      -- dotted field name for 'modified'
    old          TEXT,                      -- JSON
    new          TEXT,                      -- JSON
    PRIMARY KEY (revision_id, seq)
);
CREATE INDEX changes_ref ON changes (ref);

-- Check results that changed: the circuit's (or board's) checks after the revision.
CREATE TABLE results (
    revision_id  INTEGER NOT NULL REFERENCES revisions (id),
    ref          TEXT NOT NULL,
    status       TEXT NOT NULL,
    checks       TEXT NOT NULL,             -- JSON: {check id: [status, value, limit, unit]}
    PRIMARY KEY (revision_id, ref)
);
CREATE INDEX results_ref ON results (ref, revision_id);

-- Events: newly-failing, cleared, worse, input-error.
CREATE TABLE events (
    revision_id  INTEGER NOT NULL REFERENCES revisions (id),
    seq          INTEGER NOT NULL,
    ref          TEXT NOT NULL,
    check_id     TEXT,                      -- NULL for input-error
    transition   TEXT NOT NULL CHECK (transition IN ('newly-failing', 'cleared', 'worse', 'input-error')),
    value        REAL,
    limit_value  REAL,
    unit         TEXT,
    detail       TEXT,
    PRIMARY KEY (revision_id, seq)
);
CREATE INDEX events_ref ON events (ref, revision_id);

-- Acknowledgements of an open problem (remedial work booked, risk accepted ...).
CREATE TABLE acks (
    revision_id  INTEGER PRIMARY KEY REFERENCES revisions (id),
    ref          TEXT NOT NULL,
    checks       TEXT NOT NULL              -- JSON list of the check ids not passing when acknowledged
);
CREATE INDEX acks_ref ON acks (ref, revision_id);

CREATE TRIGGER revisions_append_only_u BEFORE UPDATE ON revisions BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
CREATE TRIGGER revisions_append_only_d BEFORE DELETE ON revisions BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
CREATE TRIGGER changes_append_only_u BEFORE UPDATE ON changes BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
CREATE TRIGGER changes_append_only_d BEFORE DELETE ON changes BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
CREATE TRIGGER results_append_only_u BEFORE UPDATE ON results BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
CREATE TRIGGER results_append_only_d BEFORE DELETE ON results BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
CREATE TRIGGER events_append_only_u BEFORE UPDATE ON events BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
CREATE TRIGGER events_append_only_d BEFORE DELETE ON events BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
CREATE TRIGGER acks_append_only_u BEFORE UPDATE ON acks BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
CREATE TRIGGER acks_append_only_d BEFORE DELETE ON acks BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
CREATE TRIGGER blobs_append_only_u BEFORE UPDATE ON blobs BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
CREATE TRIGGER blobs_append_only_d BEFORE DELETE ON blobs BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
