package data

import (
	"context"
	"crypto/rand"
	"crypto/sha256"
	"database/sql"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"time"
)

// Job states.
const (
	JobQueued   = "queued"
	JobRunning  = "running"
	JobDone     = "done"
	JobFailed   = "failed"
	JobCanceled = "canceled"
)

// ErrIdempotencyMismatch reports a reused Idempotency-Key with a different body.
var ErrIdempotencyMismatch = errors.New("idempotency key reused with a different request")

// Job is an asynchronous screening job.
type Job struct {
	ID           string          `json:"id"`
	Status       string          `json:"status"`
	Conditions   json.RawMessage `json:"conditions" swaggertype:"object"`
	Total        int             `json:"total"`
	Done         int             `json:"done"`
	Failed       int             `json:"failed"`
	SourceFormat string          `json:"source_format"`
	ExtraColumns []string        `json:"extra_columns"`
	Error        string          `json:"error,omitempty"`
	CreatedAt    time.Time       `json:"created_at"`
	StartedAt    *time.Time      `json:"started_at,omitempty"`
	FinishedAt   *time.Time      `json:"finished_at,omitempty"`
}

// JobItem is one submitted item of a job.
type JobItem struct {
	Seq    int
	ItemID string
	Line   int
	Source json.RawMessage // JSON monomer source
	Extra  []string
	State  string
	Result json.RawMessage // screen result (done) or problem (failed)
	Score  *float64
	DG     *float64
}

// ItemOutcome is what a worker writes back for one item.
type ItemOutcome struct {
	Seq     int
	Failed  bool
	Verdict string
	Score   float64
	DG      float64
	Result  []byte
}

func tsPtr(s string) *time.Time {
	if s == "" {
		return nil
	}
	t := parseTime(s)
	return &t
}

// JobMeta is what a job's item producer reports once every item is read.
type JobMeta struct {
	Conditions   json.RawMessage
	ExtraColumns []string // carried-through CSV columns
	Format       string   // input format (json, smiles, csv, sdf)
}

// CreateJobStream stores a job whose items are produced by fill, in one transaction: fill calls
// add for each item as it is read and finally returns the job's conditions, extra columns and
// input format. Nothing is stored when fill or any insert fails. Items never need to be held in
// memory at once.
func (s *Store) CreateJobStream(ctx context.Context, fill func(add func(JobItem) error) (JobMeta, error)) (Job, error) {
	j := Job{ID: newID("job_"), Status: JobQueued}
	ts := now()
	err := s.tx(ctx, func(tx *sql.Tx) error {
		// the job row first (invisible to workers until commit), completed after the items
		if _, err := tx.ExecContext(ctx, `INSERT INTO jobs (id, status, conditions, total, source_format, created_at) VALUES (?, 'queued', '{}', 0, '', ?)`, j.ID, ts); err != nil {
			return err
		}
		stmt, err := tx.PrepareContext(ctx, `INSERT INTO job_items (job_id, seq, item_id, line, source, extra) VALUES (?, ?, ?, ?, ?, ?)`)
		if err != nil {
			return err
		}
		defer stmt.Close()
		n := 0
		add := func(it JobItem) error {
			ex := "[]"
			if len(it.Extra) > 0 {
				b, _ := json.Marshal(it.Extra)
				ex = string(b)
			}
			if _, err := stmt.ExecContext(ctx, j.ID, n, it.ItemID, it.Line, string(it.Source), ex); err != nil {
				return err
			}
			n++
			return nil
		}
		meta, err := fill(add)
		if err != nil {
			return err
		}
		if meta.ExtraColumns == nil {
			meta.ExtraColumns = []string{}
		}
		ec, _ := json.Marshal(meta.ExtraColumns)
		j.Conditions, j.ExtraColumns, j.SourceFormat, j.Total = meta.Conditions, meta.ExtraColumns, meta.Format, n
		_, err = tx.ExecContext(ctx, `UPDATE jobs SET conditions = ?, total = ?, extra_columns = ?, source_format = ? WHERE id = ?`,
			string(meta.Conditions), n, string(ec), meta.Format, j.ID)
		return err
	})
	if err != nil {
		return Job{}, fmt.Errorf("create job: %w", err)
	}
	j.CreatedAt = parseTime(ts)
	return j, nil
}

