// Package migrations holds the numbered SQL migrations of the ringsieve store, one folder per
// engine (goose format), embedded so the binary migrates its database on start. Some versions
// are data migrations written in Go (data/open.go lists them): SQLite 4, 7 and 13, PostgreSQL 6.
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
