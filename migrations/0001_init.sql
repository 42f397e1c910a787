-- basal schema, first migration.
--
-- Never edit a migration that has been released; add a new one instead.
-- The service runs every pending migration on start (sqlx::migrate!).

-- Small facts about this database file: when it was created, and which
-- version of the property base the service last ran with (so a later
-- change to the base can be noticed, never silently applied to old records).
CREATE TABLE meta (
    key   TEXT PRIMARY KEY NOT NULL,
    value TEXT NOT NULL
) STRICT;

INSERT INTO meta (key, value) VALUES ('created_at', strftime('%Y-%m-%dT%H:%M:%SZ', 'now'));
