-- +goose Up
-- one row the service rewrites to find out whether the store takes writes again after a fault
CREATE TABLE store_probe (id INTEGER PRIMARY KEY CHECK (id = 1), at TEXT NOT NULL);
INSERT INTO store_probe (id, at) VALUES (1, '');

-- +goose Down
DROP TABLE store_probe;
