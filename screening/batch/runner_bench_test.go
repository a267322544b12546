package batch

import (
	"context"
	"sync"
	"testing"
	"time"

	"ringsieve/screening"
	"ringsieve/screening/internal/reftest"
	"ringsieve/screening/units"
)

// memStore is a job store in memory: chunks of fixed size over one job's items, outcomes kept.
type memStore struct {
	mu      sync.Mutex
	items   []Item
	size    int
	next    int
	done    int
	stored  int
	cond    screening.ConditionsOut
	allDone chan struct{}
}

func (m *memStore) ClaimChunk(ctx context.Context, owner string, lease time.Duration) (Chunk, error) {
	m.mu.Lock()
	defer m.mu.Unlock()
	if m.next >= len(m.items) {
		return Chunk{}, ErrNotFound
	}
	c := Chunk{JobID: "job_bench", No: m.next / m.size, FirstSeq: m.next, LastSeq: min(m.next+m.size, len(m.items)) - 1, Owner: owner, Conditions: m.cond}
	m.next = c.LastSeq + 1
	return c, nil
}

func (m *memStore) ChunkItems(ctx context.Context, c Chunk) ([]Item, error) {
	return append([]Item(nil), m.items[c.FirstSeq:c.LastSeq+1]...), nil
}

func (m *memStore) RenewLease(ctx context.Context, c Chunk, lease time.Duration) (string, error) {
	return JobRunning, nil
}

func (m *memStore) CompleteChunk(ctx context.Context, c Chunk, outs []Outcome) (string, error) {
	m.mu.Lock()
	defer m.mu.Unlock()
	m.stored += len(outs)
	if m.stored == len(m.items) {
		close(m.allDone)
		return JobDone, nil
	}
	return JobRunning, nil
}

func (m *memStore) ReleaseChunk(ctx context.Context, c Chunk) error      { return nil }
func (m *memStore) FailJob(ctx context.Context, jobID, msg string) error { return nil }
func (m *memStore) MonomerSource(ctx context.Context, id string) (screening.Source, error) {
	return screening.Source{}, ErrNotFound
}

func corpusItems(b *testing.B) []Item {
	var out []Item
	for _, e := range reftest.Corpus(b) {
		out = append(out, Item{Seq: len(out), ItemID: e.ID, Source: ItemSource{SMILES: e.SMILES}})
	}
	return out
}

// BenchmarkRunnerMemory works one job of the 10,000-structure corpus (fast tier, chunks of
// FastChunkSize) on a store in memory: the runner's own overhead over screening, without a
// database. Compare BenchmarkMapScreen, the same items screened on the same workers directly.
func BenchmarkRunnerMemory(b *testing.B) {
	items := corpusItems(b)
	cond := screening.DefaultConditions()
	cond.ThermoMethod = units.ThermoTable
	for _, it := range items { // warm caches, as a running service has them
		screening.ScreenSMILES(it.Source.SMILES, cond)
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		st := &memStore{items: items, size: 4096, cond: EffectiveConditions(cond), allDone: make(chan struct{})}
		ctx, cancel := context.WithCancel(context.Background())
		r := &Runner{Store: st}
		done := make(chan struct{})
		go func() { r.Run(ctx); close(done) }()
		<-st.allDone
		cancel()
		<-done
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(items)), "ns/item")
}

// BenchmarkMapScreen screens the corpus items on one worker per core with no runner around it.
func BenchmarkMapScreen(b *testing.B) {
	items := corpusItems(b)
	cond := screening.DefaultConditions()
	cond.ThermoMethod = units.ThermoTable
	for _, it := range items {
		screening.ScreenSMILES(it.Source.SMILES, cond)
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		outs := make([]Outcome, len(items))
		r := &Runner{}
		r.init()
		Map(context.Background(), len(items), 0, func(k int) { outs[k] = r.screenOne(context.Background(), items[k], cond) })
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(items)), "ns/item")
}
