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

// trackingStore hands out chunks of two items and records which were completed and which
// were given back; it ends the run (cancel) after the third stored chunk.
type trackingStore struct {
	memStore
	claimed, completed, released map[int]bool
	cancel                       context.CancelFunc
}

func (t *trackingStore) ClaimChunk(ctx context.Context, owner string, lease time.Duration) (Chunk, error) {
	c, err := t.memStore.ClaimChunk(ctx, owner, lease)
	if err == nil {
		t.mu.Lock()
		t.claimed[c.No] = true
		t.mu.Unlock()
	}
	return c, err
}

func (t *trackingStore) CompleteChunk(ctx context.Context, c Chunk, outs []Outcome) (string, error) {
	t.mu.Lock()
	defer t.mu.Unlock()
	t.completed[c.No] = true
	if len(t.completed) == 3 {
		t.cancel()
	}
	return JobRunning, nil
}

func (t *trackingStore) ReleaseChunk(ctx context.Context, c Chunk) error {
	t.mu.Lock()
	t.released[c.No] = true
	t.mu.Unlock()
	return nil
}

// TestRunnerLeavesNoChunkClaimed: the runner claims the next chunk while it screens the
// current one; when it stops, every chunk it claimed was stored or given back, so no chunk
// waits for its lease to expire (design choice).
func TestRunnerLeavesNoChunkClaimed(t *testing.T) {
	var items []Item
	for i := 0; i < 40; i++ {
		items = append(items, Item{Seq: i, ItemID: "x", Source: ItemSource{SMILES: "C1=CC2CCC1C2"}})
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	st := &trackingStore{memStore: memStore{items: items, size: 2, cond: EffectiveConditions(screening.DefaultConditions())},
		claimed: map[int]bool{}, completed: map[int]bool{}, released: map[int]bool{}, cancel: cancel}
	r := &Runner{Store: st, Workers: 2}
	done := make(chan struct{})
	go func() { r.Run(ctx); close(done) }()
	select {
	case <-done:
	case <-time.After(30 * time.Second):
		t.Fatal("the runner did not stop")
	}
	st.mu.Lock()
	defer st.mu.Unlock()
	if len(st.completed) < 3 {
		t.Fatalf("%d chunks stored before the stop, want at least 3", len(st.completed))
	}
	for no := range st.claimed {
		if !st.completed[no] && !st.released[no] {
			t.Errorf("chunk %d was claimed but neither stored nor given back", no)
		}
	}
	for no := range st.completed {
		if st.released[no] {
			t.Errorf("chunk %d was stored and given back", no)
		}
	}
}
