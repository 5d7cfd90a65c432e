-- izwatch history, migration 2: personal data outside the hash chain.
-- The chain hashes a pseudonymous actor id (revisions.author = 'actor:…') and a salted digest of
-- each note (revisions.note = 'note:…'); the names and note texts they stand for live in `people`
-- and `notes`, where an erasure (izwatch erase) blanks them and the chain still verifies.
-- A Python step (tracker/history/people.py) moves the names and notes of the revisions recorded
-- before this migration into these tables and re-chains them; `rechained` keeps each such
-- revision's hash from before, so a chain head kept from then can still be matched.

CREATE TABLE people (
    actor      TEXT PRIMARY KEY,            -- 'actor:' + 24 hex of SHA-256(salt || name)
    name       TEXT,                        -- NULL once erased
    salt       TEXT,                        -- 32 hex; NULL once erased
    erased_at  TEXT                         -- when it was erased (ISO 8601, UTC)
);
CREATE UNIQUE INDEX people_name ON people (name) WHERE name IS NOT NULL;

CREATE TABLE notes (
    digest     TEXT PRIMARY KEY,            -- 'note:' + 64 hex of SHA-256(salt || text)
    actor      TEXT NOT NULL,               -- whose note it is (erased with the person)
    text       TEXT,                        -- NULL once erased
    salt       TEXT,                        -- NULL once erased
    erased_at  TEXT
);
CREATE INDEX notes_actor ON notes (actor, text);

CREATE TABLE rechained (
    revision_id  INTEGER PRIMARY KEY,       -- a revision recorded before migration 2
    old_hash     TEXT NOT NULL,             -- its hash then (names and notes in the chain)
    at           TEXT NOT NULL              -- when it was re-chained
);

-- Signed authorship: for a change that arrives as a git commit, how the commit was signed
-- ('verified', 'unverified', 'bad', 'unsigned') and the verified signer's actor id. NULL: the
-- change did not arrive as a commit. Hashed only where set, so older revisions keep their hash.
ALTER TABLE revisions ADD COLUMN signature TEXT;
ALTER TABLE revisions ADD COLUMN signer TEXT;

-- The revisions with names and note texts in place of their ids ('erased' where erased).
CREATE VIEW named_revisions AS
SELECT r.id, r.at, r.source, r.file, r.site, r.content_hash, r.valid, r.file_prev_id,
       CASE WHEN p.actor IS NULL THEN r.author WHEN p.name IS NULL THEN 'erased' ELSE p.name END AS author,
       CASE WHEN r.note IS NULL THEN NULL WHEN n.digest IS NULL THEN r.note
            WHEN n.text IS NULL THEN 'erased' ELSE n.text END AS note,
       r.signature,
       CASE WHEN r.signer IS NULL THEN NULL WHEN s.actor IS NULL THEN r.signer
            WHEN s.name IS NULL THEN 'erased' ELSE s.name END AS signer,
       r.tool_version, r.prev_hash, r.hash
FROM revisions r
LEFT JOIN people p ON p.actor = r.author
LEFT JOIN notes n ON n.digest = r.note
LEFT JOIN people s ON s.actor = r.signer;

-- Nothing is removed; the only change allowed is an erasure (the text and salt blanked, once).
CREATE TRIGGER people_keep BEFORE DELETE ON people BEGIN SELECT RAISE(ABORT, 'people are erased, not deleted'); END;
CREATE TRIGGER people_erase_only BEFORE UPDATE ON people
WHEN NEW.actor IS NOT OLD.actor OR NEW.name IS NOT NULL OR NEW.salt IS NOT NULL OR NEW.erased_at IS NULL
BEGIN SELECT RAISE(ABORT, 'a person can only be erased'); END;
CREATE TRIGGER notes_keep BEFORE DELETE ON notes BEGIN SELECT RAISE(ABORT, 'notes are erased, not deleted'); END;
CREATE TRIGGER notes_erase_only BEFORE UPDATE ON notes
WHEN NEW.digest IS NOT OLD.digest OR NEW.actor IS NOT OLD.actor OR NEW.text IS NOT NULL OR NEW.salt IS NOT NULL
     OR NEW.erased_at IS NULL
BEGIN SELECT RAISE(ABORT, 'a note can only be erased'); END;
CREATE TRIGGER rechained_append_only_u BEFORE UPDATE ON rechained BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
CREATE TRIGGER rechained_append_only_d BEFORE DELETE ON rechained BEGIN SELECT RAISE(ABORT, 'the history is append-only'); END;
