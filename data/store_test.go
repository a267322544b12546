package data

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"sync"
	"testing"
)

// Store tests run on a real SQLite file in a temporary directory.

func openTemp(t *testing.T) (*Store, string) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "test.db")
	s, err := Open(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { s.Close() })
	return s, path
}

func TestMonomerLifecycle(t *testing.T) {
	ctx := context.Background()
	s, path := openTemp(t)
	m, err := s.CreateMonomer(ctx, Monomer{Name: "MEM-01 parent norbornene", SMILES: "C1=CC2CCC1C2", Tags: []string{"membrane", "round-1", "membrane"}})
	if err != nil {
		t.Fatal(err)
	}
	if m.Version != 1 || len(m.Tags) != 2 || m.ID == "" {
		t.Fatalf("created %+v", m)
	}
	got, err := s.GetMonomer(ctx, m.ID)
	if err != nil || got.Name != m.Name || got.SMILES != m.SMILES || len(got.Tags) != 2 {
		t.Fatalf("read %+v %v", got, err)
	}
	// replace with the right version, then with a stale one
	r, err := s.ReplaceMonomer(ctx, m.ID, Monomer{Name: "MEM-01b", Descriptors: json.RawMessage(`{"ring_size":5}`), Tags: []string{"round-2"}}, 1)
	if err != nil || r.Version != 2 {
		t.Fatalf("replace: %+v %v", r, err)
	}
	if _, err := s.ReplaceMonomer(ctx, m.ID, Monomer{Name: "x"}, 1); !errors.Is(err, ErrConflict) {
		t.Fatalf("stale replace: %v", err)
	}
	if _, err := s.ReplaceMonomer(ctx, "mon_missing", Monomer{Name: "x"}, 0); !errors.Is(err, ErrNotFound) {
		t.Fatalf("replace missing: %v", err)
	}
	// survives a reopen (the store is a file)
	s.Close()
	s2, err := Open(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	defer s2.Close()
	got, err = s2.GetMonomer(ctx, m.ID)
	if err != nil || got.Name != "MEM-01b" || got.Version != 2 || string(got.Descriptors) != `{"ring_size":5}` || got.Tags[0] != "round-2" {
		t.Fatalf("after reopen: %+v %v", got, err)
	}
	// results history, then delete cascades
	res, err := s2.SaveResult(ctx, SavedResult{MonomerID: m.ID, Conditions: json.RawMessage(`{}`), Verdict: "polymerizes", Score: 0.9, Result: json.RawMessage(`{}`), EngineVersion: "test"})
	if err != nil || res.ID == 0 {
		t.Fatalf("save result: %v", err)
	}
	hist, err := s2.ListResults(ctx, m.ID, 10)
	if err != nil || len(hist) != 1 {
		t.Fatalf("history %v %v", hist, err)
	}
	if _, err := s2.SaveResult(ctx, SavedResult{MonomerID: "mon_missing", Conditions: json.RawMessage(`{}`), Result: json.RawMessage(`{}`)}); !errors.Is(err, ErrNotFound) {
		t.Fatalf("result for a missing monomer: %v", err)
	}
	if err := s2.DeleteMonomer(ctx, m.ID); err != nil {
		t.Fatal(err)
	}
	if err := s2.DeleteMonomer(ctx, m.ID); !errors.Is(err, ErrNotFound) {
		t.Fatalf("second delete: %v", err)
	}
	var n int
	s2.DB().QueryRow(`SELECT count(*) FROM results`).Scan(&n)
	if n != 0 {
		t.Fatalf("%d results left after delete", n)
	}
}

func TestListMonomersFilterAndPage(t *testing.T) {
	ctx := context.Background()
	s, _ := openTemp(t)
	for i, name := range []string{"Alpha norbornene", "Beta oxanorbornene", "Gamma cyclooctene", "alpha prime"} {
		tags := []string{"all"}
		if i%2 == 0 {
			tags = append(tags, "even")
		}
		if _, err := s.CreateMonomer(ctx, Monomer{Name: name, SMILES: "C1=CCCC1", Tags: tags}); err != nil {
			t.Fatal(err)
		}
	}
	items, total, err := s.ListMonomers(ctx, MonomerFilter{Tag: "even", Limit: 10})
	if err != nil || total != 2 || len(items) != 2 {
		t.Fatalf("tag filter: %d of %d, %v", len(items), total, err)
	}
	items, total, _ = s.ListMonomers(ctx, MonomerFilter{Name: "ALPHA", Limit: 10})
	if total != 2 || len(items) != 2 {
		t.Fatalf("name filter: %d of %d", len(items), total)
	}
	items, total, _ = s.ListMonomers(ctx, MonomerFilter{Limit: 3, Offset: 3})
	if total != 4 || len(items) != 1 {
		t.Fatalf("page 2: %d of %d", len(items), total)
	}
}

// TestFailedWriteLeavesNothing: a transaction that fails half-way (a tag insert violating the
// primary key inside the same transaction) leaves no monomer row behind.
func TestFailedWriteLeavesNothing(t *testing.T) {
	ctx := context.Background()
	s, _ := openTemp(t)
	id := "mon_fixed"
	err := s.tx(ctx, func(tx *sql.Tx) error {
		if _, err := tx.ExecContext(ctx, `INSERT INTO monomers (id, name, created_at, updated_at) VALUES (?, 'x', 'now', 'now')`, id); err != nil {
			return err
		}
		return insertTags(ctx, tx, id, []string{"dup", "dup"})
	})
	if err == nil {
		t.Fatal("duplicate tag insert succeeded")
	}
	if _, err := s.GetMonomer(ctx, id); !errors.Is(err, ErrNotFound) {
		t.Fatalf("half-written monomer found: %v", err)
	}
}

func TestJobsRecordOnceAndCancel(t *testing.T) {
	ctx := context.Background()
	s, _ := openTemp(t)
	items := []JobItem{{ItemID: "a", Source: json.RawMessage(`{"smiles":"C1=CCCC1"}`)}, {ItemID: "b", Source: json.RawMessage(`{"smiles":"C"}`)}}
	j, err := s.CreateJobStream(ctx, func(add func(JobItem) error) (JobMeta, error) {
		for _, it := range items {
			if err := add(it); err != nil {
				return JobMeta{}, err
			}
		}
		return JobMeta{Conditions: json.RawMessage(`{}`), Format: "json"}, nil
	})
	if err != nil {
		t.Fatal(err)
	}
	out := []ItemOutcome{{Seq: 0, Verdict: "polymerizes", Score: 0.9, DG: -10, Result: []byte(`{}`)}}
	// recording the same outcome twice (a replay after a crash) counts it once
	for i := 0; i < 2; i++ {
		if _, err := s.RecordOutcomes(ctx, j.ID, out); err != nil {
			t.Fatal(err)
		}
	}
	got, _ := s.GetJob(ctx, j.ID)
	if got.Done != 1 {
		t.Fatalf("done %d after a replay, want 1", got.Done)
	}
	if _, err := s.CancelJob(ctx, j.ID); err != nil {
		t.Fatal(err)
	}
	if _, err := s.CancelJob(ctx, j.ID); !errors.Is(err, ErrConflict) {
		t.Fatalf("second cancel: %v", err)
	}
	if err := s.FinishJob(ctx, j.ID, JobDone, ""); err != nil {
		t.Fatal(err)
	}
	got, _ = s.GetJob(ctx, j.ID)
	if got.Status != JobCanceled {
		t.Fatalf("a canceled job became %s", got.Status)
	}
}

// TestJobStreamRollsBack: an error from the item producer stores nothing.
func TestJobStreamRollsBack(t *testing.T) {
	ctx := context.Background()
	s, _ := openTemp(t)
	_, err := s.CreateJobStream(ctx, func(add func(JobItem) error) (JobMeta, error) {
		add(JobItem{ItemID: "a", Source: json.RawMessage(`{}`)})
		return JobMeta{}, errors.New("bad row")
	})
	if err == nil {
		t.Fatal("no error")
	}
	var n int
	s.DB().QueryRow(`SELECT (SELECT count(*) FROM jobs) + (SELECT count(*) FROM job_items)`).Scan(&n)
	if n != 0 {
		t.Fatalf("%d rows left behind", n)
	}
}

func TestAPIKeysAndIdempotency(t *testing.T) {
	ctx := context.Background()
	s, _ := openTemp(t)
	k, secret, err := s.CreateAPIKey(ctx, "notebook")
	if err != nil {
		t.Fatal(err)
	}
	var stored string
	s.DB().QueryRow(`SELECT hash FROM api_keys WHERE id = ?`, k.ID).Scan(&stored)
	if stored == secret || stored == "" {
		t.Fatal("secret stored in clear")
	}
	if id, err := s.CheckAPIKey(ctx, secret); err != nil || id != k.ID {
		t.Fatalf("check: %v %v", id, err)
	}
	s.RevokeAPIKey(ctx, k.ID)
	if _, err := s.CheckAPIKey(ctx, secret); !errors.Is(err, ErrNotFound) {
		t.Fatal("revoked key accepted")
	}
	if _, _, err := s.Idempotent(ctx, "r", "k", "h"); !errors.Is(err, ErrNotFound) {
		t.Fatal(err)
	}
	s.SaveIdempotent(ctx, "r", "k", "h", 202, []byte(`{"id":"x"}`))
	if st, b, err := s.Idempotent(ctx, "r", "k", "h"); err != nil || st != 202 || string(b) != `{"id":"x"}` {
		t.Fatalf("replay: %d %s %v", st, b, err)
	}
	if _, _, err := s.Idempotent(ctx, "r", "k", "other"); !errors.Is(err, ErrIdempotencyMismatch) {
		t.Fatal("different body not detected")
	}
}

func TestConcurrentWrites(t *testing.T) {
	ctx := context.Background()
	s, _ := openTemp(t)
	var wg sync.WaitGroup
	errs := make(chan error, 40)
	for i := 0; i < 40; i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			_, err := s.CreateMonomer(ctx, Monomer{Name: "c", SMILES: "C1=CCCC1", Tags: []string{"t"}})
			errs <- err
		}()
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		if err != nil {
			t.Fatal(err)
		}
	}
	_, total, _ := s.ListMonomers(ctx, MonomerFilter{Limit: 1})
	if total != 40 {
		t.Fatalf("%d monomers", total)
	}
}

// TestPathWithURICharacters: a database file name with '?' and '#' is used as written.
func TestPathWithURICharacters(t *testing.T) {
	path := filepath.Join(t.TempDir(), "odd?name#1.db")
	s, err := Open(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	s.Close()
	if _, err := os.Stat(path); err != nil {
		t.Fatalf("database not at %s: %v", path, err)
	}
}