// GetJob returns a job or ErrNotFound.
func (s *Store) GetJob(ctx context.Context, id string) (Job, error) {
	var j Job
	var cond, ec, created, started, finished string
	err := s.db.QueryRowContext(ctx, `SELECT id, status, conditions, total, done, failed, source_format, extra_columns, error, created_at, started_at, finished_at FROM jobs WHERE id = ?`, id).
		Scan(&j.ID, &j.Status, &cond, &j.Total, &j.Done, &j.Failed, &j.SourceFormat, &ec, &j.Error, &created, &started, &finished)
	if errors.Is(err, sql.ErrNoRows) {
		return Job{}, fmt.Errorf("job %q: %w", id, ErrNotFound)
	}
	if err != nil {
		return Job{}, fmt.Errorf("get job: %w", err)
	}
	j.Conditions = json.RawMessage(cond)
	_ = json.Unmarshal([]byte(ec), &j.ExtraColumns)
	j.CreatedAt, j.StartedAt, j.FinishedAt = parseTime(created), tsPtr(started), tsPtr(finished)
	return j, nil
}

// NextRunnableJob returns the oldest job that is queued or was running (interrupted), or
// ErrNotFound.
func (s *Store) NextRunnableJob(ctx context.Context) (Job, error) {
	var id string
	err := s.db.QueryRowContext(ctx, `SELECT id FROM jobs WHERE status IN ('running', 'queued') ORDER BY status = 'queued', created_at, id LIMIT 1`).Scan(&id)
	if errors.Is(err, sql.ErrNoRows) {
		return Job{}, ErrNotFound
	}
	if err != nil {
		return Job{}, err
	}
	return s.GetJob(ctx, id)
}

// CountActiveJobs returns the number of queued or running jobs.
func (s *Store) CountActiveJobs(ctx context.Context) (int, error) {
	var n int
	err := s.db.QueryRowContext(ctx, `SELECT count(*) FROM jobs WHERE status IN ('running', 'queued')`).Scan(&n)
	return n, err
}

// MarkJobRunning sets a queued job running (and its start time once).
func (s *Store) MarkJobRunning(ctx context.Context, id string) error {
	_, err := s.db.ExecContext(ctx, `UPDATE jobs SET status = 'running', started_at = CASE WHEN started_at = '' THEN ? ELSE started_at END WHERE id = ? AND status IN ('queued', 'running')`, now(), id)
	return err
}

// PendingItems returns up to limit pending items of a job in submission order after seq after.
func (s *Store) PendingItems(ctx context.Context, jobID string, after, limit int) ([]JobItem, error) {
	rows, err := s.db.QueryContext(ctx, `SELECT seq, item_id, line, source, extra FROM job_items WHERE job_id = ? AND state = 'pending' AND seq > ? ORDER BY seq LIMIT ?`, jobID, after, limit)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []JobItem
	for rows.Next() {
		var it JobItem
		var src, ex string
		if err := rows.Scan(&it.Seq, &it.ItemID, &it.Line, &src, &ex); err != nil {
			return nil, err
		}
		it.Source = json.RawMessage(src)
		_ = json.Unmarshal([]byte(ex), &it.Extra)
		out = append(out, it)
	}
	return out, rows.Err()
}

