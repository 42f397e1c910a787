-- Drafts stay bounded and say where they went.
--
-- `saved_as`: the sample a draft was saved into ("Save as a sample" or
-- "Put these into sample ..."), so the list of unfinished identifications
-- can link to it. NULL while it has not been saved.
ALTER TABLE drafts ADD COLUMN saved_as TEXT REFERENCES samples (id);

-- Drafts with nothing observed are removed a day after their last change
-- (on start-up and whenever a draft is started); this index finds them
-- without a scan of the whole table.
CREATE INDEX drafts_empty_by_update ON drafts (updated_at) WHERE answers = 0;
