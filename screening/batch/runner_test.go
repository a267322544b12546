package batch

import (
	"context"
	"errors"
	"sync"
	"testing"
	"time"

	"ringsieve/screening"
)

// failingStore hands out one chunk and fails every write of its outcomes, recording when.
type failingStore struct {
	mu       sync.Mutex
	claimed  bool
	writes   []time.Time
	failed   string
	released bool
}

var errDiskFull = errors.New("disk full")

func (f *failingStore) ClaimChunk(ctx context.Context, owner string, lease time.Duration) (Chunk, error) {
	f.mu.Lock()
	defer f.mu.Unlock()
	if f.claimed || f.failed != "" {
		return Chunk{}, ErrNotFound
	}
	f.claimed = true
	return Chunk{JobID: "job_1", FirstSeq: 0, LastSeq: 1, Owner: owner, Conditions: EffectiveConditions(screening.DefaultConditions())}, nil
}

func (f *failingStore) ChunkItems(ctx context.Context, c Chunk) ([]Item, error) {
	return []Item{{Seq: 0, ItemID: "1", Source: ItemSource{SMILES: "C1=CC2CCC1C2"}}, {Seq: 1, ItemID: "2", Source: ItemSource{SMILES: "C1=CCCC1"}}}, nil
}

func (f *failingStore) RenewLease(ctx context.Context, c Chunk, lease time.Duration) (string, error) {
	return JobRunning, nil
}

func (f *failingStore) CompleteChunk(ctx context.Context, c Chunk, outs []Outcome) (string, error) {
	f.mu.Lock()
	defer f.mu.Unlock()
	f.writes = append(f.writes, time.Now())
	return "", errDiskFull
}

func (f *failingStore) ReleaseChunk(ctx context.Context, c Chunk) error {
	f.mu.Lock()
	f.released = true
	f.mu.Unlock()
	return nil
}

func (f *failingStore) FailJob(ctx context.Context, jobID, msg string) error {
	f.mu.Lock()
	f.failed = msg
	f.mu.Unlock()
	return nil
}

func (f *failingStore) MonomerSource(ctx context.Context, id string) (screening.Source, error) {
	return screening.Source{}, ErrNotFound
}

// TestRunnerBacksOffThenFailsTheJob: a chunk whose outcomes cannot be stored is retried with
// growing waits (no hot loop), and after the last attempt the job fails with a message.
func TestRunnerBacksOffThenFailsTheJob(t *testing.T) {
	st := &failingStore{}
	r := &Runner{Store: st, Workers: 1, Retry: RetryPolicy{Attempts: 5, First: 10 * time.Millisecond, Max: 40 * time.Millisecond}}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan struct{})
	go func() { r.Run(ctx); close(done) }()
	deadline := time.Now().Add(10 * time.Second)
	for {
		st.mu.Lock()
		failed := st.failed
		st.mu.Unlock()
		if failed != "" || time.Now().After(deadline) {
			break
		}
		time.Sleep(5 * time.Millisecond)
	}
	cancel()
	<-done
	if len(st.writes) != 5 {
		t.Fatalf("%d write attempts, want 5", len(st.writes))
	}
	if st.failed == "" {
		t.Fatal("the job was not failed after the last attempt")
	}
	// waits 10, 20, 40, 40 ms: each gap at least the policy's wait (never a hot loop)
	want := []time.Duration{10, 20, 40, 40}
	for i := 1; i < len(st.writes); i++ {
		if gap := st.writes[i].Sub(st.writes[i-1]); gap < want[i-1]*time.Millisecond {
			t.Errorf("attempt %d came %v after the previous one, want ≥ %v", i+1, gap, want[i-1]*time.Millisecond)
		}
	}
	t.Logf("job failed with %q", st.failed)
}
