package data

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"ringsieve/screening"
	"ringsieve/screening/batch"
	"ringsieve/screening/units"
)

// BenchmarkRunnerSQLite works one job of the 10,000-structure corpus (fast tier) on a SQLite
// store in a temporary file: what the store adds to the runner, without HTTP. Compare
// BenchmarkRunnerMemory in screening/batch (the same job on a store in memory).
func BenchmarkRunnerSQLite(b *testing.B) {
	corpus := benchCorpus(b)
	cond := screening.DefaultConditions()
	cond.ThermoMethod = units.ThermoTable
	for _, e := range corpus { // warm caches, as a running service has them
		screening.ScreenSMILES(e.SMILES, cond)
	}
	ctx := context.Background()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		b.StopTimer()
		st := openBenchStore(b)
		job, err := st.CreateJob(ctx, JobSpec{}, func(add func(JobInput) error) (JobMeta, error) {
			for _, e := range corpus {
				if err := add(JobInput{ItemID: e.ID, Source: batch.ItemSource{SMILES: e.SMILES}}); err != nil {
					return JobMeta{}, err
				}
			}
			return JobMeta{Conditions: batch.EffectiveConditions(cond), Format: "smiles"}, nil
		})
		if err != nil {
			b.Fatal(err)
		}
		b.StartTimer()
		runCtx, cancel := context.WithCancel(ctx)
		r := &batch.Runner{Store: st}
		done := make(chan struct{})
		go func() { r.Run(runCtx); close(done) }()
		r.Notify()
		for {
			j, err := st.GetJob(ctx, job.ID)
			if err != nil {
				b.Fatal(err)
			}
			if j.Status == batch.JobDone {
				break
			}
			time.Sleep(2 * time.Millisecond)
		}
		cancel()
		<-done
		b.StopTimer()
		st.Close()
		b.StartTimer()
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(corpus)), "ns/item")
}

// BenchmarkJobStore is the store's whole part of a fast-tier job on a SQLite file, without the
// screening: the upload stored a chunk at a time (as a file upload is), every chunk claimed,
// read back and completed with the outcomes the runner would store (screened once before the
// timer). ns/item is what SQLite adds per item; compare BenchmarkRunnerSQLite.
func BenchmarkJobStore(b *testing.B) {
	cond := screening.DefaultConditions()
	cond.ThermoMethod = units.ThermoTable
	type entry struct {
		smiles, id string
		out        batch.Outcome
	}
	var corpus []entry
	for _, c := range benchCorpus(b) {
		e := entry{smiles: c.SMILES, id: c.ID}
		if res, err := screening.ScreenSMILES(c.SMILES, cond); err == nil {
			e.out = batch.Outcome{Verdict: res.Verdict, Key: batch.KeyOf(&res), Result: batch.RecomputeMark(), Summary: batch.Summary(&res, "")}
		} else {
			e.out = batch.Outcome{Key: batch.FailedKey(), Result: []byte(`{"code":"invalid_smiles"}`), Failed: true}
		}
		corpus = append(corpus, e)
	}
	eff := batch.EffectiveConditions(cond)
	ctx := context.Background()
	var cpu time.Duration // process CPU time in the timed part (SQLite works in this process)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		b.StopTimer()
		st := openBenchStore(b)
		b.StartTimer()
		cpu0 := processCPU()
		if _, err := st.CreateJob(ctx, JobSpec{Conditions: &eff}, func(add func(JobInput) error) (JobMeta, error) {
			for _, e := range corpus {
				if err := add(JobInput{ItemID: e.id, Source: batch.ItemSource{SMILES: e.smiles}}); err != nil {
					return JobMeta{}, err
				}
			}
			return JobMeta{Format: "smiles"}, nil
		}); err != nil {
			b.Fatal(err)
		}
		for {
			c, err := st.ClaimChunk(ctx, "bench", time.Minute)
			if errors.Is(err, ErrNotFound) {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
			items, err := st.ChunkItems(ctx, c)
			if err != nil {
				b.Fatal(err)
			}
			outs := make([]batch.Outcome, len(items))
			for k, it := range items {
				outs[k] = corpus[it.Seq].out
				outs[k].Seq = it.Seq
			}
			if _, err := st.CompleteChunk(ctx, c, outs); err != nil {
				b.Fatal(err)
			}
		}
		cpu += processCPU() - cpu0
		b.StopTimer()
		st.Close()
		b.StartTimer()
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(corpus)), "ns/item")
	b.ReportMetric(float64(cpu.Nanoseconds())/float64(b.N*len(corpus)), "cpu-ns/item")
}

// processCPU is the CPU time (user and system) this process has used so far.
func processCPU() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// benchEntry is one structure of the benchmark corpus.
type benchEntry struct{ SMILES, ID string }

// benchCorpus reads the 10,000-structure corpus (SMILES and id per line).
func benchCorpus(b *testing.B) []benchEntry {
	raw, err := os.ReadFile("../testdata/corpus/candidates.smi")
	if err != nil {
		b.Fatal(err)
	}
	var corpus []benchEntry
	for _, l := range strings.Split(string(raw), "\n") {
		if f := strings.Fields(l); len(f) >= 2 && !strings.HasPrefix(f[0], "#") {
			corpus = append(corpus, benchEntry{f[0], f[1]})
		}
	}
	return corpus
}

// openBenchStore opens a SQLite store in a new temporary file.
func openBenchStore(b *testing.B) *Store {
	st, err := Open(context.Background(), filepath.Join(b.TempDir(), "bench.db"))
	if err != nil {
		b.Fatal(err)
	}
	return st
}
