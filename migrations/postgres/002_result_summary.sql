-- +goose Up
-- the CSV fields of a job item's result, stored beside the (now compressed) full result so that
-- a CSV download reads them without decoding the result
ALTER TABLE job_results ADD COLUMN summary TEXT NOT NULL DEFAULT '';

-- +goose Down
ALTER TABLE job_results DROP COLUMN summary;
