-- The sample log: projects, samples, their full history, and free-text
-- search.
--
-- Records are never overwritten in place without a trace: every change
-- appends a row to sample_revisions holding the whole record as it was
-- after that change, and a deletion only sets deleted_at (a restorable
-- tombstone). The live row in samples is the newest state, kept for
-- filtering and keyset pagination.

CREATE TABLE projects (
    code        TEXT PRIMARY KEY NOT NULL,   -- short code, a-z 0-9 - _
    name        TEXT NOT NULL,
    -- Pattern for suggesting the next sample code: literal text with
    -- {year} (four digits), {yy} (two digits) and {seq:N} (a sequence
    -- zero-padded to N digits).
    code_scheme TEXT NOT NULL DEFAULT '{seq:4}',
    created_at  TEXT NOT NULL
) STRICT;

INSERT INTO projects (code, name, code_scheme, created_at)
VALUES ('default', 'Default project', 'S-{seq:4}', strftime('%Y-%m-%dT%H:%M:%fZ', 'now'));

CREATE TABLE samples (
    seq                      INTEGER PRIMARY KEY,      -- creation order; the keyset, newest first
    id                       TEXT NOT NULL UNIQUE,     -- UUID v4, never changes
    project                  TEXT NOT NULL REFERENCES projects (code),
    sample_code              TEXT NOT NULL,
    revision                 INTEGER NOT NULL CHECK (revision >= 1),
    created_at               TEXT NOT NULL,            -- ISO 8601 UTC
    updated_at               TEXT NOT NULL,
    deleted_at               TEXT,                     -- tombstone; NULL while live
    collected_on             TEXT,                     -- ISO 8601 date
    collector                TEXT,
    station                  TEXT,
    latitude                 REAL CHECK (latitude BETWEEN -90 AND 90),
    longitude                REAL CHECK (longitude BETWEEN -180 AND 180),
    coordinate_uncertainty_m REAL CHECK (coordinate_uncertainty_m > 0),
    setting                  TEXT,
    lithology                TEXT,
    observations             TEXT NOT NULL DEFAULT '{}' CHECK (json_valid(observations)),
    field_id                 TEXT,
    notes                    TEXT,
    -- The identify response at save time, as JSON compressed with DEFLATE
    -- (zlib): about 15 KB of JSON becomes about 3 KB, which matters at a
    -- million records and again in every revision.
    identification           BLOB NOT NULL,
    base_version             TEXT NOT NULL,
    -- A code stays taken while its sample is tombstoned, so a restore can
    -- never collide.
    UNIQUE (project, sample_code)
) STRICT;

-- Filters of the history page and the list API, each with the keyset.
CREATE INDEX samples_live_seq      ON samples (seq DESC) WHERE deleted_at IS NULL;
CREATE INDEX samples_project_seq   ON samples (project, seq DESC) WHERE deleted_at IS NULL;
CREATE INDEX samples_field_id_seq  ON samples (field_id, seq DESC) WHERE deleted_at IS NULL;
CREATE INDEX samples_collector_seq ON samples (collector, seq DESC) WHERE deleted_at IS NULL;
CREATE INDEX samples_setting_seq   ON samples (setting, seq DESC) WHERE deleted_at IS NULL;
CREATE INDEX samples_collected_on  ON samples (collected_on, seq) WHERE deleted_at IS NULL;

CREATE TABLE sample_revisions (
    sample_id   TEXT NOT NULL REFERENCES samples (id),
    revision    INTEGER NOT NULL,
    recorded_at TEXT NOT NULL,
    author      TEXT,                                  -- who made the change, as they gave it
    action      TEXT NOT NULL CHECK (action IN ('create', 'update', 'delete', 'restore', 'import')),
    record      BLOB NOT NULL,                         -- the whole record after this change, JSON, zlib
    PRIMARY KEY (sample_id, revision)
) STRICT, WITHOUT ROWID;

-- Free text over station, lithology and notes (SQLite FTS5, kept in step
-- with samples by the triggers below; only the store's search function
-- queries it).
CREATE VIRTUAL TABLE samples_fts USING fts5 (
    station, lithology, notes,
    content = 'samples', content_rowid = 'seq',
    tokenize = 'unicode61 remove_diacritics 2'
);

CREATE TRIGGER samples_fts_insert AFTER INSERT ON samples BEGIN
    INSERT INTO samples_fts (rowid, station, lithology, notes)
    VALUES (new.seq, new.station, new.lithology, new.notes);
END;

CREATE TRIGGER samples_fts_delete AFTER DELETE ON samples BEGIN
    INSERT INTO samples_fts (samples_fts, rowid, station, lithology, notes)
    VALUES ('delete', old.seq, old.station, old.lithology, old.notes);
END;

CREATE TRIGGER samples_fts_update AFTER UPDATE OF station, lithology, notes ON samples BEGIN
    INSERT INTO samples_fts (samples_fts, rowid, station, lithology, notes)
    VALUES ('delete', old.seq, old.station, old.lithology, old.notes);
    INSERT INTO samples_fts (rowid, station, lithology, notes)
    VALUES (new.seq, new.station, new.lithology, new.notes);
END;
