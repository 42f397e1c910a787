-- Identification snapshots stored once.
--
-- Until now every sample row carried its identification snapshot (about
-- 15 KB of JSON, 3 KB compressed) and every revision carried it again
-- inside its whole-record document, so a record written once held it
-- twice and a record edited five times held it six times. A snapshot now
-- lives once in `snapshots`; a sample row and each of its revisions point
-- at the one they were concluded with, and revisions whose snapshot did
-- not change (an edit of the notes, a deletion, a restore) share it.
--
-- The body is the same document as before: the identify response as JSON,
-- compressed with DEFLATE (zlib). Snapshots are never changed or removed.

CREATE TABLE snapshots (
    id           INTEGER PRIMARY KEY,
    base_version TEXT NOT NULL,
    body         BLOB NOT NULL
) STRICT;

-- The snapshot of the live state. Set on every row (the store refuses to
-- read a row without one); nullable only because SQLite adds a column
-- with a foreign key that way.
ALTER TABLE samples ADD COLUMN snapshot INTEGER REFERENCES snapshots (id);

-- The snapshot of that revision. NULL on revisions written before this
-- migration: their `record` document still holds its own identification.
-- When set, `record` holds the other fields and `identification` is null.
ALTER TABLE sample_revisions ADD COLUMN snapshot INTEGER REFERENCES snapshots (id);

-- Existing rows: each live snapshot moves over unchanged (same bytes,
-- same base version), numbered by the sample's creation order.
INSERT INTO snapshots (id, base_version, body)
SELECT seq, base_version, identification FROM samples;

UPDATE samples SET snapshot = seq;

ALTER TABLE samples DROP COLUMN identification;
