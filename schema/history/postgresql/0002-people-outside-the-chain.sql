-- izwatch history on PostgreSQL, migration 2: personal data outside the hash chain; the same as
-- schema/history/0002-people-outside-the-chain.sql (SQLite), in PostgreSQL's dialect.
-- The writing role may read and append; only the owner may erase (UPDATE, which the triggers
-- below limit to an erasure).

CREATE TABLE people (
    actor      TEXT COLLATE "C" PRIMARY KEY,
    name       TEXT COLLATE "C",
    salt       TEXT COLLATE "C",
    erased_at  TEXT COLLATE "C"
);
CREATE UNIQUE INDEX people_name ON people (name) WHERE name IS NOT NULL;

CREATE TABLE notes (
    digest     TEXT COLLATE "C" PRIMARY KEY,
    actor      TEXT COLLATE "C" NOT NULL,
    text       TEXT COLLATE "C",
    salt       TEXT COLLATE "C",
    erased_at  TEXT COLLATE "C"
);
CREATE INDEX notes_actor ON notes (actor, text);

CREATE TABLE rechained (
    revision_id  BIGINT PRIMARY KEY,
    old_hash     TEXT COLLATE "C" NOT NULL,
    at           TEXT COLLATE "C" NOT NULL
);

ALTER TABLE revisions ADD COLUMN signature TEXT COLLATE "C";
ALTER TABLE revisions ADD COLUMN signer TEXT COLLATE "C";

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

CREATE FUNCTION izwatch_person_erase_only() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    IF TG_OP = 'DELETE' THEN
        RAISE EXCEPTION 'people are erased, not deleted';
    END IF;
    IF NEW.actor IS DISTINCT FROM OLD.actor OR NEW.name IS NOT NULL OR NEW.salt IS NOT NULL
            OR NEW.erased_at IS NULL THEN
        RAISE EXCEPTION 'a person can only be erased';
    END IF;
    RETURN NEW;
END
$$;

CREATE FUNCTION izwatch_note_erase_only() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    IF TG_OP = 'DELETE' THEN
        RAISE EXCEPTION 'notes are erased, not deleted';
    END IF;
    IF NEW.digest IS DISTINCT FROM OLD.digest OR NEW.actor IS DISTINCT FROM OLD.actor OR NEW.text IS NOT NULL
            OR NEW.salt IS NOT NULL OR NEW.erased_at IS NULL THEN
        RAISE EXCEPTION 'a note can only be erased';
    END IF;
    RETURN NEW;
END
$$;

CREATE TRIGGER people_erase_only BEFORE UPDATE OR DELETE ON people FOR EACH ROW EXECUTE FUNCTION izwatch_person_erase_only();
CREATE TRIGGER people_no_truncate BEFORE TRUNCATE ON people FOR EACH STATEMENT EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER notes_erase_only BEFORE UPDATE OR DELETE ON notes FOR EACH ROW EXECUTE FUNCTION izwatch_note_erase_only();
CREATE TRIGGER notes_no_truncate BEFORE TRUNCATE ON notes FOR EACH STATEMENT EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER rechained_append_only BEFORE UPDATE OR DELETE ON rechained FOR EACH ROW EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER rechained_no_truncate BEFORE TRUNCATE ON rechained FOR EACH STATEMENT EXECUTE FUNCTION izwatch_append_only();

REVOKE ALL ON people, notes, rechained FROM PUBLIC;
DO $$
BEGIN
    IF EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'izwatch_writer') THEN
        GRANT SELECT, INSERT ON people, notes TO izwatch_writer;
        GRANT SELECT ON rechained, named_revisions TO izwatch_writer;
    END IF;
END
$$;
