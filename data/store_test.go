package data

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"ringsieve/data/pgtest"
	"ringsieve/screening"
	"ringsieve/screening/batch"
)

// The behaviour suite runs on both engines: a real SQLite file in a temporary directory, and a
// PostgreSQL database created for the test and dropped after it (pgtest).

type engine struct {
	name string
	dsn  func(t *testing.T) string
}

var engines = []engine{
	{"sqlite", func(t *testing.T) string { return filepath.Join(t.TempDir(), "test.db") }},
	{"postgres", func(t *testing.T) string { return pgtest.NewDatabase(t) }},
}

// open opens a fresh store on the engine; it returns the store and its dsn (to reopen it).
func (e engine) open(t *testing.T) (*Store, string) {
	t.Helper()
	dsn := e.dsn(t)
	s, err := Open(context.Background(), dsn)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { s.Close() })
	return s, dsn
}

func openTemp(t *testing.T) (*Store, string) { return engines[0].open(t) }

var behaviour = []struct {
	name string
	fn   func(t *testing.T, e engine)
}{
	{"MonomerLifecycle", behaviourMonomerLifecycle},
	{"ListMonomersFilterAndPage", behaviourListMonomersFilterAndPage},
	{"FailedWriteLeavesNothing", behaviourFailedWriteLeavesNothing},
	{"ChunksClaimedOnceAndRecordedOnce", behaviourChunksClaimedOnceAndRecordedOnce},
	{"CancelKeepsResults", behaviourCancelKeepsResults},
	{"RankedItems", behaviourRankedItems},
	{"RankedItemsWhileChunksFinish", behaviourRankedItemsWhileChunksFinish},
	{"JobStreamRollsBack", behaviourJobStreamRollsBack},
	{"UploadScreenedWhileLoading", behaviourUploadScreenedWhileLoading},
	{"FailedLoadLeavesNothing", behaviourFailedLoadLeavesNothing},
	{"AbandonedLoadPurged", behaviourAbandonedLoadPurged},
	{"IgnoredWriteErrorFailsTheLoad", behaviourIgnoredWriteErrorFailsTheLoad},
	{"APIKeysAndIdempotency", behaviourAPIKeysAndIdempotency},
	{"IdempotencyInTheWriteTransaction", behaviourIdempotencyInTheWriteTransaction},
	{"ConcurrentWrites", behaviourConcurrentWrites},
	{"DuplicateStructureReported", behaviourDuplicateStructureReported},
}

// TestStoreBehaviour runs every behaviour test on every engine.
func TestStoreBehaviour(t *testing.T) {
	for _, e := range engines {
		t.Run(e.name, func(t *testing.T) {
			for _, b := range behaviour {
				t.Run(b.name, func(t *testing.T) { b.fn(t, e) })
			}
		})
	}
}

func behaviourMonomerLifecycle(t *testing.T, e engine) {
	ctx := context.Background()
	s, path := e.open(t)
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
	s2.DB().QueryRow(s2.q(`SELECT count(*) FROM results`)).Scan(&n)
	if n != 0 {
		t.Fatalf("%d results left after delete", n)
	}
}

