-- Questioning drafts: an identification in progress, stored so that a
-- reload, a closed lid or a crashed browser loses nothing.
--
-- `observations` is the identify request object of the contract (JSON, the
-- same vocabulary as the API); `skipped` is a JSON array of the properties
-- the user recorded as "not tested", so the flow does not ask them again.
-- A discarded draft keeps its row with `discarded_at` set (a tombstone).
CREATE TABLE drafts (
    id           TEXT PRIMARY KEY NOT NULL,          -- UUID v4, never changes
    created_at   TEXT NOT NULL,                      -- ISO 8601 UTC
    updated_at   TEXT NOT NULL,                      -- ISO 8601 UTC
    observations TEXT NOT NULL DEFAULT '{}' CHECK (json_valid(observations)),
    skipped      TEXT NOT NULL DEFAULT '[]' CHECK (json_valid(skipped)),
    answers      INTEGER NOT NULL DEFAULT 0,         -- how many observations are recorded
    finished_at  TEXT,                               -- set when the flow reached its results
    discarded_at TEXT                                -- tombstone
) STRICT;

-- The drafts page lists open drafts, most recently touched first.
CREATE INDEX drafts_open_by_update ON drafts (updated_at DESC) WHERE discarded_at IS NULL;
