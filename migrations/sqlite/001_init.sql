-- +goose Up
-- Monomer descriptor store and saved screening results.
CREATE TABLE monomers (
    id          TEXT PRIMARY KEY,
    name        TEXT NOT NULL,
    smiles      TEXT NOT NULL DEFAULT '',
    descriptors TEXT NOT NULL DEFAULT 'null',  -- JSON descriptor record, or null
    version     INTEGER NOT NULL DEFAULT 1,     -- bumped on every replace; the ETag
    created_at  TEXT NOT NULL,                  -- RFC 3339, UTC
    updated_at  TEXT NOT NULL
);
CREATE INDEX monomers_name ON monomers (name);

CREATE TABLE monomer_tags (
    monomer_id TEXT NOT NULL REFERENCES monomers (id) ON DELETE CASCADE,
    tag        TEXT NOT NULL,
    PRIMARY KEY (monomer_id, tag)
);
CREATE INDEX monomer_tags_tag ON monomer_tags (tag);

CREATE TABLE results (
    id             INTEGER PRIMARY KEY AUTOINCREMENT,
    monomer_id     TEXT NOT NULL REFERENCES monomers (id) ON DELETE CASCADE,
    conditions     TEXT NOT NULL,  -- JSON
    verdict        TEXT NOT NULL,
    score          REAL NOT NULL,
    result         TEXT NOT NULL,  -- JSON screen result
    engine_version TEXT NOT NULL,
    created_at     TEXT NOT NULL
);
CREATE INDEX results_monomer ON results (monomer_id, id);

-- +goose Down
DROP TABLE results;
DROP TABLE monomer_tags;
DROP TABLE monomers;
