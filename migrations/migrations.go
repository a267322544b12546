// Package migrations holds the numbered SQL migrations of the ringsieve store, embedded so the
// binary migrates its database on start.
package migrations

import "embed"

// FS holds the *.sql migration files (goose format).
//
//go:embed *.sql
var FS embed.FS
