-- +goose Up
-- items and outcomes live packed in job_chunks since version 5 (moved by version 6)
DROP TABLE job_results;
DROP TABLE job_items;

-- +goose Down
-- the tables come back empty: the packed chunks stay where the data is
CREATE TABLE job_items (
    job_id  TEXT COLLATE "C" NOT NULL REFERENCES jobs (id) ON DELETE CASCADE,
    seq     INTEGER NOT NULL,
    item_id TEXT NOT NULL,
    line    INTEGER NOT NULL DEFAULT 0,
    source  TEXT NOT NULL,
    extra   TEXT NOT NULL DEFAULT '[]',
    PRIMARY KEY (job_id, seq)
);
CREATE TABLE job_results (
    job_id   TEXT COLLATE "C" NOT NULL REFERENCES jobs (id) ON DELETE CASCADE,
    seq      INTEGER NOT NULL,
    rank_key BYTEA NOT NULL,
    verdict  TEXT NOT NULL DEFAULT '',
    failed   INTEGER NOT NULL DEFAULT 0,
    result   BYTEA NOT NULL,
    summary  TEXT NOT NULL DEFAULT '',
    PRIMARY KEY (job_id, seq)
);
