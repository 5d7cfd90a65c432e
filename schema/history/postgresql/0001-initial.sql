-- izwatch history on PostgreSQL, migration 1: the same tables, columns and meaning as
-- schema/history/0001-initial.sql (SQLite); tracker/history/server.py runs it as one script.
-- Text compares byte by byte (COLLATE "C"), as in SQLite, so that ordered reads and the ref range
-- queries give the same rows in the same order whatever the database's locale.
-- Append-only in the server: triggers refuse UPDATE, DELETE and TRUNCATE, and the writing role
-- izwatch_writer gets SELECT and INSERT only.

CREATE TABLE revisions (
    id            BIGINT PRIMARY KEY,
    at            TEXT COLLATE "C" NOT NULL,
    source        TEXT COLLATE "C" NOT NULL CHECK (source IN ('watch', 'replace', 'startup', 'ack')),
    file          TEXT COLLATE "C",
    site          TEXT COLLATE "C",
    content_hash  TEXT COLLATE "C",
    valid         INTEGER NOT NULL DEFAULT 1 CHECK (valid IN (0, 1)),
    file_prev_id  BIGINT NOT NULL DEFAULT 0,
    author        TEXT COLLATE "C" NOT NULL,
    note          TEXT COLLATE "C",
    tool_version  TEXT COLLATE "C" NOT NULL,
    prev_hash     TEXT COLLATE "C" NOT NULL,
    hash          TEXT COLLATE "C" NOT NULL UNIQUE
);
CREATE UNIQUE INDEX revisions_file_succession ON revisions (file, file_prev_id) WHERE file IS NOT NULL;
CREATE INDEX revisions_file ON revisions (file, id);
CREATE INDEX revisions_at ON revisions (at);

CREATE TABLE blobs (
    hash     TEXT COLLATE "C" PRIMARY KEY,
    size     BIGINT NOT NULL,
    content  BYTEA NOT NULL
);

CREATE TABLE changes (
    revision_id  BIGINT NOT NULL REFERENCES revisions (id),
    seq          INTEGER NOT NULL,
    ref          TEXT COLLATE "C" NOT NULL,
    change       TEXT COLLATE "C" NOT NULL CHECK (change IN ('added', 'removed', 'modified')),
    field        TEXT COLLATE "C",
    old          TEXT COLLATE "C",
    new          TEXT COLLATE "C",
    PRIMARY KEY (revision_id, seq)
);
CREATE INDEX changes_ref ON changes (ref);

CREATE TABLE results (
    revision_id  BIGINT NOT NULL REFERENCES revisions (id),
    ref          TEXT COLLATE "C" NOT NULL,
    status       TEXT COLLATE "C" NOT NULL,
    checks       TEXT COLLATE "C" NOT NULL,
    PRIMARY KEY (revision_id, ref)
);
CREATE INDEX results_ref ON results (ref, revision_id);

CREATE TABLE events (
    revision_id  BIGINT NOT NULL REFERENCES revisions (id),
    seq          INTEGER NOT NULL,
    ref          TEXT COLLATE "C" NOT NULL,
    check_id     TEXT COLLATE "C",
    transition   TEXT COLLATE "C" NOT NULL CHECK (transition IN ('newly-failing', 'cleared', 'worse', 'input-error')),
    value        DOUBLE PRECISION,
    limit_value  DOUBLE PRECISION,
    unit         TEXT COLLATE "C",
    detail       TEXT COLLATE "C",
    PRIMARY KEY (revision_id, seq)
);
CREATE INDEX events_ref ON events (ref, revision_id);

CREATE TABLE acks (
    revision_id  BIGINT PRIMARY KEY REFERENCES revisions (id),
    ref          TEXT COLLATE "C" NOT NULL,
    checks       TEXT COLLATE "C" NOT NULL
);
CREATE INDEX acks_ref ON acks (ref, revision_id);

CREATE FUNCTION izwatch_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    RAISE EXCEPTION 'the history is append-only (% on %)', TG_OP, TG_TABLE_NAME;
END
$$;

CREATE TRIGGER revisions_append_only BEFORE UPDATE OR DELETE ON revisions FOR EACH ROW EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER revisions_no_truncate BEFORE TRUNCATE ON revisions FOR EACH STATEMENT EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER changes_append_only BEFORE UPDATE OR DELETE ON changes FOR EACH ROW EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER changes_no_truncate BEFORE TRUNCATE ON changes FOR EACH STATEMENT EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER results_append_only BEFORE UPDATE OR DELETE ON results FOR EACH ROW EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER results_no_truncate BEFORE TRUNCATE ON results FOR EACH STATEMENT EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER events_append_only BEFORE UPDATE OR DELETE ON events FOR EACH ROW EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER events_no_truncate BEFORE TRUNCATE ON events FOR EACH STATEMENT EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER acks_append_only BEFORE UPDATE OR DELETE ON acks FOR EACH ROW EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER acks_no_truncate BEFORE TRUNCATE ON acks FOR EACH STATEMENT EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER blobs_append_only BEFORE UPDATE OR DELETE ON blobs FOR EACH ROW EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER blobs_no_truncate BEFORE TRUNCATE ON blobs FOR EACH STATEMENT EXECUTE FUNCTION izwatch_append_only();

-- Privileges: nobody but the owner by default; the writing role reads and appends, nothing more.
REVOKE ALL ON revisions, blobs, changes, results, events, acks, _izwatch_migrations FROM PUBLIC;
DO $$
BEGIN
    IF EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'izwatch_writer') THEN
        EXECUTE format('GRANT USAGE ON SCHEMA %I TO izwatch_writer', current_schema());
        GRANT SELECT, INSERT ON revisions, blobs, changes, results, events, acks TO izwatch_writer;
        GRANT SELECT ON _izwatch_migrations TO izwatch_writer;
    END IF;
END
$$;
