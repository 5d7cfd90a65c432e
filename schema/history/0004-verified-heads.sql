-- izwatch history, migration 4: the chain heads `izwatch verify` found intact.
-- A full `verify` (SQLite's integrity check, the append-only triggers, every revision's hash
-- recomputed) records the head it reached here. A report then recomputes only the revisions after
-- the latest of these heads, after checking that this head still has the hash recorded for it;
-- the revisions up to it were checked in full when it was recorded. `verify` itself reads no
-- row of this table: it always checks everything.

CREATE TABLE verified_heads (
    revision_id  INTEGER PRIMARY KEY,       -- the last revision of the chain that verified
    hash         TEXT NOT NULL,             -- its hash then
    verified_at  TEXT NOT NULL,             -- when (ISO 8601, UTC)
    tool_version TEXT NOT NULL
);

CREATE TRIGGER verified_heads_append_only_u BEFORE UPDATE ON verified_heads BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
CREATE TRIGGER verified_heads_append_only_d BEFORE DELETE ON verified_heads BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