func behaviourListMonomersFilterAndPage(t *testing.T, e engine) {
	ctx := context.Background()
	s, _ := e.open(t)
	for i, name := range []string{"Alpha norbornene", "Beta oxanorbornene", "Gamma cyclooctene", "alpha prime"} {
		tags := []string{"all"}
		if i%2 == 0 {
			tags = append(tags, "even")
		}
		if _, err := s.CreateMonomer(ctx, Monomer{Name: name, SMILES: "C1=CCCC1", Tags: tags, AllowDuplicate: true}); err != nil {
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
func behaviourFailedWriteLeavesNothing(t *testing.T, e engine) {
	ctx := context.Background()
	s, _ := e.open(t)
	id := "mon_fixed"
	err := s.tx(ctx, func(tx *sql.Tx) error {
		if _, err := tx.ExecContext(ctx, `INSERT INTO monomers (id, name, created_at, updated_at) VALUES (?, 'x', 'now', 'now')`, id); err != nil {
			return err
		}
		return s.insertTags(ctx, tx, id, []string{"dup", "dup"})
	})
	if err == nil {
		t.Fatal("duplicate tag insert succeeded")
	}
	if _, err := s.GetMonomer(ctx, id); !errors.Is(err, ErrNotFound) {
		t.Fatalf("half-written monomer found: %v", err)
	}
}

// newJob stores a job of n items (sources as given, cycled) in chunks of size.
func newJob(t *testing.T, s *Store, size int, sources ...string) batch.Job {
	t.Helper()
	j, err := s.CreateJob(context.Background(), JobSpec{ChunkSize: size}, func(add func(JobInput) error) (JobMeta, error) {
		for i, smi := range sources {
			if err := add(JobInput{ItemID: fmt.Sprint("item-", i), Source: batch.ItemSource{SMILES: smi}}); err != nil {
				return JobMeta{}, err
			}
		}
		return JobMeta{Conditions: batch.EffectiveConditions(screening.DefaultConditions()), Format: "json"}, nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return j
}

func outcomes(items []batch.Item) []batch.Outcome {
	var outs []batch.Outcome
	for _, it := range items {
		outs = append(outs, batch.Outcome{Seq: it.Seq, Verdict: "polymerizes", Key: batch.ScoreKey(0.9, -10), Result: []byte(`{}`)})
	}
	return outs
}

// TestChunksClaimedOnceAndRecordedOnce: two workers never hold one chunk; a worker whose lease
// expired and was taken over cannot store its outcomes; a chunk redone does not count twice;
// the job finishes with its last chunk.
func behaviourChunksClaimedOnceAndRecordedOnce(t *testing.T, e engine) {
	ctx := context.Background()
	s, _ := e.open(t)
	j := newJob(t, s, 2, "C1=CCCC1", "C", "C1=CC2CCC1C2")
	a, err := s.ClaimChunk(ctx, "A", time.Minute)
	if err != nil || a.No != 0 || a.FirstSeq != 0 || a.LastSeq != 1 {
		t.Fatalf("first claim %+v %v", a, err)
	}
	b, err := s.ClaimChunk(ctx, "B", time.Minute)
	if err != nil || b.No != 1 || b.FirstSeq != 2 || b.LastSeq != 2 {
		t.Fatalf("second claim %+v %v", b, err)
	}
	if _, err := s.ClaimChunk(ctx, "C", time.Minute); !errors.Is(err, ErrNotFound) {
		t.Fatalf("third claim: %v, want no work", err)
	}
	got, _ := s.GetJob(ctx, j.ID)
	if got.Status != batch.JobRunning || got.StartedAt == nil {
		t.Fatalf("after claims: %+v", got)
	}
	// A's lease runs out; C takes the chunk over; A can no longer store or renew it
	if _, err := s.DB().Exec(s.q(`UPDATE job_chunks SET lease_until_ms = 1 WHERE job_id = ? AND chunk_no = 0`), j.ID); err != nil {
		t.Fatal(err)
	}
	c, err := s.ClaimChunk(ctx, "C", time.Minute)
	if err != nil || c.No != 0 {
		t.Fatalf("takeover %+v %v", c, err)
	}
	items, err := s.ChunkItems(ctx, a)
	if err != nil || len(items) != 2 || items[1].Source.SMILES != "C" {
		t.Fatalf("items %+v %v", items, err)
	}
	if _, err := s.CompleteChunk(ctx, a, outcomes(items)); !errors.Is(err, batch.ErrLeaseLost) {
		t.Fatalf("stale worker stored its outcomes: %v", err)
	}
	if _, err := s.RenewLease(ctx, a, time.Minute); !errors.Is(err, batch.ErrLeaseLost) {
		t.Fatalf("stale worker renewed: %v", err)
	}
	if st, err := s.CompleteChunk(ctx, c, outcomes(items)); err != nil || st != batch.JobRunning {
		t.Fatalf("complete: %s %v", st, err)
	}
	if _, err := s.CompleteChunk(ctx, c, outcomes(items)); !errors.Is(err, batch.ErrLeaseLost) {
		t.Fatalf("a done chunk stored again: %v", err)
	}
	bi, _ := s.ChunkItems(ctx, b)
	if st, err := s.CompleteChunk(ctx, b, outcomes(bi)); err != nil || st != batch.JobDone {
		t.Fatalf("last chunk: %s %v", st, err)
	}
	got, _ = s.GetJob(ctx, j.ID)
	if got.Done != 3 || got.Status != batch.JobDone || got.FinishedAt == nil {
		t.Fatalf("finished job %+v", got)
	}
	if n := storedOutcomes(t, s, j.ID); n != 3 {
		t.Fatalf("%d results stored, want 3", n)
	}
	if _, err := s.CancelJob(ctx, j.ID); !errors.Is(err, ErrJobFinished) {
		t.Fatalf("cancel of a finished job: %v", err)
	}
}

// TestCancelKeepsResults: a canceled job is not claimed again, keeps what was stored, and stays
// canceled when a chunk in flight completes.
func behaviourCancelKeepsResults(t *testing.T, e engine) {
	ctx := context.Background()
	s, _ := e.open(t)
	j := newJob(t, s, 1, "C1=CCCC1", "C1=CCCC1")
	c, err := s.ClaimChunk(ctx, "A", time.Minute)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := s.CancelJob(ctx, j.ID); err != nil {
		t.Fatal(err)
	}
	items, _ := s.ChunkItems(ctx, c)
	if st, err := s.CompleteChunk(ctx, c, outcomes(items)); err != nil || st != batch.JobCanceled {
		t.Fatalf("complete after cancel: %s %v", st, err)
	}
	if _, err := s.ClaimChunk(ctx, "B", time.Minute); !errors.Is(err, ErrNotFound) {
		t.Fatalf("a canceled job's chunk was claimed: %v", err)
	}
	got, _ := s.GetJob(ctx, j.ID)
	if got.Status != batch.JobCanceled || got.Done != 1 {
		t.Fatalf("canceled job %+v", got)
	}
}

// TestRankedItems orders by the rank key, then submission; failed and pending items last in
// submission order.
func behaviourRankedItems(t *testing.T, e engine) {
	ctx := context.Background()
	s, _ := e.open(t)
	j := newJob(t, s, 10, "a", "b", "c", "d")
	c, _ := s.ClaimChunk(ctx, "A", time.Minute)
	outs := []batch.Outcome{
		{Seq: 0, Key: batch.ScoreKey(0.5, -1), Result: []byte(`"0"`)},
		{Seq: 1, Key: batch.FailedKey(), Failed: true, Result: []byte(`"1"`)},
		{Seq: 3, Key: batch.ScoreKey(0.9, -1), Result: []byte(`"3"`)},
	}
	if _, err := s.CompleteChunk(ctx, c, outs); err != nil {
		t.Fatal(err)
	}
	var order []string
	err := s.RankedItems(ctx, j.ID, 0, 0, func(rank int, it RankedItem) error {
		order = append(order, fmt.Sprintf("%d:%d:%s", rank, it.Seq, it.State))
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	want := "[1:3:done 2:0:done 3:1:failed 4:2:pending]"
	if fmt.Sprint(order) != want {
		t.Fatalf("order %v, want %s", order, want)
	}
}

// TestRankedItemsWhileChunksFinish: a chunk finished while a running job is being read does not
// put a done row among the pending ones; the next read ranks it.
func behaviourRankedItemsWhileChunksFinish(t *testing.T, e engine) {
	ctx := context.Background()
	s, _ := e.open(t)
	j := newJob(t, s, 1, "a", "b", "c")
	complete := func(score float64) {
		t.Helper()
		c, err := s.ClaimChunk(ctx, "A", time.Minute)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := s.CompleteChunk(ctx, c, []batch.Outcome{{Seq: c.FirstSeq, Key: batch.ScoreKey(score, -1), Result: []byte(`{}`)}}); err != nil {
			t.Fatal(err)
		}
	}
	complete(0.5)
	read := func(during func()) string {
		var order []string
		err := s.RankedItems(ctx, j.ID, 0, 0, func(rank int, it RankedItem) error {
			order = append(order, fmt.Sprintf("%d:%d:%s", rank, it.Seq, it.State))
			if rank == 1 && during != nil {
				during()
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		return fmt.Sprint(order)
	}
	if got, want := read(func() { complete(0.9) }), "[1:0:done 2:1:pending 3:2:pending]"; got != want {
		t.Errorf("read while the second chunk finished: %s, want %s", got, want)
	}
	if got, want := read(nil), "[1:1:done 2:0:done 3:2:pending]"; got != want {
		t.Errorf("next read: %s, want %s", got, want)
	}
}

// TestJobStreamRollsBack: an error from the item producer stores nothing.
func behaviourJobStreamRollsBack(t *testing.T, e engine) {
	ctx := context.Background()
	s, _ := e.open(t)
	_, err := s.CreateJob(ctx, JobSpec{}, func(add func(JobInput) error) (JobMeta, error) {
		add(JobInput{ItemID: "a"})
		return JobMeta{}, errors.New("bad row")
	})
	if err == nil {
		t.Fatal("no error")
	}
	var n int
	s.DB().QueryRow(s.q(`SELECT (SELECT count(*) FROM jobs) + (SELECT count(*) FROM job_chunks)
		+ (SELECT count(*) FROM job_chunk_items) + (SELECT count(*) FROM job_chunk_results)`)).Scan(&n)
	if n != 0 {
		t.Fatalf("%d rows left behind", n)
	}
}

// storedOutcomes counts the outcomes stored in a job's chunks.
func storedOutcomes(t *testing.T, s *Store, jobID string) int {
	t.Helper()
	oc, err := s.CountOutcomes(context.Background(), jobID)
	if err != nil {
		t.Fatal(err)
	}
	return oc.Outcomes
}

// streamSpec is a JobSpec with the conditions known before the items (a file upload).
func streamSpec(size int, onChunk func()) JobSpec {
	c := batch.EffectiveConditions(screening.DefaultConditions())
	return JobSpec{ChunkSize: size, Conditions: &c, OnChunk: onChunk}
}

// jobRowCount counts the rows of job jobID in every job table.
func jobRowCount(t *testing.T, s *Store, jobID string) int {
	t.Helper()
	var n int
	if err := s.DB().QueryRow(s.q(`SELECT (SELECT count(*) FROM jobs WHERE id = ?) + (SELECT count(*) FROM job_chunks WHERE job_id = ?)
		+ (SELECT count(*) FROM job_chunk_items WHERE job_id = ?) + (SELECT count(*) FROM job_chunk_results WHERE job_id = ?)
		+ (SELECT count(*) FROM job_loading WHERE job_id = ?)`), jobID, jobID, jobID, jobID, jobID).Scan(&n); err != nil {
		t.Fatal(err)
	}
	return n
}

// TestUploadScreenedWhileLoading: with the conditions known, each full chunk can be claimed
// and completed while later items are still being read; the job stays hidden and unfinished
// until its load ends, and the load finishes it when every chunk is already done.
func behaviourUploadScreenedWhileLoading(t *testing.T, e engine) {
	ctx := context.Background()
	s, _ := e.open(t)
	announced := 0
	var during []int
	j, err := s.CreateJob(ctx, streamSpec(2, func() { announced++ }), func(add func(JobInput) error) (JobMeta, error) {
		for i, smi := range []string{"C1=CCCC1", "C1=CC2CCC1C2", "C1=CCCCCCC1", "C1=CC2OC1C=C2", "C1=CCC=CCC1"} {
			if err := add(JobInput{ItemID: fmt.Sprint("item-", i), Line: i + 1, Source: batch.ItemSource{SMILES: smi}}); err != nil {
				return JobMeta{}, err
			}
			if i != 1 && i != 3 {
				continue
			}
			// a chunk has just filled: a worker takes it and stores its outcomes now
			c, err := s.ClaimChunk(ctx, "early", time.Minute)
			if err != nil {
				return JobMeta{}, fmt.Errorf("chunk not claimable while loading: %w", err)
			}
			items, err := s.ChunkItems(ctx, c)
			if err != nil {
				return JobMeta{}, err
			}
			st, err := s.CompleteChunk(ctx, c, outcomes(items))
			if err != nil {
				return JobMeta{}, err
			}
			if st == batch.JobDone {
				return JobMeta{}, fmt.Errorf("job finished with items still to come")
			}
			during = append(during, c.No)
			if _, err := s.GetJob(ctx, c.JobID); !errors.Is(err, ErrNotFound) {
				return JobMeta{}, fmt.Errorf("a loading job is visible: %v", err)
			}
		}
		return JobMeta{ExtraColumns: []string{"supplier"}, Format: "smiles"}, nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if fmt.Sprint(during) != "[0 1]" || announced != 2 {
		t.Fatalf("chunks worked while loading %v, announced %d; want [0 1] and 2", during, announced)
	}
	got, err := s.GetJob(ctx, j.ID)
	if err != nil || got.Total != 5 || got.Status != batch.JobRunning || got.SourceFormat != "smiles" || fmt.Sprint(got.ExtraColumns) != "[supplier]" {
		t.Fatalf("job after its load: %+v %v", got, err)
	}
	// the last (short) chunk ends the job
	c, err := s.ClaimChunk(ctx, "late", time.Minute)
	if err != nil || c.No != 2 || c.FirstSeq != 4 || c.LastSeq != 4 {
		t.Fatalf("last chunk %+v %v", c, err)
	}
	items, _ := s.ChunkItems(ctx, c)
	if st, err := s.CompleteChunk(ctx, c, outcomes(items)); err != nil || st != batch.JobDone {
		t.Fatalf("after the last chunk: %s %v", st, err)
	}
	// every chunk done before the load ends: the load itself finishes the job
	j2, err := s.CreateJob(ctx, streamSpec(1, nil), func(add func(JobInput) error) (JobMeta, error) {
		if err := add(JobInput{ItemID: "only", Source: batch.ItemSource{SMILES: "C1=CCCC1"}}); err != nil {
			return JobMeta{}, err
		}
		c, err := s.ClaimChunk(ctx, "early", time.Minute)
		if err != nil {
			return JobMeta{}, err
		}
		items, _ := s.ChunkItems(ctx, c)
		_, err = s.CompleteChunk(ctx, c, outcomes(items))
		return JobMeta{Format: "smiles"}, err
	})
	if err != nil || j2.Status != batch.JobDone {
		t.Fatalf("a job screened whole during its load: %+v %v", j2, err)
	}
	if got, err := s.GetJob(ctx, j2.ID); err != nil || got.Status != batch.JobDone || got.Done != 1 || got.FinishedAt == nil {
		t.Fatalf("stored %+v %v", got, err)
	}
}

// TestFailedLoadLeavesNothing: a load that fails after chunks were committed (and screened)
// removes the job whole.
func behaviourFailedLoadLeavesNothing(t *testing.T, e engine) {
	ctx := context.Background()
	s, _ := e.open(t)
	var jobID string
	_, err := s.CreateJob(ctx, streamSpec(2, nil), func(add func(JobInput) error) (JobMeta, error) {
		for i := 0; i < 4; i++ {
			if err := add(JobInput{ItemID: fmt.Sprint(i), Source: batch.ItemSource{SMILES: "C1=CCCC1"}}); err != nil {
				return JobMeta{}, err
			}
		}
		c, err := s.ClaimChunk(ctx, "early", time.Minute)
		if err != nil {
			return JobMeta{}, err
		}
		jobID = c.JobID
		items, _ := s.ChunkItems(ctx, c)
		if _, err := s.CompleteChunk(ctx, c, outcomes(items)); err != nil {
			return JobMeta{}, err
		}
		// job, loading mark, two chunks with their packed items (two each), one with its
		// packed outcomes (two)
		if n, o := jobRowCount(t, s, jobID), storedOutcomes(t, s, jobID); n != 1+1+2+2+1 || o != 2 {
			return JobMeta{}, fmt.Errorf("%d rows and %d outcomes committed while loading, want 7 and 2", n, o)
		}
		// one more item (in a transaction not committed yet), then the file turns out bad
		if err := add(JobInput{ItemID: "4", Source: batch.ItemSource{SMILES: "C1=CCCC1"}}); err != nil {
			return JobMeta{}, err
		}
		return JobMeta{}, errors.New("line 6: the file ends inside a record")
	})
	if err == nil || !strings.Contains(err.Error(), "line 6") {
		t.Fatalf("error %v", err)
	}
	if n := jobRowCount(t, s, jobID); n != 0 {
		t.Fatalf("%d rows of the failed load left behind", n)
	}
	if c, err := s.ClaimChunk(ctx, "late", time.Minute); !errors.Is(err, ErrNotFound) {
		t.Fatalf("a chunk of the failed load is claimable: %+v %v", c, err)
	}
}

// TestIgnoredWriteErrorFailsTheLoad: an item that cannot be stored fails the job even when the
// producer goes on after the error, in one transaction and streamed: a job never completes
// with items missing.
func behaviourIgnoredWriteErrorFailsTheLoad(t *testing.T, e engine) {
	ctx := context.Background()
	s, _ := e.open(t)
	nan := math.NaN()
	for _, spec := range []JobSpec{{}, streamSpec(2, nil)} {
		var ignored error
		_, err := s.CreateJob(ctx, spec, func(add func(JobInput) error) (JobMeta, error) {
			for i := 0; i < 5; i++ {
				src := batch.ItemSource{SMILES: "C1=CCCC1"}
				if i == 2 { // a value JSON cannot hold: the item cannot be encoded
					src = batch.ItemSource{Descriptors: &screening.Descriptors{DHkJmol: &nan}}
				}
				if err := add(JobInput{ItemID: fmt.Sprint(i), Source: src}); err != nil && ignored == nil {
					ignored = err
				}
			}
			return JobMeta{Conditions: batch.EffectiveConditions(screening.DefaultConditions()), Format: "json"}, nil
		})
		if ignored == nil || err == nil {
			t.Fatalf("streamed %v: add error %v, job error %v", spec.Conditions != nil, ignored, err)
		}
		var n int
		s.DB().QueryRow(s.q(`SELECT (SELECT count(*) FROM jobs) + (SELECT count(*) FROM job_chunks)
		+ (SELECT count(*) FROM job_chunk_items) + (SELECT count(*) FROM job_chunk_results)`)).Scan(&n)
		if n != 0 {
			t.Fatalf("streamed %v: %d rows left behind", spec.Conditions != nil, n)
		}
	}
}

// TestAbandonedLoadPurged: a load whose process died (its rows stay, marked loading) is
// deleted once it is older than AbandonedLoadAge, and not before.
func behaviourAbandonedLoadPurged(t *testing.T, e engine) {
	ctx := context.Background()
	s, _ := e.open(t)
	keep := newJob(t, s, 2, "C1=CCCC1")
	for _, age := range []time.Duration{time.Minute, 2 * AbandonedLoadAge} {
		id := fmt.Sprint("job_abandoned_", int(age.Minutes()))
		started := time.Now().Add(-age).UTC().Format(time.RFC3339Nano)
		for _, q := range []string{
			`INSERT INTO jobs (id, status, conditions, total, source_format, created_at) VALUES (?, 'running', '{}', 0, '', ?)`,
			`INSERT INTO job_loading (job_id, started_at) VALUES (?, ?)`,
		} {
			if _, err := s.DB().Exec(s.q(q), id, started); err != nil {
				t.Fatal(err)
			}
		}
		if _, err := s.DB().Exec(s.q(`INSERT INTO job_chunks (job_id, chunk_no, first_seq, last_seq) VALUES (?, 0, 0, 0)`), id); err != nil {
			t.Fatal(err)
		}
	}
	n, err := s.PurgeAbandonedLoads(ctx)
	if err != nil || n != 1 {
		t.Fatalf("purged %d %v, want 1", n, err)
	}
	if jobRowCount(t, s, "job_abandoned_"+fmt.Sprint(int((2*AbandonedLoadAge).Minutes()))) != 0 || jobRowCount(t, s, "job_abandoned_1") != 3 {
		t.Fatal("purged the wrong load")
	}
	if _, err := s.GetJob(ctx, keep.ID); err != nil {
		t.Fatalf("a finished load was purged: %v", err)
	}
}

func behaviourAPIKeysAndIdempotency(t *testing.T, e engine) {
	ctx := context.Background()
	s, _ := e.open(t)
	k, secret, err := s.CreateAPIKey(ctx, "notebook")
	if err != nil {
		t.Fatal(err)
	}
	var stored string
	s.DB().QueryRow(s.q(`SELECT hash FROM api_keys WHERE id = ?`), k.ID).Scan(&stored)
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
	id := Idempotency{Scope: "key_a", Route: "POST /r", Key: "k", BodyHash: "h"}
	if _, err := s.Idempotent(ctx, id); !errors.Is(err, ErrNotFound) {
		t.Fatal(err)
	}
	if err := s.SaveIdempotent(ctx, id, 202, []byte(`{"id":"x"}`)); err != nil {
		t.Fatal(err)
	}
	if r, err := s.Idempotent(ctx, id); err != nil || r.Status != 202 || string(r.Response) != `{"id":"x"}` {
		t.Fatalf("replay: %+v %v", r, err)
	}
	other := id
	other.BodyHash = "other"
	if _, err := s.Idempotent(ctx, other); !errors.Is(err, ErrIdempotencyMismatch) {
		t.Fatal("different body not detected")
	}
	scoped := id
	scoped.Scope = "key_b"
	if _, err := s.Idempotent(ctx, scoped); !errors.Is(err, ErrNotFound) {
		t.Fatal("another API key's record was found")
	}
}

// TestIdempotencyInTheWriteTransaction: the record is written with the monomer; a second write
// under the same key is refused and rolled back; the resource survives without a response.
func behaviourIdempotencyInTheWriteTransaction(t *testing.T, e engine) {
	s, _ := e.open(t)
	id := Idempotency{Route: "POST /v1/monomers", Key: "k1", BodyHash: "h"}
	ctx := WithIdempotency(context.Background(), id)
	m, err := s.CreateMonomer(ctx, Monomer{Name: "MEM-01", SMILES: "C1=CC2CCC1C2"})
	if err != nil {
		t.Fatal(err)
	}
	r, err := s.Idempotent(context.Background(), id)
	if err != nil || r.Status != 0 || r.Resource != m.ID {
		t.Fatalf("record after the write (no response yet): %+v %v", r, err)
	}
	if _, err := s.CreateMonomer(ctx, Monomer{Name: "MEM-01 again", SMILES: "C1=CC2CCC1C2", AllowDuplicate: true}); !errors.Is(err, ErrIdempotencyInFlight) {
		t.Fatalf("second write under one key: %v", err)
	}
	_, total, _ := s.ListMonomers(context.Background(), MonomerFilter{Limit: 10})
	if total != 1 {
		t.Fatalf("%d monomers after a refused duplicate", total)
	}
}

func behaviourConcurrentWrites(t *testing.T, e engine) {
	ctx := context.Background()
	s, _ := e.open(t)
	var wg sync.WaitGroup
	errs := make(chan error, 40)
	for i := 0; i < 40; i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			_, err := s.CreateMonomer(ctx, Monomer{Name: "c", SMILES: "C1=CCCC1", Tags: []string{"t"}, AllowDuplicate: true})
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

// TestDuplicateStructureReported: a second monomer with the same structure written another way
// is refused with the first one's id (canonical match), unless allowed; a stereoisomer is not a
// duplicate; results carry the monomer's version and SMILES.
func behaviourDuplicateStructureReported(t *testing.T, e engine) {
	s, _ := e.open(t)
	ctx := context.Background()
	a, err := s.CreateMonomer(ctx, Monomer{Name: "exo ester", SMILES: "O=C(OC)[C@@H]1C[C@@H]2C=C[C@H]1C2"})
	if err != nil {
		t.Fatal(err)
	}
	_, err = s.CreateMonomer(ctx, Monomer{Name: "same, written otherwise", SMILES: "COC(=O)[C@@H]1C[C@@H]2C=C[C@H]1C2"})
	var de *DuplicateError
	if !errors.As(err, &de) || de.ExistingID != a.ID {
		t.Fatalf("duplicate not reported: %v", err)
	}
	if _, err := s.CreateMonomer(ctx, Monomer{Name: "endo ester", SMILES: "O=C(OC)[C@H]1C[C@@H]2C=C[C@H]1C2"}); err != nil {
		t.Errorf("the endo isomer is not a duplicate of the exo one: %v", err)
	}
	// an amine and its ammonium salt are two structures (charges count in the key)
	if _, err := s.CreateMonomer(ctx, Monomer{Name: "amine", SMILES: "NCC1CC2C=CC1C2"}); err != nil {
		t.Fatal(err)
	}
	if _, err := s.CreateMonomer(ctx, Monomer{Name: "ammonium salt", SMILES: "[NH3+]CC1CC2C=CC1C2.[Cl-]"}); err != nil {
		t.Errorf("the ammonium salt is not a duplicate of the amine: %v", err)
	}
	if _, err := s.CreateMonomer(ctx, Monomer{Name: "kept on purpose", SMILES: "COC(=O)[C@@H]1C[C@@H]2C=C[C@H]1C2", AllowDuplicate: true}); err != nil {
		t.Errorf("allow_duplicate: %v", err)
	}
	r, err := s.SaveResult(ctx, SavedResult{MonomerID: a.ID, Conditions: json.RawMessage(`{}`), Verdict: "polymerizes", Result: json.RawMessage(`{}`), EngineVersion: "x"})
	if err != nil || r.MonomerVersion != 1 || r.MonomerSMILES != a.SMILES {
		t.Errorf("saved result: %+v %v", r, err)
	}
}

// TestSharedRateLimit: on PostgreSQL the per-key bucket is one for every process on the
// database: two stores (two replicas) draw from the same tokens; a refused request takes none.
func TestSharedRateLimit(t *testing.T) {
	ctx := context.Background()
	a, dsn := engines[1].open(t)
	b, err := Open(ctx, dsn)
	if err != nil {
		t.Fatal(err)
	}
	defer b.Close()
	if !a.SharedRateLimits() || engines[0].name != "sqlite" {
		t.Fatal("PostgreSQL should share rate limits")
	}
	var got []bool
	for i, s := range []*Store{a, b, a, b, a} {
		ok, err := s.TakeToken(ctx, "key_1", 0.001, 3) // a bucket of 3, practically no refill
		if err != nil {
			t.Fatalf("request %d: %v", i, err)
		}
		got = append(got, ok)
	}
	if fmt.Sprint(got) != "[true true true false false]" {
		t.Errorf("allowed %v, want the first three only", got)
	}
	if ok, _ := a.TakeToken(ctx, "key_2", 0.001, 3); !ok {
		t.Error("another key has its own bucket")
	}
	// refill: a fast bucket allows again after a pause
	for i := 0; i < 3; i++ {
		a.TakeToken(ctx, "key_3", 50, 2)
	}
	time.Sleep(60 * time.Millisecond)
	if ok, _ := b.TakeToken(ctx, "key_3", 50, 2); !ok {
		t.Error("the bucket did not refill")
	}
}

// TestRestartRemovesUnfinishedLoads: an SQLite store serves one process, so a job still loading
// when it opens lost its upload with the process that crashed: it goes at once.
func TestRestartRemovesUnfinishedLoads(t *testing.T) {
	ctx := context.Background()
	s, path := openTemp(t)
	keep := newJob(t, s, 1, "C1=CCCC1")
	var jobID string
	crash := errors.New("crash")
	_, err := s.CreateJob(ctx, streamSpec(1, nil), func(add func(JobInput) error) (JobMeta, error) {
		if err := add(JobInput{ItemID: "a", Source: batch.ItemSource{SMILES: "C1=CCCC1"}}); err != nil {
			return JobMeta{}, err
		}
		s.DB().QueryRow(`SELECT job_id FROM job_loading`).Scan(&jobID)
		// the process dies here: the committed chunk stays behind, marked loading
		s.Close()
		return JobMeta{}, crash
	})
	if !errors.Is(err, crash) || jobID == "" {
		t.Fatalf("load: %v (job %q)", err, jobID)
	}
	s2, err := Open(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	defer s2.Close()
	if n := jobRowCount(t, s2, jobID); n != 0 {
		t.Fatalf("%d rows of the unfinished load survive the restart", n)
	}
	if _, err := s2.GetJob(ctx, keep.ID); err != nil {
		t.Fatalf("a complete job was removed: %v", err)
	}
}

// TestRestartFreesClaimsOfTheCrashedProcess: an SQLite store serves one process, so chunks
// still claimed when it opens belong to a process that crashed: they are claimable at once,
// not a lease later.
func TestRestartFreesClaimsOfTheCrashedProcess(t *testing.T) {
	ctx := context.Background()
	s, path := openTemp(t)
	newJob(t, s, 1, "C1=CCCC1", "C1=CC2CCC1C2")
	if _, err := s.ClaimChunk(ctx, "crashed", time.Hour); err != nil {
		t.Fatal(err)
	}
	s.Close() // the process ends without giving the chunk back
	s2, err := Open(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	defer s2.Close()
	a, err := s2.ClaimChunk(ctx, "restarted", time.Hour)
	if err != nil {
		t.Fatalf("first claim after the restart: %v", err)
	}
	b, err := s2.ClaimChunk(ctx, "restarted", time.Hour)
	if err != nil || a.No == b.No {
		t.Fatalf("both chunks should be claimable after the restart: %+v %+v %v", a, b, err)
	}
}

// TestFirstChunkIsShort: an upload's first chunk holds at most firstChunkMax items, so workers
// start while the rest is read; the later chunks have the job's chunk size.
func TestFirstChunkIsShort(t *testing.T) {
	s, _ := openTemp(t)
	ctx := context.Background()
	n := firstChunkMax + DefaultChunkSize + 10
	cond := screening.DefaultConditions()
	cond.ThermoMethod = "table" // the fast tier's chunk size
	out := batch.EffectiveConditions(cond)
	_, err := s.CreateJob(ctx, JobSpec{Conditions: &out}, func(add func(JobInput) error) (JobMeta, error) {
		for i := 0; i < n; i++ {
			if err := add(JobInput{ItemID: fmt.Sprint("item-", i), Line: i + 1, Source: batch.ItemSource{SMILES: "C1=CCCC1"}}); err != nil {
				return JobMeta{}, err
			}
		}
		return JobMeta{Format: "smiles"}, nil
	})
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for {
		c, err := s.ClaimChunk(ctx, "w", time.Minute)
		if errors.Is(err, ErrNotFound) {
			break
		}
		if err != nil {
			t.Fatal(err)
		}
		got = append(got, fmt.Sprintf("%d:%d-%d", c.No, c.FirstSeq, c.LastSeq))
	}
	want := fmt.Sprintf("[0:0-%d 1:%d-%d 2:%d-%d]", firstChunkMax-1, firstChunkMax, firstChunkMax+DefaultChunkSize-1, firstChunkMax+DefaultChunkSize, n-1)
	if fmt.Sprint(got) != want {
		t.Fatalf("chunks %v, want %s", got, want)
	}
}
