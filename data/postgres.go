package data

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"hash/fnv"
	"net/url"
	"strings"

	"github.com/jackc/pgx/v5/pgconn"
	_ "github.com/jackc/pgx/v5/stdlib" // PostgreSQL driver (database/sql "pgx")
	"github.com/pressly/goose/v3"

	"ringsieve/migrations"
)

// The PostgreSQL store: the same SQL as SQLite with numbered placeholders, a claim that locks
// the chunk row and skips chunks other workers hold, and a few engine functions. Several
// server replicas and workers share it; everything that must hold across them (job claims,
// idempotency records, API keys, rate-limit buckets) lives in the database.

var postgresDialect = dialect{
	name:     "postgres",
	numbered: true,
	lockSkip: " FOR UPDATE OF c SKIP LOCKED",
	tagList:  `COALESCE((SELECT string_agg(tag, chr(31) ORDER BY tag) FROM monomer_tags t WHERE t.monomer_id = m.id), '')`,
}

// migrationLockID is the advisory lock that serializes migrations when several processes start
// on one database at once (any fixed number; derived from the project's name).
var migrationLockID = func() int64 {
	h := fnv.New64a()
	h.Write([]byte("ringsieve migrations"))
	return int64(h.Sum64() >> 1)
}()

func openPostgres(ctx context.Context, dsn string) (*Store, error) {
	db, err := sql.Open("pgx", dsn)
	if err != nil {
		return nil, fmt.Errorf("open %s: %w", Redact(dsn), err)
	}
	db.SetMaxOpenConns(16)
	db.SetMaxIdleConns(8)
	if err := db.PingContext(ctx); err != nil {
		db.Close()
		return nil, fmt.Errorf("open %s: %w", Redact(dsn), err)
	}
	s := &Store{db: db, dialect: postgresDialect, path: Redact(dsn), dsn: dsn}
	// one process migrates at a time: the others wait on the advisory lock, then find nothing to do
	conn, err := db.Conn(ctx)
	if err != nil {
		db.Close()
		return nil, fmt.Errorf("open %s: %w", Redact(dsn), err)
	}
	defer conn.Close()
	if _, err := conn.ExecContext(ctx, `SELECT pg_advisory_lock($1)`, migrationLockID); err != nil {
		db.Close()
		return nil, fmt.Errorf("migrate %s: %w", Redact(dsn), err)
	}
	err = s.migrate(ctx, goose.DialectPostgres, migrations.Postgres)
	conn.ExecContext(context.WithoutCancel(ctx), `SELECT pg_advisory_unlock($1)`, migrationLockID)
	if err != nil {
		db.Close()
		return nil, fmt.Errorf("migrate %s: %w", Redact(dsn), err)
	}
	return s, nil
}

// Redact drops the password of a PostgreSQL URL for messages and logs.
func Redact(dsn string) string {
	u, err := url.Parse(dsn)
	if err != nil {
		return "postgres://…"
	}
	if _, ok := u.User.Password(); ok {
		u.User = url.UserPassword(u.User.Username(), "xxxxx")
	}
	return u.String()
}

// pgFault reports whether err is a fault of the PostgreSQL server or the connection rather
// than of the request: connection exceptions (class 08), insufficient resources (53, e.g. a
// full disk), operator intervention (57, e.g. a shutdown), a read-only transaction (25006, a
// standby), and a connection that could not be made at all.
func pgFault(err error) bool {
	var pe *pgconn.PgError
	if errors.As(err, &pe) {
		return strings.HasPrefix(pe.Code, "08") || strings.HasPrefix(pe.Code, "53") || strings.HasPrefix(pe.Code, "57") || pe.Code == "25006"
	}
	var ce *pgconn.ConnectError
	return errors.As(err, &ce) || pgconn.Timeout(err) || errors.Is(err, sql.ErrConnDone)
}

// retryable reports whether a transaction failed only because of a concurrent one
// (serialization failure or deadlock) and may simply be run again.
func retryable(err error) bool {
	var pe *pgconn.PgError
	return errors.As(err, &pe) && (pe.Code == "40001" || pe.Code == "40P01")
}
