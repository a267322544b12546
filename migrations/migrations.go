// Package migrations holds the numbered SQL migrations of the ringsieve store, one folder per
// engine (goose format), embedded so the binary migrates its database on start. Version 4 is a
// data migration written in Go (data/migrate_jobs.go).
package migrations

import (
	"embed"
	"io/fs"
)

//go:embed sqlite/*.sql
var sqliteFS embed.FS

//go:embed postgres/*.sql
var postgresFS embed.FS

// SQLite holds the migrations of the embedded SQLite store.
var SQLite = sub(sqliteFS, "sqlite")

// Postgres holds the migrations of the PostgreSQL store (scale-out).
var Postgres = sub(postgresFS, "postgres")

func sub(f embed.FS, dir string) fs.FS {
	s, err := fs.Sub(f, dir)
	if err != nil {
		panic(err) // the folder is embedded at build time
	}
	return s
}
