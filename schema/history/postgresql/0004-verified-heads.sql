-- izwatch history on PostgreSQL, migration 4: the chain heads `izwatch verify` found intact (the
-- same table and meaning as schema/history/0004-verified-heads.sql).

CREATE TABLE verified_heads (
    revision_id  BIGINT PRIMARY KEY,
    hash         TEXT COLLATE "C" NOT NULL,
    verified_at  TEXT COLLATE "C" NOT NULL,
    tool_version TEXT COLLATE "C" NOT NULL
);

CREATE TRIGGER verified_heads_append_only BEFORE UPDATE OR DELETE ON verified_heads FOR EACH ROW EXECUTE FUNCTION izwatch_append_only();
CREATE TRIGGER verified_heads_no_truncate BEFORE TRUNCATE ON verified_heads FOR EACH STATEMENT EXECUTE FUNCTION izwatch_append_only();

REVOKE ALL ON verified_heads FROM PUBLIC;
DO $$
BEGIN
    IF EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'izwatch_writer') THEN
        GRANT SELECT, INSERT ON verified_heads TO izwatch_writer;
    END IF;
END
$$;
