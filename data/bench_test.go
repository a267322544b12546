package data

import (
	"context"
	"os"
	"path/filepath"
	"strings"
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
	raw, err := os.ReadFile("../testdata/corpus/candidates.smi")
	if err != nil {
		b.Fatal(err)
	}
	type entry struct{ SMILES, ID string }
	var corpus []entry
	for _, l := range strings.Split(string(raw), "\n") {
		if f := strings.Fields(l); len(f) >= 2 && !strings.HasPrefix(f[0], "#") {
			corpus = append(corpus, entry{f[0], f[1]})
		}
	}
	cond := screening.DefaultConditions()
	cond.ThermoMethod = units.ThermoTable
	for _, e := range corpus { // warm caches, as a running service has them
		screening.ScreenSMILES(e.SMILES, cond)
	}
	ctx := context.Background()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		b.StopTimer()
		st, err := Open(ctx, filepath.Join(b.TempDir(), "bench.db"))
		if err != nil {
			b.Fatal(err)
		}
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