// RecordOutcomes writes item outcomes and advances the job's counters in one transaction. Items
// already finished are left alone, so a replay after a crash never double-counts. It returns the
// job's status after the write (a canceled job stays canceled).
func (s *Store) RecordOutcomes(ctx context.Context, jobID string, outs []ItemOutcome) (string, error) {
	var status string
	err := s.tx(ctx, func(tx *sql.Tx) error {
		stmt, err := tx.PrepareContext(ctx, `UPDATE job_items SET state = ?, verdict = ?, score = ?, dg = ?, result = ? WHERE job_id = ? AND seq = ? AND state = 'pending'`)
		if err != nil {
			return err
		}
		defer stmt.Close()
		done, failed := 0, 0
		for _, o := range outs {
			state := "done"
			var score, dg any = o.Score, o.DG
			if o.Failed {
				state, score, dg = "failed", nil, nil
			}
			res, err := stmt.ExecContext(ctx, state, o.Verdict, score, dg, o.Result, jobID, o.Seq)
			if err != nil {
				return err
			}
			if n, _ := res.RowsAffected(); n == 1 {
				done++
				if o.Failed {
					failed++
				}
			}
		}
		if _, err := tx.ExecContext(ctx, `UPDATE jobs SET done = done + ?, failed = failed + ? WHERE id = ?`, done, failed, jobID); err != nil {
			return err
		}
		return tx.QueryRowContext(ctx, `SELECT status FROM jobs WHERE id = ?`, jobID).Scan(&status)
	})
	if err != nil {
		return "", fmt.Errorf("record outcomes: %w", err)
	}
	return status, nil
}

// FinishJob sets a running job's final status (done or failed) unless it was canceled.
func (s *Store) FinishJob(ctx context.Context, id, status, msg string) error {
	_, err := s.db.ExecContext(ctx, `UPDATE jobs SET status = ?, error = ?, finished_at = ? WHERE id = ? AND status IN ('queued', 'running')`, status, msg, now(), id)
	return err
}

// CancelJob cancels a queued or running job; it returns ErrConflict when the job has already
// finished and ErrNotFound when there is none.
func (s *Store) CancelJob(ctx context.Context, id string) (Job, error) {
	err := s.tx(ctx, func(tx *sql.Tx) error {
		var st string
		if err := tx.QueryRowContext(ctx, `SELECT status FROM jobs WHERE id = ?`, id).Scan(&st); err != nil {
			if errors.Is(err, sql.ErrNoRows) {
				return fmt.Errorf("job %q: %w", id, ErrNotFound)
			}
			return err
		}
		if st != JobQueued && st != JobRunning {
			return fmt.Errorf("job %q is %s: %w", id, st, ErrConflict)
		}
		_, err := tx.ExecContext(ctx, `UPDATE jobs SET status = 'canceled', finished_at = ? WHERE id = ?`, now(), id)
		return err
	})
	if err != nil {
		return Job{}, err
	}
	return s.GetJob(ctx, id)
}

// RankedItems streams a job's items in rank order (screened by score descending, ΔG_p
// ascending, submission order; then failed and still-pending items in submission order),
// calling fn for each from position offset, at most limit (limit <= 0: all).
func (s *Store) RankedItems(ctx context.Context, jobID string, offset, limit int, fn func(rank int, it JobItem) error) error {
	if limit <= 0 {
		limit = -1
	}
	rows, err := s.db.QueryContext(ctx, `SELECT seq, item_id, line, source, extra, state, result, score, dg FROM job_items WHERE job_id = ?
		ORDER BY CASE state WHEN 'done' THEN 0 ELSE 1 END, score DESC, dg, seq LIMIT ? OFFSET ?`, jobID, limit, offset)
	if err != nil {
		return fmt.Errorf("ranked items: %w", err)
	}
	defer rows.Close()
	rank := offset
	for rows.Next() {
		var it JobItem
		var src, ex, res string
		var score, dg sql.NullFloat64
		if err := rows.Scan(&it.Seq, &it.ItemID, &it.Line, &src, &ex, &it.State, &res, &score, &dg); err != nil {
			return fmt.Errorf("ranked items: %w", err)
		}
		it.Source, it.Result = json.RawMessage(src), json.RawMessage(res)
		_ = json.Unmarshal([]byte(ex), &it.Extra)
		if score.Valid {
			v := score.Float64
			it.Score = &v
		}
		if dg.Valid {
			v := dg.Float64
			it.DG = &v
		}
		rank++
		if err := fn(rank, it); err != nil {
			return err
		}
	}
	return rows.Err()
}

