-- +goose Up
-- a job's items, rank keys and outcomes packed per chunk (data/chunkpack.go): one row written
-- and read per chunk instead of one per item. They live beside job_chunks, not in it, because
-- an UPDATE rewrites a whole row: a claim or a lease renewal would copy the chunk's packed
-- items each time. Rowid tables, not WITHOUT ROWID: a key lookup in a WITHOUT ROWID table
-- reads the whole record of every cell it compares once the record spills onto overflow
-- pages, which packed chunks always do. Version 13 (Go, data/migrate_pack.go) packs what
-- job_items and job_results hold; version 14 drops them.
CREATE TABLE job_chunk_items (
    job_id   TEXT NOT NULL REFERENCES jobs (id) ON DELETE CASCADE,
    chunk_no INTEGER NOT NULL,
    items    BLOB NOT NULL,
    PRIMARY KEY (job_id, chunk_no)
);
-- a row once a chunk has outcomes (written with its completion)
CREATE TABLE job_chunk_results (
    job_id    TEXT NOT NULL REFERENCES jobs (id) ON DELETE CASCADE,
    chunk_no  INTEGER NOT NULL,
    rank_keys BLOB NOT NULL,
    results   BLOB NOT NULL,
    PRIMARY KEY (job_id, chunk_no)
);

-- +goose Down
DROP TABLE job_chunk_results;
DROP TABLE job_chunk_items;
