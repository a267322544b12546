-- +goose Up
-- job_items keeps the submitted input only; results live in job_results (moved by version 4).
DROP INDEX job_items_pending;
DROP INDEX job_items_rank;
ALTER TABLE job_items DROP COLUMN state;
ALTER TABLE job_items DROP COLUMN verdict;
ALTER TABLE job_items DROP COLUMN score;
ALTER TABLE job_items DROP COLUMN dg;
ALTER TABLE job_items DROP COLUMN result;

-- +goose Down
ALTER TABLE job_items ADD COLUMN state TEXT NOT NULL DEFAULT 'pending';
ALTER TABLE job_items ADD COLUMN verdict TEXT NOT NULL DEFAULT '';
ALTER TABLE job_items ADD COLUMN score REAL;
ALTER TABLE job_items ADD COLUMN dg REAL;
ALTER TABLE job_items ADD COLUMN result TEXT NOT NULL DEFAULT '';
CREATE INDEX job_items_pending ON job_items (job_id, state, seq);
CREATE INDEX job_items_rank ON job_items (job_id, state, score DESC, dg, seq);