// Idempotent returns a stored response for (route, key) when one exists with the same body
// hash; ErrIdempotencyMismatch when the key was used with another body; ErrNotFound when new.
func (s *Store) Idempotent(ctx context.Context, route, key, bodyHash string) (int, []byte, error) {
	var h string
	var status int
	var resp []byte
	err := s.db.QueryRowContext(ctx, `SELECT body_hash, status, response FROM idempotency WHERE route = ? AND key = ?`, route, key).Scan(&h, &status, &resp)
	if errors.Is(err, sql.ErrNoRows) {
		return 0, nil, ErrNotFound
	}
	if err != nil {
		return 0, nil, err
	}
	if h != bodyHash {
		return 0, nil, ErrIdempotencyMismatch
	}
	return status, resp, nil
}

// SaveIdempotent records the response of a request made with an Idempotency-Key. A concurrent
// first request with the same key keeps the earlier record.
func (s *Store) SaveIdempotent(ctx context.Context, route, key, bodyHash string, status int, resp []byte) error {
	_, err := s.db.ExecContext(ctx, `INSERT OR IGNORE INTO idempotency (route, key, body_hash, status, response, created_at) VALUES (?, ?, ?, ?, ?, ?)`,
		route, key, bodyHash, status, resp, now())
	return err
}

// APIKey is a stored key (the secret is never stored, only its SHA-256).
type APIKey struct {
	ID        string    `json:"id"`
	Name      string    `json:"name"`
	CreatedAt time.Time `json:"created_at"`
	Revoked   bool      `json:"revoked"`
}

func hashKey(secret string) string {
	h := sha256.Sum256([]byte(secret))
	return hex.EncodeToString(h[:])
}

// CreateAPIKey makes a key and returns it with its secret, shown once.
func (s *Store) CreateAPIKey(ctx context.Context, name string) (APIKey, string, error) {
	var b [24]byte
	if _, err := rand.Read(b[:]); err != nil {
		return APIKey{}, "", err
	}
	secret := "rsk_" + hex.EncodeToString(b[:])
	k := APIKey{ID: newID("key_"), Name: name}
	ts := now()
	if _, err := s.db.ExecContext(ctx, `INSERT INTO api_keys (id, name, hash, created_at) VALUES (?, ?, ?, ?)`, k.ID, name, hashKey(secret), ts); err != nil {
		return APIKey{}, "", fmt.Errorf("create key: %w", err)
	}
	k.CreatedAt = parseTime(ts)
	return k, secret, nil
}

// CheckAPIKey returns the id of the unrevoked key with this secret, or ErrNotFound.
func (s *Store) CheckAPIKey(ctx context.Context, secret string) (string, error) {
	if !strings.HasPrefix(secret, "rsk_") {
		return "", ErrNotFound
	}
	var id string
	err := s.db.QueryRowContext(ctx, `SELECT id FROM api_keys WHERE hash = ? AND revoked_at = ''`, hashKey(secret)).Scan(&id)
	if errors.Is(err, sql.ErrNoRows) {
		return "", ErrNotFound
	}
	return id, err
}

// ListAPIKeys lists keys (never secrets).
func (s *Store) ListAPIKeys(ctx context.Context) ([]APIKey, error) {
	rows, err := s.db.QueryContext(ctx, `SELECT id, name, created_at, revoked_at FROM api_keys ORDER BY created_at`)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	out := []APIKey{}
	for rows.Next() {
		var k APIKey
		var created, revoked string
		if err := rows.Scan(&k.ID, &k.Name, &created, &revoked); err != nil {
			return nil, err
		}
		k.CreatedAt, k.Revoked = parseTime(created), revoked != ""
		out = append(out, k)
	}
	return out, rows.Err()
}

// RevokeAPIKey revokes a key by id.
func (s *Store) RevokeAPIKey(ctx context.Context, id string) error {
	res, err := s.db.ExecContext(ctx, `UPDATE api_keys SET revoked_at = ? WHERE id = ? AND revoked_at = ''`, now(), id)
	if err != nil {
		return err
	}
	if n, _ := res.RowsAffected(); n == 0 {
		return fmt.Errorf("key %q: %w", id, ErrNotFound)
	}
	return nil
}
