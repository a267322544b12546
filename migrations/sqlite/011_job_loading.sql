-- +goose Up
-- a job whose upload is still being read: its chunks are committed (and claimable by workers)
-- as they fill, but the job stays hidden and cannot finish until the last item is stored and
-- this row is deleted in the same transaction; a load that fails or is abandoned is deleted
-- whole (the cascades take its items, chunks and results)
CREATE TABLE job_loading (
    job_id     TEXT PRIMARY KEY REFERENCES jobs (id) ON DELETE CASCADE,
    started_at TEXT NOT NULL
) WITHOUT ROWID;

-- +goose Down
DROP TABLE job_loading;
