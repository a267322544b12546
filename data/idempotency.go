package data

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"time"
)

// Idempotency records make a POST with an Idempotency-Key safe to retry. The record of a
// request that writes (a monomer, a job, a saved result) is inserted in the same transaction
// as the write, naming what it created; the response is added once it is rendered. A retry
// therefore finds either the full response, or, when the process died between the commit and
// the response, the resource, from which the response is rebuilt; it never writes twice.
// Records are scoped per API key and expire after IdempotencyTTL.

// IdempotencyTTL is how long a key is remembered (design choice: a day covers any client's
// retries).
const IdempotencyTTL = 24 * time.Hour

// Idempotency names one request made with an Idempotency-Key.
type Idempotency struct {
	Scope    string // API key id, "" without one
	Route    string // method and route pattern
	Key      string
	BodyHash string
}

type idemCtxKey struct{}

// WithIdempotency returns a context whose writes record the idempotency claim in their
// transaction.
func WithIdempotency(ctx context.Context, id Idempotency) context.Context {
	return context.WithValue(ctx, idemCtxKey{}, id)
}

// claimIdempotency records the claim carried by ctx, if any, inside the write's transaction;
// ErrIdempotencyInFlight when the key is already recorded (a concurrent request with the same
// key won: the write is rolled back).
func (s *Store) claimIdempotency(ctx context.Context, tx *sql.Tx, resource string) error {
	id, ok := ctx.Value(idemCtxKey{}).(Idempotency)
	if !ok {
		return nil
	}
	if err := s.dropExpired(ctx, tx, id); err != nil {
		return err
	}
	res, err := s.exec(ctx, tx, `INSERT INTO idempotency (scope, route, key, body_hash, status, response, resource, created_at) VALUES (?, ?, ?, ?, 0, ?, ?, ?)
		ON CONFLICT DO NOTHING`, id.Scope, id.Route, id.Key, id.BodyHash, []byte{}, resource, now())
	if err != nil {
		return fmt.Errorf("record idempotency key: %w", err)
	}
	if n, err := res.RowsAffected(); err != nil {
		return err
	} else if n == 0 {
		return ErrIdempotencyInFlight
	}
	FaultPoint("idempotent-write-before-commit")
	return nil
}

// Replay is a stored idempotency record: the response when it was recorded (Status > 0), else
// the resource the write created.
type Replay struct {
	Status   int
	Response []byte
	Resource string
}

// Idempotent looks up a request's record: ErrNotFound when the key is new (or expired),
// ErrIdempotencyMismatch when it was used with another body.
func (s *Store) Idempotent(ctx context.Context, id Idempotency) (Replay, error) {
	var r Replay
	var h, created string
	err := s.db.QueryRowContext(ctx, s.q(`SELECT body_hash, status, response, resource, created_at FROM idempotency WHERE scope = ? AND route = ? AND key = ?`),
		id.Scope, id.Route, id.Key).Scan(&h, &r.Status, &r.Response, &r.Resource, &created)
	if errors.Is(err, sql.ErrNoRows) {
		return r, ErrNotFound
	}
	if err != nil {
		return r, err
	}
	if time.Since(parseTime(created)) > IdempotencyTTL {
		return r, ErrNotFound
	}
	if h != id.BodyHash {
		return r, ErrIdempotencyMismatch
	}
	return r, nil
}

// SaveIdempotent records the rendered response of a request: it completes the record its write
// inserted, or inserts one for a request that wrote nothing (a screening). A record already
// complete is kept.
func (s *Store) SaveIdempotent(ctx context.Context, id Idempotency, status int, resp []byte) error {
	return s.tx(ctx, func(tx *sql.Tx) error {
		res, err := s.exec(ctx, tx, `UPDATE idempotency SET status = ?, response = ? WHERE scope = ? AND route = ? AND key = ? AND status = 0`,
			status, resp, id.Scope, id.Route, id.Key)
		if err != nil {
			return err
		}
		if n, err := res.RowsAffected(); err != nil || n > 0 {
			return err
		}
		// no pending record: a request without a write, or an expired record being replaced
		if err := s.dropExpired(ctx, tx, id); err != nil {
			return err
		}
		_, err = s.exec(ctx, tx, `INSERT INTO idempotency (scope, route, key, body_hash, status, response, resource, created_at) VALUES (?, ?, ?, ?, ?, ?, '', ?)
			ON CONFLICT DO NOTHING`, id.Scope, id.Route, id.Key, id.BodyHash, status, resp, now())
		return err
	})
}

// dropExpired deletes the record of this key when it has expired.
func (s *Store) dropExpired(ctx context.Context, tx *sql.Tx, id Idempotency) error {
	_, err := s.exec(ctx, tx, `DELETE FROM idempotency WHERE scope = ? AND route = ? AND key = ? AND created_at < ?`,
		id.Scope, id.Route, id.Key, idemCutoff())
	return err
}

func idemCutoff() string { return time.Now().Add(-IdempotencyTTL).UTC().Format(time.RFC3339Nano) }

// PurgeIdempotency deletes records older than IdempotencyTTL and returns how many.
func (s *Store) PurgeIdempotency(ctx context.Context) (int64, error) {
	res, err := s.db.ExecContext(ctx, s.q(`DELETE FROM idempotency WHERE created_at < ?`), idemCutoff())
	if err != nil {
		return 0, s.fault(err)
	}
	return res.RowsAffected()
}
