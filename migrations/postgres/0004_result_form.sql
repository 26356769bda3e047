-- Fluxbound schema, version 4: the form an assessment's stored result is
-- written in. A result is served as the text it was stored as (it is not
-- parsed and written again on every read), so that text must be in the
-- current form: rows of an older form (0 = written before this version)
-- are rewritten at startup, right after the migrations
-- (`Store::refresh_stored_results`).
ALTER TABLE assessments ADD COLUMN result_form INTEGER NOT NULL DEFAULT 0;
