package data

import (
	"context"
	"database/sql"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

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

// TestPackMigrationKeepsJobs builds a database at the layout before packed chunks (SQLite 11,
// PostgreSQL 4: a row per item in job_items and job_results) on both engines, opens it with
// this version and checks that every item, outcome and rank survives the packing: a running
// job with one done chunk and one holding an outcome stored item by item (as jobs carried over
// from the first version do), and a finished job that never had chunks (SQLite's oldest jobs).
func TestPackMigrationKeepsJobs(t *testing.T) {
	ctx := context.Background()
	for _, e := range engines {
		t.Run(e.name, func(t *testing.T) {
			dsn := e.dsn(t)
			raw := &Store{dialect: sqliteDialect}
			var err error
			dialect, fsys, before := goose.DialectSQLite3, migrations.SQLite, int64(11)
			if IsPostgresURL(dsn) {
				raw.dialect, dialect, fsys, before = postgresDialect, goose.DialectPostgres, migrations.Postgres, 4
				raw.db, err = sql.Open("pgx", dsn)
			} else {
				raw.db, err = sql.Open("sqlite3", "file:"+dsn+"?_foreign_keys=on")
			}
			if err != nil {
				t.Fatal(err)
			}
			prov, err := raw.migrations(dialect, fsys)
			if err != nil {
				t.Fatal(err)
			}
			if _, err := prov.UpTo(ctx, before); err != nil {
				t.Fatal(err)
			}
			key := func(score, dg float64) []byte { k := batch.ScoreKey(score, dg); return k[:] }
			failed := batch.FailedKey()
			for _, st := range []struct {
				q    string
				args []any
			}{
				{`INSERT INTO jobs (id, status, conditions, total, done, failed, source_format, extra_columns, created_at) VALUES (?, 'running', '{}', 4, 3, 1, 'csv', '["lab"]', '2026-11-01T00:00:00Z')`, []any{"job_run"}},
				{`INSERT INTO jobs (id, status, conditions, total, done, failed, source_format, created_at) VALUES (?, 'done', '{}', 2, 2, 0, 'json', '2026-10-01T00:00:00Z')`, []any{"job_bare"}},
				{`INSERT INTO job_chunks (job_id, chunk_no, first_seq, last_seq, state) VALUES ('job_run', 0, 0, 1, 'done'), ('job_run', 1, 2, 3, 'pending')`, nil},
				{`INSERT INTO job_items (job_id, seq, item_id, line, source, extra) VALUES (?, 0, 'a', 2, '{"smiles":"C1=CCCC1"}', '["east"]'), (?, 1, 'b', 3, '{"smiles":"C1=CC("}', '["west"]'),
					(?, 2, 'c', 4, '{"smiles":"C1=CC2CCC1C2"}', '[""]'), (?, 3, 'd', 5, '{"monomer_id":"mon_1"}', '["x,y"]')`, []any{"job_run", "job_run", "job_run", "job_run"}},
				{`INSERT INTO job_results (job_id, seq, rank_key, verdict, failed, result, summary) VALUES (?, 0, ?, 'equilibrium_limited', 0, ?, 'equilibrium_limited'),
					(?, 1, ?, '', 1, ?, ''), (?, 2, ?, 'polymerizes', 0, ?, 'polymerizes')`,
					[]any{"job_run", key(0.5, -1.5), []byte(`{"verdict":"equilibrium_limited"}`), "job_run", failed[:], []byte(`{"code":"invalid_smiles"}`),
						"job_run", key(0.9, -40), []byte(`{"verdict":"polymerizes"}`)}},
				{`INSERT INTO job_items (job_id, seq, item_id, source) VALUES (?, 0, 'p', '{"smiles":"C1=CCCCCCC1"}'), (?, 1, 'q', '{"smiles":"C1=CCCC1"}')`, []any{"job_bare", "job_bare"}},
				{`INSERT INTO job_results (job_id, seq, rank_key, verdict, failed, result, summary) VALUES (?, 0, ?, 'polymerizes', 0, ?, 's0'), (?, 1, ?, 'polymerizes', 0, ?, 's1')`,
					[]any{"job_bare", key(0.2, -10), []byte(`{"n":0}`), "job_bare", key(0.8, -20), []byte(`{"n":1}`)}},
			} {
				if _, err := raw.db.ExecContext(ctx, raw.q(st.q), st.args...); err != nil {
					t.Fatalf("%s: %v", st.q, err)
				}
			}
			raw.db.Close()

			s, err := Open(ctx, dsn)
			if err != nil {
				t.Fatal(err)
			}
			defer s.Close()
			ranked := func(job string) []string {
				var out []string
				err := s.RankedItems(ctx, job, 0, 0, func(rank int, it RankedItem) error {
					out = append(out, fmt.Sprintf("%d %s line %d %q %s %s %s", rank, it.ItemID, it.Line, it.Extra, it.State, it.Result, it.Summary))
					return nil
				})
				if err != nil {
					t.Fatal(err)
				}
				return out
			}
			want := []string{
				`1 c line 4 [""] done {"verdict":"polymerizes"} polymerizes`,
				`2 a line 2 ["east"] done {"verdict":"equilibrium_limited"} equilibrium_limited`,
				`3 b line 3 ["west"] failed {"code":"invalid_smiles"} `,
				`4 d line 5 ["x,y"] pending  `,
			}
			if got := ranked("job_run"); !slices.Equal(got, want) {
				t.Errorf("running job after packing:\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
			}
			want = []string{`1 q line 0 [] done {"n":1} s1`, `2 p line 0 [] done {"n":0} s0`}
			if got := ranked("job_bare"); !slices.Equal(got, want) {
				t.Errorf("finished job without chunks after packing:\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
			}
			var page []string
			if err := s.RankedItems(ctx, "job_run", 1, 2, func(rank int, it RankedItem) error {
				page = append(page, fmt.Sprintf("%d %s", rank, it.ItemID))
				return nil
			}); err != nil || !slices.Equal(page, []string{"2 a", "3 b"}) {
				t.Errorf("page from 1, 2 items: %v %v", page, err)
			}
			c, err := s.ClaimChunk(ctx, "w", time.Minute)
			if err != nil {
				t.Fatal(err)
			}
			items, err := s.ChunkItems(ctx, c)
			if err != nil || len(items) != 1 || items[0].ItemID != "d" || items[0].Source.MonomerID != "mon_1" || !slices.Equal(items[0].Extra, []string{"x,y"}) {
				t.Fatalf("resumed items %+v %v", items, err)
			}
			if st, err := s.CompleteChunk(ctx, c, []batch.Outcome{{Seq: 3, Key: batch.ScoreKey(0.7, -5), Result: []byte(`{}`), Summary: "d"}}); err != nil || st != batch.JobDone {
				t.Fatalf("resumed job: %s %v", st, err)
			}
			if j, _ := s.GetJob(ctx, "job_run"); j.Done != 4 || j.Failed != 1 {
				t.Errorf("counters after resume: %+v", j)
			}
			if got := ranked("job_run"); len(got) != 4 || !strings.HasPrefix(got[1], "2 d ") {
				t.Errorf("after resume: %q", got)
			}
			var n int
			if err := s.DB().QueryRow(`SELECT count(*) FROM job_items`).Scan(&n); err == nil {
				t.Errorf("job_items still there (%d rows)", n)
			}
		})
	}
}
