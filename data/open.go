package data

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"io/fs"
	"net/url"
	"os"
	"strings"

	"github.com/mattn/go-sqlite3" // SQLite driver (cgo)
	"github.com/pressly/goose/v3"

	"ringsieve/migrations"
)

// Open opens the store named by dsn: a postgres:// or postgresql:// URL is a PostgreSQL
// database shared by any number of processes; anything else is the path of an SQLite database
// (created with mode 0600) that serves one process. Either is migrated when needed.
func Open(ctx context.Context, dsn string) (*Store, error) {
	if IsPostgresURL(dsn) {
		return openPostgres(ctx, dsn)
	}
	return openSQLite(ctx, dsn)
}

// IsPostgresURL reports whether dsn names a PostgreSQL database.
func IsPostgresURL(dsn string) bool {
	return strings.HasPrefix(dsn, "postgres://") || strings.HasPrefix(dsn, "postgresql://")
}

// SQLite settings: WAL journaling (readers never block the writer), foreign keys on, a busy
// timeout, immediate write transactions (no lock upgrades that deadlock), and synchronous=FULL:
// a write acknowledged to a client has been flushed to the disk with its WAL frame, so it
// survives a crash of the process and of the machine (power loss), at the cost of one sync per
// commit (design choice; job results are committed a chunk at a time, so the cost is small).
// The log is copied back into the file when the store is idle, not inside a busy commit
// (checkpoint.go).
//
// The file is opened through SQLite's "unix-excl" VFS: the first access takes an exclusive lock
// for this process (its connections share the file; another process gets ErrInUse), and the WAL
// index lives in heap memory instead of a memory-mapped -shm file. A memory-mapped file that
// cannot be written (a file made immutable, a full disk) ends a process with SIGBUS; heap memory
// cannot, so storage faults come back as errors (ErrUnavailable) and the service stays up.
func openSQLite(ctx context.Context, path string) (*Store, error) {
	if err := createPrivate(path); err != nil {
		return nil, fmt.Errorf("open %s: %w", path, err)
	}
	q := url.Values{}
	q.Set("_journal_mode", "WAL")
	q.Set("_foreign_keys", "on")
	q.Set("_busy_timeout", "2000")
	q.Set("_synchronous", "FULL")
	q.Set("_txlock", "immediate")
	q.Set("vfs", "unix-excl")
	// the path is part of a URI: escape the characters that would end or change it
	esc := strings.NewReplacer("%", "%25", "?", "%3f", "#", "%23").Replace(path)
	registerSQLiteDriver()
	db, err := sql.Open(sqliteDriverName, "file:"+esc+"?"+q.Encode())
	if err != nil {
		return nil, fmt.Errorf("open %s: %w", path, err)
	}
	db.SetMaxOpenConns(8)
	if err := db.PingContext(ctx); err != nil {
		db.Close()
		if inUse(err) {
			return nil, errInUse(path)
		}
		return nil, fmt.Errorf("open %s: %w", path, err)
	}
	s := &Store{db: db, dialect: sqliteDialect, path: path, writeSlot: make(chan struct{}, 1)}
	if err := s.migrate(ctx, goose.DialectSQLite3, migrations.SQLite); err != nil {
		db.Close()
		if inUse(err) {
			return nil, errInUse(path)
		}
		return nil, fmt.Errorf("migrate %s: %w", path, err)
	}
	// this process holds the file alone: chunks still claimed were claimed by a process that
	// ended without giving them back (a crash), so they are free now rather than when their
	// leases run out
	if _, err := db.ExecContext(ctx, `UPDATE job_chunks SET state = 'pending', owner = '', lease_until_ms = 0 WHERE state = 'claimed'`); err != nil {
		db.Close()
		return nil, fmt.Errorf("open %s: release claims of an earlier process: %w", path, err)
	}
	// for the same reason a job still loading lost its upload: it goes, with what was screened
	if _, err := db.ExecContext(ctx, `DELETE FROM jobs WHERE id IN (SELECT job_id FROM job_loading)`); err != nil {
		db.Close()
		return nil, fmt.Errorf("open %s: remove jobs whose upload an earlier process left unfinished: %w", path, err)
	}
	s.ckpt = newCheckpointer(db)
	return s, nil
}

// inUse reports whether err is SQLite's answer to a file locked by another process.
func inUse(err error) bool {
	var se sqlite3.Error
	return errors.As(err, &se) && (se.Code == sqlite3.ErrBusy || se.Code == sqlite3.ErrLocked)
}

func errInUse(path string) error {
	return fmt.Errorf("%s: %w: an SQLite store serves one process at a time — stop the other ringsieve process (a running server) first, or use a PostgreSQL store for several", path, ErrInUse)
}

// createPrivate creates the database file readable by its owner only when it does not exist
// yet (SQLite gives its WAL and shared-memory files the same mode).
func createPrivate(path string) error {
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o600)
	if errors.Is(err, fs.ErrExist) {
		return nil
	}
	if err != nil {
		return err
	}
	return f.Close()
}

// migrate applies every pending migration of the engine's folder and the data migrations
// written in Go: on SQLite moving job results of earlier versions into the chunked layout and
// backfilling structure keys (a PostgreSQL store started at that layout), on both packing job
// items and outcomes into their chunks.
func (s *Store) migrate(ctx context.Context, d goose.Dialect, fsys fs.FS) error {
	prov, err := s.migrations(d, fsys)
	if err != nil {
		return err
	}
	_, err = prov.Up(ctx)
	return err
}

// migrations returns the engine's migrations with the Go ones registered.
func (s *Store) migrations(d goose.Dialect, fsys fs.FS) (*goose.Provider, error) {
	pack := &goose.GoFunc{RunTx: s.packJobRows}
	var opts []goose.ProviderOption
	if d == goose.DialectSQLite3 {
		opts = append(opts, goose.WithGoMigrations(
			goose.NewGoMigration(4, &goose.GoFunc{RunTx: s.moveLegacyJobResults}, nil),
			goose.NewGoMigration(7, &goose.GoFunc{RunTx: s.backfillStructureKeys}, nil),
			goose.NewGoMigration(13, pack, nil),
		))
	} else {
		opts = append(opts, goose.WithGoMigrations(goose.NewGoMigration(6, pack, nil)))
	}
	prov, err := goose.NewProvider(d, s.db, fsys, opts...)
	if err != nil {
		return nil, fmt.Errorf("migrations: %w", err)
	}
	return prov, nil
}
