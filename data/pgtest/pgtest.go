// Package pgtest gives tests a PostgreSQL database of their own: created empty on the server
// named by RINGSIEVE_TEST_PG (default postgres://127.0.0.1:5432/postgres?sslmode=disable) and
// dropped when the test ends. Without a reachable server the test is skipped — except under
// CI=true, where a missing PostgreSQL is a failure. Only tests import it.
package pgtest

import (
	"context"
	"crypto/rand"
	"database/sql"
	"encoding/hex"
	"net/url"
	"os"
	"testing"
	"time"

	_ "github.com/jackc/pgx/v5/stdlib" // database/sql driver "pgx"
)

// DefaultServer is the PostgreSQL server tests use when RINGSIEVE_TEST_PG is not set.
const DefaultServer = "postgres://127.0.0.1:5432/postgres?sslmode=disable"

// Server returns the URL of the maintenance database tests connect to.
func Server() string {
	if v := os.Getenv("RINGSIEVE_TEST_PG"); v != "" {
		return v
	}
	return DefaultServer
}

// NewDatabase creates an empty database for t and returns its URL; it is dropped (with any
// connections left) at cleanup.
func NewDatabase(t testing.TB) string {
	t.Helper()
	admin, err := sql.Open("pgx", Server())
	if err != nil {
		unavailable(t, err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	if err := admin.PingContext(ctx); err != nil {
		admin.Close()
		unavailable(t, err)
	}
	var b [6]byte
	rand.Read(b[:])
	name := "ringsieve_test_" + hex.EncodeToString(b[:])
	if _, err := admin.ExecContext(ctx, `CREATE DATABASE `+name); err != nil {
		admin.Close()
		t.Fatalf("create test database: %v", err)
	}
	t.Cleanup(func() {
		ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
		defer cancel()
		if _, err := admin.ExecContext(ctx, `DROP DATABASE IF EXISTS `+name+` WITH (FORCE)`); err != nil {
			t.Errorf("drop test database %s: %v", name, err)
		}
		admin.Close()
	})
	u, err := url.Parse(Server())
	if err != nil {
		t.Fatal(err)
	}
	u.Path = "/" + name
	return u.String()
}

func unavailable(t testing.TB, err error) {
	t.Helper()
	if os.Getenv("CI") == "true" {
		t.Fatalf("PostgreSQL is required under CI=true and is not reachable at %s: %v", Server(), err)
	}
	t.Skipf("PostgreSQL not reachable at %s (set RINGSIEVE_TEST_PG): %v", Server(), err)
}
