-- izwatch history on PostgreSQL, migration 3: revisions the date makes (source 'date'), as
-- schema/history/0003-revisions-of-the-date.sql (SQLite). No row is touched.
ALTER TABLE revisions DROP CONSTRAINT revisions_source_check;
ALTER TABLE revisions ADD CONSTRAINT revisions_source_check
    CHECK (source IN ('watch', 'replace', 'startup', 'ack', 'date'));
