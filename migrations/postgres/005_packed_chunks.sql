-- +goose Up
-- a job's items, rank keys and outcomes packed per chunk (data/chunkpack.go): one row written
-- and read per chunk instead of one per item. They live beside job_chunks, not in it, because
-- an UPDATE writes a new version of the whole row: a claim or a lease renewal would copy the
-- chunk's packed items each time. Version 6 (Go, data/migrate_pack.go) packs what job_items
-- and job_results hold; version 7 drops them.
CREATE TABLE job_chunk_items (
    job_id   TEXT COLLATE "C" NOT NULL REFERENCES jobs (id) ON DELETE CASCADE,
    chunk_no INTEGER NOT NULL,
    items    BYTEA NOT NULL,
    PRIMARY KEY (job_id, chunk_no)
);
-- a row once a chunk has outcomes (written with its completion)
CREATE TABLE job_chunk_results (
    job_id    TEXT COLLATE "C" NOT NULL REFERENCES jobs (id) ON DELETE CASCADE,
    chunk_no  INTEGER NOT NULL,
    rank_keys BYTEA NOT NULL,
    results   BYTEA NOT NULL,
    PRIMARY KEY (job_id, chunk_no)
);

-- +goose Down
DROP TABLE job_chunk_results;
DROP TABLE job_chunk_items;
