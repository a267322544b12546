package data

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"sync"
	"time"

	"github.com/mattn/go-sqlite3"
)

// ErrUnavailable: the store cannot take writes (or answer) right now — a read-only or full
// disk, an I/O error, a lock held too long. Nothing was written; the request may be retried
// later. Reads may still work.
var ErrUnavailable = errors.New("the store cannot take writes at the moment")

// ErrInUse: another process holds the SQLite file (an SQLite store serves one process).
var ErrInUse = errors.New("the database is in use by another process")

// faultState remembers the last storage fault until a probe write succeeds.
type faultState struct {
	mu        sync.Mutex
	since     time.Time // zero: healthy
	detail    string
	lastProbe time.Time
}

// probeEvery spaces the probe writes while the store is degraded (design choice).
const probeEvery = 2 * time.Second

// storageFault reports whether err is a fault of the storage itself rather than of the request:
// SQLite's read-only, full, I/O, cannot-open, permission, busy and locked results.
func storageFault(err error) bool {
	if pgFault(err) {
		return true
	}
	var se sqlite3.Error
	if !errors.As(err, &se) {
		return false
	}
	switch se.Code {
	case sqlite3.ErrReadonly, sqlite3.ErrFull, sqlite3.ErrIoErr, sqlite3.ErrCantOpen, sqlite3.ErrPerm,
		sqlite3.ErrBusy, sqlite3.ErrLocked:
		return true
	}
	return false
}

// fault classifies a write error: a storage fault marks the store degraded and comes back
// wrapping ErrUnavailable (with the engine's words, which the API does not show).
func (s *Store) fault(err error) error {
	if err == nil || !storageFault(err) {
		return err
	}
	s.faults.mu.Lock()
	if s.faults.since.IsZero() {
		s.faults.since = time.Now()
	}
	s.degraded.Store(true)
	s.faults.detail = err.Error()
	s.faults.mu.Unlock()
	return fmt.Errorf("%w (%v)", ErrUnavailable, err)
}

// recovered clears the degraded state after a write has committed.
func (s *Store) recovered() {
	if !s.degraded.Load() {
		return
	}
	s.faults.mu.Lock()
	s.faults.since, s.faults.detail = time.Time{}, ""
	s.degraded.Store(false)
	s.faults.mu.Unlock()
}

// Health is what the store reports to /healthz.
type Health struct {
	Reachable bool      // reads answer
	Writable  bool      // the last write (or probe write) succeeded
	Since     time.Time // when writes started failing (zero when writable)
	Detail    string    // the engine's last fault message (for logs)
}

// Health pings the store and, while it is degraded, tries a probe write (at most every two
// seconds) so that the state clears as soon as writes work again.
func (s *Store) Health(ctx context.Context) Health {
	var one int
	h := Health{Reachable: s.db.QueryRowContext(ctx, `SELECT 1 FROM store_probe WHERE id = 1`).Scan(&one) == nil}
	s.faults.mu.Lock()
	degraded, due := !s.faults.since.IsZero(), time.Since(s.faults.lastProbe) >= probeEvery
	if degraded && due {
		s.faults.lastProbe = time.Now()
	}
	s.faults.mu.Unlock()
	if degraded && due {
		err := s.tx(ctx, func(tx *sql.Tx) error {
			_, err := s.exec(ctx, tx, `UPDATE store_probe SET at = ? WHERE id = 1`, now())
			return err
		})
		if err == nil {
			s.recovered()
		}
	}
	s.faults.mu.Lock()
	defer s.faults.mu.Unlock()
	h.Writable, h.Since, h.Detail = s.faults.since.IsZero(), s.faults.since, s.faults.detail
	return h
}
