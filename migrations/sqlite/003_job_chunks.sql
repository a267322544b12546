-- +goose Up
-- Jobs in chunks that workers claim under a lease; results in their own append-only table with
-- the rank key (the ranking rule lives in Go: results sort by rank_key, then seq).
CREATE TABLE job_chunks (
    job_id         TEXT NOT NULL REFERENCES jobs (id) ON DELETE CASCADE,
    chunk_no       INTEGER NOT NULL,
    first_seq      INTEGER NOT NULL,
    last_seq       INTEGER NOT NULL,
    state          TEXT NOT NULL DEFAULT 'pending' CHECK (state IN ('pending', 'claimed', 'done')),
    owner          TEXT NOT NULL DEFAULT '',
    lease_until_ms INTEGER NOT NULL DEFAULT 0,  -- Unix milliseconds
    attempts       INTEGER NOT NULL DEFAULT 0,
    PRIMARY KEY (job_id, chunk_no)
) WITHOUT ROWID;
CREATE INDEX job_chunks_open ON job_chunks (state, job_id, chunk_no) WHERE state != 'done';

CREATE TABLE job_results (
    job_id   TEXT NOT NULL REFERENCES jobs (id) ON DELETE CASCADE,
    seq      INTEGER NOT NULL,
    rank_key BLOB NOT NULL,        -- batch.Key: the ranking rule
    verdict  TEXT NOT NULL DEFAULT '',
    failed   INTEGER NOT NULL DEFAULT 0,
    result   BLOB NOT NULL,        -- JSON screen result, or JSON item error when failed
    PRIMARY KEY (job_id, seq)
) WITHOUT ROWID;
CREATE INDEX job_results_rank ON job_results (job_id, rank_key, seq);

-- idempotency records scoped per API key ('' without a key); status 0 marks a write committed
-- whose response is not recorded yet (resource names what it created)
CREATE TABLE idempotency_v2 (
    scope       TEXT NOT NULL,
    route       TEXT NOT NULL,
    key         TEXT NOT NULL,
    body_hash   TEXT NOT NULL,
    status      INTEGER NOT NULL,
    response    BLOB NOT NULL,
    resource    TEXT NOT NULL DEFAULT '',
    created_at  TEXT NOT NULL,
    PRIMARY KEY (scope, route, key)
);
INSERT INTO idempotency_v2 (scope, route, key, body_hash, status, response, resource, created_at)
    SELECT '', route, key, body_hash, status, response, '', created_at FROM idempotency;
DROP TABLE idempotency;
ALTER TABLE idempotency_v2 RENAME TO idempotency;
CREATE INDEX idempotency_age ON idempotency (created_at);

-- +goose Down
CREATE TABLE idempotency_v1 (
    route TEXT NOT NULL, key TEXT NOT NULL, body_hash TEXT NOT NULL, status INTEGER NOT NULL,
    response BLOB NOT NULL, created_at TEXT NOT NULL, PRIMARY KEY (route, key)
);
INSERT OR IGNORE INTO idempotency_v1 SELECT route, key, body_hash, status, response, created_at FROM idempotency WHERE status > 0;
DROP TABLE idempotency;
ALTER TABLE idempotency_v1 RENAME TO idempotency;
DROP TABLE job_results;
DROP TABLE job_chunks;
