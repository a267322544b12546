package data

import (
	"context"
	"database/sql"
	"encoding/json"
	"fmt"

	"ringsieve/screening/batch"
)

// packJobRows is the data migration to packed chunks (SQLite version 13, PostgreSQL version
// 6): every chunk's items, rank keys and outcomes are read from job_items and job_results and
// written packed into its row (chunkpack.go); the next version drops those tables. Jobs that
// finished before chunks existed have no chunks: they get done chunks of the legacy size, so
// none of their items is lost.
func (s *Store) packJobRows(ctx context.Context, tx *sql.Tx) error {
	// finished jobs without chunks (SQLite databases older than chunks)
	bare, err := jobTotals(ctx, tx, `SELECT id, total FROM jobs j WHERE NOT EXISTS (SELECT 1 FROM job_chunks c WHERE c.job_id = j.id)`)
	if err != nil {
		return fmt.Errorf("pack job rows: %w", err)
	}
	for _, j := range bare {
		if err := s.insertChunks(ctx, tx, j.id, j.total, legacyChunk); err != nil {
			return err
		}
		if _, err := s.exec(ctx, tx, `UPDATE job_chunks SET state = 'done' WHERE job_id = ?`, j.id); err != nil {
			return err
		}
	}

	crows, err := tx.QueryContext(ctx, `SELECT job_id, chunk_no, first_seq, last_seq FROM job_chunks ORDER BY job_id, chunk_no`)
	if err != nil {
		return fmt.Errorf("pack job rows: %w", err)
	}
	var chunks []batch.Chunk
	for crows.Next() {
		var c batch.Chunk
		if err := crows.Scan(&c.JobID, &c.No, &c.FirstSeq, &c.LastSeq); err != nil {
			crows.Close()
			return err
		}
		chunks = append(chunks, c)
	}
	if err := crows.Close(); err != nil {
		return err
	}
	for _, c := range chunks {
		items, keys, results, err := s.packLegacyChunk(ctx, tx, c)
		if err != nil {
			return fmt.Errorf("pack chunk %d of job %s: %w", c.No, c.JobID, err)
		}
		if _, err := s.exec(ctx, tx, `INSERT INTO job_chunk_items (job_id, chunk_no, items) VALUES (?, ?, ?)`, c.JobID, c.No, items); err != nil {
			return err
		}
		if results == nil {
			continue
		}
		if _, err := s.exec(ctx, tx, `INSERT INTO job_chunk_results (job_id, chunk_no, rank_keys, results) VALUES (?, ?, ?, ?)`,
			c.JobID, c.No, keys, results); err != nil {
			return err
		}
	}
	return nil
}

// packLegacyChunk packs one chunk's rows of job_items and job_results.
func (s *Store) packLegacyChunk(ctx context.Context, tx *sql.Tx, c batch.Chunk) (items, keys, results []byte, err error) {
	n := c.LastSeq - c.FirstSeq + 1
	rows, err := tx.QueryContext(ctx, s.q(`SELECT seq, item_id, line, source, extra FROM job_items WHERE job_id = ? AND seq BETWEEN ? AND ? ORDER BY seq`),
		c.JobID, c.FirstSeq, c.LastSeq)
	if err != nil {
		return nil, nil, nil, err
	}
	var pack itemPacker
	want := c.FirstSeq
	for rows.Next() {
		var seq, line int
		var id, src, ex string
		if err := rows.Scan(&seq, &id, &line, &src, &ex); err != nil {
			rows.Close()
			return nil, nil, nil, err
		}
		if seq != want {
			rows.Close()
			return nil, nil, nil, fmt.Errorf("item %d missing", want)
		}
		want++
		var extra []string
		if err := json.Unmarshal([]byte(ex), &extra); err != nil {
			rows.Close()
			return nil, nil, nil, fmt.Errorf("item %d extra columns: %w", seq, err)
		}
		pack.addEncoded(id, line, []byte(src), extra)
	}
	if err := rows.Close(); err != nil {
		return nil, nil, nil, err
	}
	if want != c.LastSeq+1 {
		return nil, nil, nil, fmt.Errorf("item %d missing", want)
	}
	items = pack.take(n)

	keys = pendingKeys(n)
	rrows, err := tx.QueryContext(ctx, s.q(`SELECT seq, rank_key, verdict, failed, result, summary FROM job_results WHERE job_id = ? AND seq BETWEEN ? AND ? ORDER BY seq`),
		c.JobID, c.FirstSeq, c.LastSeq)
	if err != nil {
		return nil, nil, nil, err
	}
	defer rrows.Close()
	for rrows.Next() {
		var o batch.Outcome
		var key []byte
		var failed int
		if err := rrows.Scan(&o.Seq, &key, &o.Verdict, &failed, &o.Result, &o.Summary); err != nil {
			return nil, nil, nil, err
		}
		if len(key) != batch.KeyLen {
			return nil, nil, nil, fmt.Errorf("item %d: rank key of %d bytes", o.Seq, len(key))
		}
		o.Failed = failed != 0
		if results == nil {
			results = newResults(0)
		}
		off := o.Seq - c.FirstSeq
		results = appendOutcome(results, off, o)
		copy(keys[off*batch.KeyLen:], key)
	}
	return items, keys, results, rrows.Err()
}
