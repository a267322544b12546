-- +goose Up
-- ranked result pages sort a job's rows by COALESCE(rank_key, …) over the join with job_items,
-- which no index serves (the query plan sorts in a temporary B-tree); the index only cost a
-- random-order B-tree insert per stored outcome. Without it job_results grows append-only in
-- (job_id, seq) order.
DROP INDEX job_results_rank;

-- +goose Down
CREATE INDEX job_results_rank ON job_results (job_id, rank_key, seq);
