-- Projects can be renamed and given a new sample-code scheme. Sample codes
-- already written never change; only the codes suggested from then on
-- follow the new scheme.
--
-- updated_at: when the project was last edited (NULL until its first
-- edit). project_changes keeps every earlier name and scheme, one row per
-- edit, so an edit leaves a trace.

ALTER TABLE projects ADD COLUMN updated_at TEXT;

CREATE TABLE project_changes (
    id          INTEGER PRIMARY KEY,
    code        TEXT NOT NULL REFERENCES projects (code),
    name        TEXT NOT NULL,   -- the name before the edit
    code_scheme TEXT NOT NULL,   -- the scheme before the edit
    changed_at  TEXT NOT NULL    -- ISO 8601 UTC, when the edit was made
) STRICT;

CREATE INDEX project_changes_code ON project_changes (code, id);
