package data

import (
	"context"
	"database/sql"
	"time"

	"github.com/jackc/pgx/v5"
)

// Job notifications: on PostgreSQL a new or canceled job is announced on the channel
// jobsChannel (NOTIFY, delivered at commit), so idle workers start at once instead of at their
// next poll. SQLite serves one process, which wakes its own runner.

const jobsChannel = "ringsieve_jobs"

// notifyJob announces a job event inside the transaction that makes it (PostgreSQL only).
func (s *Store) notifyJob(ctx context.Context, tx *sql.Tx, payload string) error {
	if s.dialect.name != "postgres" {
		return nil
	}
	_, err := tx.ExecContext(ctx, `SELECT pg_notify($1, $2)`, jobsChannel, payload)
	return err
}

// ListenJobs calls fn with the payload ("new:<job id>" or "canceled:<job id>") of every job
// event until ctx ends, reconnecting with back-off when the connection drops. On SQLite it
// returns at once: there is nothing to listen to.
func (s *Store) ListenJobs(ctx context.Context, fn func(payload string)) {
	if s.dialect.name != "postgres" {
		return
	}
	wait := time.Second
	for ctx.Err() == nil {
		// listen returns when the connection drops or cannot be made; meanwhile the runner's
		// poll still finds the work, so connecting again shortly is all there is to do
		s.listen(ctx, fn)
		if ctx.Err() != nil {
			return
		}
		select {
		case <-ctx.Done():
			return
		case <-time.After(wait):
		}
		wait = min(2*wait, 30*time.Second)
	}
}

// listen delivers notifications to fn until the connection drops or cannot be made.
func (s *Store) listen(ctx context.Context, fn func(string)) {
	conn, err := pgx.Connect(ctx, s.dsn)
	if err != nil {
		return
	}
	defer conn.Close(context.WithoutCancel(ctx))
	if _, err := conn.Exec(ctx, "LISTEN "+jobsChannel); err != nil {
		return
	}
	fn("listening") // events may have been missed while disconnected: look for work now
	for {
		n, err := conn.WaitForNotification(ctx)
		if err != nil {
			return
		}
		fn(n.Payload)
	}
}
