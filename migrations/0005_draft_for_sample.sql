-- A draft can re-examine a saved sample: it starts from the sample's
-- observations, and its results offer to put the new observations and
-- field identification into that sample (through the edit form, as a new
-- revision). NULL for a draft started from nothing.
ALTER TABLE drafts ADD COLUMN for_sample TEXT REFERENCES samples (id);
