package data

import (
	"context"
	"database/sql"
	"encoding/json"
	"os"
	"path/filepath"
	"testing"

	"github.com/pressly/goose/v3"

	"ringsieve/migrations"
	"ringsieve/screening/batch"
)

// TestLegacyJobsMigrate builds a database as the first version left it (migrations 1 and 2,
// results in job_items, an HTTP problem for a failed item, request conditions), opens it with
// this version and checks that nothing stored is lost: results keep their rank, the failure
// becomes an item error, and the unfinished job resumes from its pending item only.
func TestLegacyJobsMigrate(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "legacy.db")
	db, err := sql.Open("sqlite3", "file:"+path)
	if err != nil {
		t.Fatal(err)
	}
	prov, err := goose.NewProvider(goose.DialectSQLite3, db, migrations.SQLite)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := prov.UpTo(ctx, 2); err != nil {
		t.Fatal(err)
	}
	for _, q := range []string{
		`INSERT INTO jobs (id, status, conditions, total, done, failed, source_format, created_at) VALUES ('job_old', 'running', '{"temperature_c":40,"catalyst":"mo-w-imido"}', 3, 2, 1, 'json', '2026-11-01T00:00:00Z')`,
		`INSERT INTO job_items (job_id, seq, item_id, source, state, verdict, score, dg, result) VALUES ('job_old', 0, 'a', '{"smiles":"C1=CCCC1"}', 'done', 'equilibrium_limited', 0.5, -1.5, '{"verdict":"equilibrium_limited"}')`,
		`INSERT INTO job_items (job_id, seq, item_id, source, state, result) VALUES ('job_old', 1, 'b', '{"smiles":"C1=CC("}', 'failed', '{"type":"https://ringsieve.invalid/problems/invalid-smiles","title":"Invalid SMILES","status":422,"detail":"invalid SMILES at position 5: x","position":5,"field":"smiles"}')`,
		`INSERT INTO job_items (job_id, seq, item_id, source) VALUES ('job_old', 2, 'c', '{"smiles":"C1=CC2CCC1C2"}')`,
	} {
		if _, err := db.Exec(q); err != nil {
			t.Fatal(err)
		}
	}
	db.Close()
	s, err := Open(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	j, err := s.GetJob(ctx, "job_old")
	if err != nil {
		t.Fatal(err)
	}
	if j.Conditions.TemperatureC != 40 || j.Conditions.Catalyst != "mo-w-imido" || j.Conditions.MonomerConcMolL != 1 {
		t.Errorf("legacy conditions read as %+v", j.Conditions)
	}
	var states []string
	var failure batch.ItemError
	s.RankedItems(ctx, "job_old", 0, 0, func(rank int, it RankedItem) error {
		states = append(states, it.ItemID+":"+it.State)
		if it.State == batch.ItemFailed {
			if err := json.Unmarshal(it.Result, &failure); err != nil {
				t.Fatal(err)
			}
		}
		return nil
	})
	if len(states) != 3 || states[0] != "a:done" || states[1] != "b:failed" || states[2] != "c:pending" {
		t.Errorf("ranked after migration: %v", states)
	}
	if failure.Code != batch.CodeInvalidSMILES || failure.Position == nil || *failure.Position != 5 {
		t.Errorf("legacy problem became %+v", failure)
	}
	c, err := s.ClaimChunk(ctx, "w", 60e9)
	if err != nil {
		t.Fatal(err)
	}
	items, err := s.ChunkItems(ctx, c)
	if err != nil || len(items) != 1 || items[0].ItemID != "c" {
		t.Fatalf("resumed items %+v %v", items, err)
	}
	st, err := s.CompleteChunk(ctx, c, []batch.Outcome{{Seq: 2, Key: batch.ScoreKey(0.9, -40), Result: []byte(`{}`)}})
	if err != nil || st != batch.JobDone {
		t.Fatalf("resumed job: %s %v", st, err)
	}
	if j, _ = s.GetJob(ctx, "job_old"); j.Done != 3 || j.Failed != 1 {
		t.Errorf("counters after resume: %+v", j)
	}
}

// TestDatabaseFileIsPrivate: a new database file is readable by its owner only.
func TestDatabaseFileIsPrivate(t *testing.T) {
	_, path := openTemp(t)
	fi, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	if mode := fi.Mode().Perm(); mode != 0o600 {
		t.Errorf("database file mode %o, want 600", mode)
	}
}
