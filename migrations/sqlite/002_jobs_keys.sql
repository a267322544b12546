-- +goose Up
-- Asynchronous screening jobs, API keys and idempotent POSTs.
CREATE TABLE jobs (
    id              TEXT PRIMARY KEY,
    status          TEXT NOT NULL CHECK (status IN ('queued', 'running', 'done', 'failed', 'canceled')),
    conditions      TEXT NOT NULL,            -- JSON conditions as submitted
    total           INTEGER NOT NULL,
    done            INTEGER NOT NULL DEFAULT 0,  -- items finished (screened or failed)
    failed          INTEGER NOT NULL DEFAULT 0,  -- items that could not be screened
    source_format   TEXT NOT NULL,            -- json, smiles, csv, sdf
    extra_columns   TEXT NOT NULL DEFAULT '[]',  -- JSON list of carried-through CSV columns
    error           TEXT NOT NULL DEFAULT '',
    created_at      TEXT NOT NULL,
    started_at      TEXT NOT NULL DEFAULT '',
    finished_at     TEXT NOT NULL DEFAULT ''
);
CREATE INDEX jobs_status ON jobs (status, created_at);

CREATE TABLE job_items (
    job_id      TEXT NOT NULL REFERENCES jobs (id) ON DELETE CASCADE,
    seq         INTEGER NOT NULL,             -- submission order, 0-based
    item_id     TEXT NOT NULL,
    line        INTEGER NOT NULL DEFAULT 0,   -- input line (file uploads)
    source      TEXT NOT NULL,                -- JSON monomer source
    extra       TEXT NOT NULL DEFAULT '[]',   -- JSON list of extra column values
    state       TEXT NOT NULL DEFAULT 'pending' CHECK (state IN ('pending', 'done', 'failed')),
    verdict     TEXT NOT NULL DEFAULT '',
    score       REAL,
    dg          REAL,
    result      TEXT NOT NULL DEFAULT '',     -- JSON screen result or problem
    PRIMARY KEY (job_id, seq)
) WITHOUT ROWID;
CREATE INDEX job_items_pending ON job_items (job_id, state, seq);
CREATE INDEX job_items_rank ON job_items (job_id, state, score DESC, dg, seq);

CREATE TABLE api_keys (
    id          TEXT PRIMARY KEY,
    name        TEXT NOT NULL,
    hash        TEXT NOT NULL UNIQUE,          -- SHA-256 of the secret, hex
    created_at  TEXT NOT NULL,
    revoked_at  TEXT NOT NULL DEFAULT ''
);

CREATE TABLE idempotency (
    route       TEXT NOT NULL,
    key         TEXT NOT NULL,
    body_hash   TEXT NOT NULL,
    status      INTEGER NOT NULL,
    response    BLOB NOT NULL,
    created_at  TEXT NOT NULL,
    PRIMARY KEY (route, key)
);

-- +goose Down
DROP TABLE idempotency;
DROP TABLE api_keys;
DROP TABLE job_items;
DROP TABLE jobs;
