package data

import (
	"context"
	"database/sql"
	"encoding/json"
	"fmt"
	"math"
	"strings"

	"ringsieve/screening/batch"
)

// legacyChunk is the chunk size of jobs created before chunks existed (the old runner's
// batch of 1,024 items).
const legacyChunk = 1024

// moveLegacyJobResults is migration 4: job results of earlier versions were columns of
// job_items (state, score, dg, result with an HTTP problem for failures). It copies them into
// job_results with their rank key and a domain item error, and gives every unfinished job its
// chunks. Nothing is deleted here (version 5 drops the old columns afterwards).
func (s *Store) moveLegacyJobResults(ctx context.Context, tx *sql.Tx) error {
	if s.dialect.name != "sqlite" {
		return nil // only SQLite databases predate chunks
	}
	rows, err := tx.QueryContext(ctx, `SELECT job_id, seq, state, verdict, score, dg, result FROM job_items WHERE state != 'pending'`)
	if err != nil {
		return fmt.Errorf("read legacy results: %w", err)
	}
	type moved struct {
		job     string
		seq     int
		key     batch.Key
		verdict string
		failed  int
		result  []byte
	}
	var all []moved
	for rows.Next() {
		var m moved
		var state, result string
		var score, dg sql.NullFloat64
		if err := rows.Scan(&m.job, &m.seq, &state, &m.verdict, &score, &dg, &result); err != nil {
			rows.Close()
			return fmt.Errorf("read legacy results: %w", err)
		}
		if state == "failed" {
			m.key, m.failed, m.result = batch.FailedKey(), 1, legacyItemError(result)
		} else {
			d := dg.Float64
			if !dg.Valid || d >= 1e9 { // the old stand-in for "no thermodynamics"
				d = math.Inf(1)
			}
			m.key, m.result = batch.ScoreKey(score.Float64, d), []byte(result)
		}
		all = append(all, m)
	}
	if err := rows.Close(); err != nil {
		return err
	}
	for _, m := range all {
		if _, err := tx.ExecContext(ctx, `INSERT INTO job_results (job_id, seq, rank_key, verdict, failed, result) VALUES (?, ?, ?, ?, ?, ?)`,
			m.job, m.seq, m.key[:], m.verdict, m.failed, m.result); err != nil {
			return fmt.Errorf("move legacy result: %w", err)
		}
	}
	// chunks for unfinished jobs; items already done are skipped when their chunk is claimed
	jobs, err := jobTotals(ctx, tx, `SELECT id, total FROM jobs WHERE status IN ('queued', 'running')`)
	if err != nil {
		return err
	}
	for _, j := range jobs {
		if err := s.insertChunks(ctx, tx, j.id, j.total, legacyChunk); err != nil {
			return err
		}
		if _, err := tx.ExecContext(ctx, `UPDATE job_chunks SET state = 'done' WHERE job_id = ? AND NOT EXISTS (SELECT 1 FROM job_items i
			WHERE i.job_id = job_chunks.job_id AND i.seq BETWEEN job_chunks.first_seq AND job_chunks.last_seq AND i.state = 'pending')`, j.id); err != nil {
			return err
		}
	}
	return nil
}

// jobTotal is a job's id and item count.
type jobTotal struct {
	id    string
	total int
}

// jobTotals runs a query for jobs' ids and totals (a data migration's list of jobs to change).
func jobTotals(ctx context.Context, tx *sql.Tx, query string) ([]jobTotal, error) {
	rows, err := tx.QueryContext(ctx, query)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []jobTotal
	for rows.Next() {
		var j jobTotal
		if err := rows.Scan(&j.id, &j.total); err != nil {
			return nil, err
		}
		out = append(out, j)
	}
	return out, rows.Err()
}

// legacyItemError turns an HTTP problem stored by earlier versions into an item error.
func legacyItemError(problem string) []byte {
	var p struct {
		Type     string `json:"type"`
		Detail   string `json:"detail"`
		Field    string `json:"field"`
		Position *int   `json:"position"`
	}
	_ = json.Unmarshal([]byte(problem), &p) // an unreadable record keeps an internal error
	e := batch.ItemError{Code: batch.CodeInternal, Message: p.Detail, Field: p.Field, Position: p.Position}
	switch {
	case strings.HasSuffix(p.Type, "/invalid-smiles"):
		e.Code = batch.CodeInvalidSMILES
	case strings.HasSuffix(p.Type, "/invalid-value"):
		e.Code = batch.CodeInvalidValue
	case strings.HasSuffix(p.Type, "/not-found"):
		e.Code = batch.CodeNotFound
	}
	if e.Message == "" {
		e.Message = "the item could not be screened"
	}
	b, _ := json.Marshal(e) // an ItemError always encodes
	return b
}

// insertChunks splits items 0 … total−1 of a job into chunks of size.
func (s *Store) insertChunks(ctx context.Context, tx *sql.Tx, jobID string, total, size int) error {
	for no, first := 0, 0; first < total; no, first = no+1, first+size {
		last := min(first+size, total) - 1
		if _, err := s.exec(ctx, tx, `INSERT INTO job_chunks (job_id, chunk_no, first_seq, last_seq) VALUES (?, ?, ?, ?)`, jobID, no, first, last); err != nil {
			return fmt.Errorf("insert chunk: %w", err)
		}
	}
	return nil
}
