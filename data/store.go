// Package data is ringsieve's store: monomers with their descriptor records and tags, saved
// screening results, asynchronous jobs (items, chunks claimed under leases, results), API keys
// and idempotency records. SQLite is the embedded default; the SQL is written so that the
// server engine behind the same Store runs it too. It imports no HTTP.
package data

import (
	"context"
	"crypto/rand"
	"database/sql"
	"encoding/hex"
	"errors"
	"fmt"
	"strconv"
	"strings"
	"sync/atomic"
	"time"

	"ringsieve/screening/batch"
)

// Store errors; callers test them with errors.Is.
var (
	// ErrNotFound: no such monomer, job, key or record (the batch runner's sentinel, so that a
	// missing monomer in a job is told apart from a failing store).
	ErrNotFound = batch.ErrNotFound
	// ErrConflict: the stored version is not the one the write was conditional on.
	ErrConflict = errors.New("version conflict")
	// ErrJobFinished: the job has already finished and cannot be canceled.
	ErrJobFinished = errors.New("job already finished")
	// ErrIdempotencyMismatch: an Idempotency-Key reused with a different request.
	ErrIdempotencyMismatch = errors.New("idempotency key reused with a different request")
	// ErrIdempotencyInFlight: another request with the same Idempotency-Key is being served.
	ErrIdempotencyInFlight = errors.New("a request with this idempotency key is in progress")
)

// Store is an open database.
type Store struct {
	db      *sql.DB
	dialect dialect
	path    string // SQLite file or redacted URL, for messages
	dsn     string // PostgreSQL URL (for the notification listener)
	faults  faultState
	// degraded is set while writes fail with storage faults (fast check for recovered)
	degraded atomic.Bool
	// writeSlot serializes this process's SQLite write transactions (a channel of one, so
	// that waiting honours the context); nil for PostgreSQL. The file is held exclusively by
	// this process (unix-excl), so a writer that queues here instead of in SQLite's busy
	// handler starts the moment the previous commit ends rather than after a back-off sleep.
	writeSlot chan struct{}
	// ckpt copies the SQLite log back into the file when the store is idle; nil for PostgreSQL
	ckpt *checkpointer
}

// dialect holds what differs between the engines the SQL runs on.
type dialect struct {
	name string
	// numbered placeholders ($1, $2, ...) instead of ?
	numbered bool
	// lockSkip is appended to the claim query to lock the row and skip rows other workers hold
	lockSkip string
	// tagList aggregates a monomer's tags separated by the unit separator
	tagList string
}

var sqliteDialect = dialect{
	name:    "sqlite",
	tagList: `COALESCE((SELECT group_concat(tag, char(31)) FROM monomer_tags t WHERE t.monomer_id = m.id), '')`,
}

// q rewrites a query written with ? placeholders for the store's engine.
func (s *Store) q(query string) string {
	if !s.dialect.numbered {
		return query
	}
	var b strings.Builder
	n := 0
	for i := 0; i < len(query); i++ {
		if query[i] == '?' {
			n++
			b.WriteByte('$')
			b.WriteString(strconv.Itoa(n))
			continue
		}
		b.WriteByte(query[i])
	}
	return b.String()
}

// Close closes the database.
func (s *Store) Close() error {
	if s.ckpt != nil {
		s.ckpt.close()
	}
	return s.db.Close()
}

// DB exposes the handle for tests and maintenance.
func (s *Store) DB() *sql.DB { return s.db }

// Engine names the database engine ("sqlite" or "postgres").
func (s *Store) Engine() string { return s.dialect.name }

func newID(prefix string) string {
	var b [8]byte
	if _, err := rand.Read(b[:]); err != nil {
		panic(err) // crypto/rand never fails on supported platforms
	}
	return prefix + hex.EncodeToString(b[:])
}

func now() string { return time.Now().UTC().Format(time.RFC3339Nano) }

func parseTime(s string) time.Time {
	t, _ := time.Parse(time.RFC3339Nano, s)
	return t
}

func tsPtr(s string) *time.Time {
	if s == "" {
		return nil
	}
	t := parseTime(s)
	return &t
}

// tx runs fn in a transaction, committing on success and rolling back on any error.
// A storage fault (read-only or full disk, I/O error) comes back wrapping ErrUnavailable and
// marks the store degraded until a probe write succeeds. On PostgreSQL a transaction that lost
// a serialization conflict or a deadlock to a concurrent one is run again (up to five times).
func (s *Store) tx(ctx context.Context, fn func(*sql.Tx) error) error {
	for attempt := 1; ; attempt++ {
		err := s.tx1(ctx, fn)
		if err == nil || attempt == 5 || !retryable(err) || ctx.Err() != nil {
			return err
		}
	}
}

func (s *Store) tx1(ctx context.Context, fn func(*sql.Tx) error) error {
	t, end, err := s.beginTx(ctx)
	if err != nil {
		return err
	}
	return end(fn(t))
}

// beginTx begins a write transaction (on SQLite after taking this process's write slot). end
// finishes it: it commits when given nil and rolls back otherwise, gives the slot back, and
// returns the error to report (storage faults wrap ErrUnavailable, as for tx).
func (s *Store) beginTx(ctx context.Context) (*sql.Tx, func(error) error, error) {
	release := func() {}
	if s.writeSlot != nil {
		select {
		case s.writeSlot <- struct{}{}:
			release = func() { <-s.writeSlot }
		case <-ctx.Done():
			return nil, nil, ctx.Err()
		}
	}
	t, err := s.db.BeginTx(ctx, nil)
	if err != nil {
		release()
		return nil, nil, s.fault(err)
	}
	end := func(err error) error {
		defer release()
		if err != nil {
			if rb := t.Rollback(); rb != nil && !errors.Is(rb, sql.ErrTxDone) {
				return s.fault(fmt.Errorf("%w (and rollback: %v)", err, rb))
			}
			return s.fault(err)
		}
		if err := t.Commit(); err != nil {
			return s.fault(err)
		}
		if s.ckpt != nil {
			s.ckpt.committed()
		}
		s.recovered()
		return nil
	}
	return t, end, nil
}

// exec and queryRow run a ?-placeholder query in a transaction on the store's engine.
func (s *Store) exec(ctx context.Context, tx *sql.Tx, query string, args ...any) (sql.Result, error) {
	return tx.ExecContext(ctx, s.q(query), args...)
}

func (s *Store) queryRow(ctx context.Context, tx *sql.Tx, query string, args ...any) *sql.Row {
	return tx.QueryRowContext(ctx, s.q(query), args...)
}
